// Small pieces the proposal pages share: the state badge, the change window in the device's
// zone and the viewer's own, and the gate's blocking reasons.
import { useSyncExternalStore } from "react";
import type { ProposalState } from "#models/proposal-states";
import { formatInstant } from "#server/engine/format";
import { GATE_REASON_LABELS, type GateReasonKind } from "#server/proposals/gate-words";
import { PROPOSAL_STATE_LABELS } from "#server/proposals/state";
import { Badge } from "../ui/card";

const STATE_TONES: Record<ProposalState, "neutral" | "harbour" | "brass" | "danger" | "success"> = {
  draft: "neutral",
  in_review: "brass",
  changes_requested: "brass",
  approved: "success",
  rejected: "danger",
  applied: "harbour",
  withdrawn: "neutral",
};

export function StateBadge({ state }: { state: ProposalState }) {
  return <Badge tone={STATE_TONES[state]}>{PROPOSAL_STATE_LABELS[state]}</Badge>;
}

/**
 * The viewer's own time zone, known only in the browser: none on the server and while
 * hydrating (the server's snapshot), so both render the same first.
 */
function useViewerZone(): string | null {
  return useSyncExternalStore(
    // The zone does not change while the page is open: nothing to subscribe to.
    () => () => {},
    () => Intl.DateTimeFormat().resolvedOptions().timeZone,
    () => null,
  );
}

/** The change window in the device's zone (with UTC), and in the viewer's zone when that is another. */
export function WindowText({ start, end, timeZone }: { start: string; end: string; timeZone: string }) {
  const viewer = useViewerZone();
  return (
    <span>
      <time dateTime={start}>{formatInstant(start, timeZone)}</time> to <time dateTime={end}>{formatInstant(end, timeZone)}</time>
      {viewer && viewer !== timeZone && viewer !== "UTC" && viewer !== "Etc/UTC" ? (
        <span className="block text-xs text-ink-muted">
          Your time: {formatInstant(start, viewer)} to {formatInstant(end, viewer)}
        </span>
      ) : null}
    </span>
  );
}

export type ShownReason = { kind: string; words: string; details: readonly string[] };

function labelOf(kind: string): string {
  return kind in GATE_REASON_LABELS ? GATE_REASON_LABELS[kind as GateReasonKind] : kind;
}

/** The reasons not among `listed` (by their words): a page that lists the gate once shows a refusal's other reasons only. */
export function unlistedReasons<Reason extends { words: string }>(reasons: readonly Reason[], listed: readonly { words: string }[]): Reason[] {
  const shown = new Set(listed.map((reason) => reason.words));
  return reasons.filter((reason) => !shown.has(reason.words));
}

/** What blocks a change, each reason with its kind, its words and the details behind it. */
export function GateReasons({ reasons }: { reasons: readonly ShownReason[] }) {
  return (
    <ul className="space-y-3 text-sm">
      {reasons.map((reason, index) => (
        <li key={index} className="border-l-2 border-danger pl-3">
          <p className="text-xs font-semibold tracking-wide text-danger uppercase">{labelOf(reason.kind)}</p>
          <p className="mt-0.5">{reason.words}</p>
          {reason.details.length > 0 ? (
            <ul className="mt-1 font-mono text-xs break-words text-ink-muted">
              {reason.details.map((detail, detailIndex) => (
                <li key={detailIndex}>{detail}</li>
              ))}
            </ul>
          ) : null}
        </li>
      ))}
    </ul>
  );
}

/**
 * What the lockout guard says of the author's own address when nothing is lost: it names the
 * declared address, or says that none was declared (then only operator networks are guarded).
 */
export function workFromWords(workFrom: string): string {
  const declared = workFrom.trim();
  return declared ? `the address the author works from (${declared}) keeps its logins` : "no work-from address was declared, so only the operator networks are guarded";
}
