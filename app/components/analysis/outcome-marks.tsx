import type { CSSProperties, ReactNode } from "react";
import { OUTCOME_LABELS } from "#app/components/outcome";
import { OUTCOMES, type Outcome } from "#server/engine/vocabulary";
import { cx } from "#app/components/ui/cx";

// How the pictures draw an outcome: a fill from the theme's outcome colours (light and dark
// pairs in app.css) and a letter, so no outcome is told by colour alone (WCAG 2.2 SC 1.4.1).
// Silent is a pale wash with no letter: it is most of any hardened map, and the exposed cells
// should stand out against it.

/** One letter per outcome, printed in each cell; silent has none. */
export const OUTCOME_MARKS: Record<Outcome, string> = {
  silent: "",
  refused: "R",
  answered: "A",
  "login-denied": "D",
  "login-mfa": "2",
  "login-password": "P",
};

export function outcomeAt(rank: number): Outcome | null {
  return rank >= 0 && rank < OUTCOMES.length ? OUTCOMES[rank] : null;
}

/** The fill of an outcome rank; an unknown rank is the sunken surface. */
export function outcomeFill(rank: number): string {
  const outcome = outcomeAt(rank);
  if (!outcome) return "var(--color-surface-sunken)";
  if (outcome === "silent") return "color-mix(in srgb, var(--color-outcome-silent) 22%, var(--color-surface))";
  return `var(--color-outcome-${outcome})`;
}

/** Text on a fill: ink on the pale silent wash, the surface colour on the strong fills. */
export function outcomeInk(rank: number): string {
  return rank > 0 && outcomeAt(rank) ? "var(--color-surface)" : "var(--color-ink)";
}

/** A cell's look: a solid fill for one outcome; stripes of the most exposed outcome for a mixed cell. */
export function cellStyle(rank: number, mixed: boolean): CSSProperties {
  if (!mixed) return { background: outcomeFill(rank), color: outcomeInk(rank) };
  return {
    background: `repeating-linear-gradient(135deg, ${outcomeFill(rank)} 0 3px, var(--color-surface) 3px 6px)`,
    color: "var(--color-ink)",
  };
}

/** The letter of a rank, and for a mixed cell the letter on a small plate so it reads over stripes. */
export function CellMark({ rank, mixed }: { rank: number; mixed: boolean }) {
  const outcome = outcomeAt(rank);
  const mark = outcome ? OUTCOME_MARKS[outcome] : "";
  if (!mark && !mixed) return null;
  return (
    <span aria-hidden="true" className={cx("pointer-events-none leading-none font-semibold select-none", mixed && "rounded-[2px] bg-surface px-[2px] py-px text-ink")}>
      {mark || "·"}
    </span>
  );
}

/** The legend: each outcome shown (most exposed first) as swatch, letter and words. */
export function OutcomeLegend({ outcomes = OUTCOMES, extra, className }: { outcomes?: readonly Outcome[]; extra?: ReactNode; className?: string }) {
  const ordered = [...OUTCOMES].reverse().filter((outcome) => outcomes.includes(outcome));
  return (
    <ul className={cx("flex flex-wrap gap-x-4 gap-y-1.5 text-xs", className)}>
      {ordered.map((outcome) => {
        const rank = OUTCOMES.indexOf(outcome);
        return (
          <li key={outcome} className="flex items-center gap-1.5">
            <span aria-hidden="true" className="inline-flex size-4 items-center justify-center rounded-[3px] border border-line-strong text-[10px]" style={cellStyle(rank, false)}>
              <CellMark rank={rank} mixed={false} />
            </span>
            {OUTCOME_LABELS[outcome]}
          </li>
        );
      })}
      {extra}
    </ul>
  );
}
