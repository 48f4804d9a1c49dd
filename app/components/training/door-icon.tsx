import { outcomeRank, type Outcome } from "#server/engine/vocabulary";

/**
 * What a deciding layer did to the door, drawn beside its words: shut (no answer at all) or
 * open (anything that answers tells an outsider the device is there). Decorative: the words
 * beside it ("decides: password login") carry the meaning.
 */
export function DoorIcon({ outcome, className = "size-3" }: { outcome: Outcome; className?: string }) {
  const open = outcomeRank(outcome) > 0;
  return (
    <svg viewBox="0 0 16 16" className={className} fill="none" stroke="currentColor" strokeWidth="1.5" aria-hidden="true">
      <path d="M2 15h12M4 15V2h8v13" />
      {open ? <path d="M4 2l5 2v12" fill="currentColor" fillOpacity="0.25" /> : <path d="M10 8.5h0.01" strokeWidth="2.5" strokeLinecap="round" />}
    </svg>
  );
}
