// The effect's address-space picture: for one interface × service and family, the exposure
// map's drill-down (components/analysis/address-map.tsx) over the kinds of source the server
// cut the space into (server/analysis/effect-space.ts) — each cell filled with the most exposed
// outcome its sources get after the change, ringed where a source's outcome moves, before → after
// on hover and focus and in the list below. A picker chooses among the pairs that change.
import { Link } from "react-router";
import type { EffectSpaceChoice, EffectSpaceView, SpaceKind } from "#server/analysis/effect-space";
import { SPACE_PARAMS } from "#server/analysis/effect-space-params";
import { formatCount, pluralWord } from "#server/engine/format";
import { outcomeRank } from "#server/engine/vocabulary";
import { AddressZoom, type ZoomKind } from "../analysis/address-map";
import { OUTCOME_LABELS } from "../outcome";
import { cx } from "../ui/cx";

const HEADING_ID = "effect-space-heading";

const label = (outcome: SpaceKind["after"]): string => (outcome ? OUTCOME_LABELS[outcome].toLowerCase() : "reaching no address of the interface");

/** A kind in words: its moves ("login with second factor → no answer"), or its outcome after when it is unchanged. */
export function kindWords(kind: SpaceKind): string {
  if (kind.moves.length === 0) return `${label(kind.after)}, unchanged`;
  return kind.moves.map((move) => `${label(move.before)} → ${label(move.after)}`).join(" and ");
}

function zoomKinds(kinds: readonly SpaceKind[]): ZoomKind[] {
  return kinds.map((kind) => ({ fill: kind.after ? outcomeRank(kind.after) : -1, marked: kind.moves.length > 0, name: kindWords(kind) }));
}

function choiceLink(search: URLSearchParams, choice: EffectSpaceChoice): string {
  const next = new URLSearchParams(search);
  next.set(SPACE_PARAMS.interface, choice.interface);
  next.set(SPACE_PARAMS.service, choice.service);
  next.set(SPACE_PARAMS.family, String(choice.family));
  next.delete(SPACE_PARAMS.block);
  return `?${next.toString()}#${HEADING_ID}`;
}

const sourcesText = (count: string): string => `${formatCount(count).text} ${pluralWord(BigInt(count), { one: "source", other: "sources" })}`;

export function EffectSpaceSection({ spaces, space, search }: { spaces: readonly EffectSpaceChoice[]; space: EffectSpaceView | null; search: URLSearchParams }) {
  if (!space) return null;
  const name = `${space.interface} ${space.service} IPv${space.family}`;
  return (
    <section aria-labelledby={HEADING_ID} className="space-y-3" data-testid="effect-space">
      <h3 id={HEADING_ID} className="text-xs font-semibold tracking-wide text-ink-muted uppercase">
        Where in the address space
      </h3>
      <p className="text-xs text-ink-muted">
        For one interface and service: the source addresses, each cell filled with the most exposed outcome its sources get after the change (at any of the interface's addresses, any time of the week). Ringed cells hold sources whose outcome the change moves; hover or focus one for before → after.
      </p>
      <nav aria-label="Interface and service shown in the address space">
        <ul className="flex flex-wrap gap-1.5">
          {spaces.map((choice) => {
            const current = choice.interface === space.interface && choice.service === space.service && choice.family === space.family;
            return (
              <li key={`${choice.interface}|${choice.service}|${choice.family}`}>
                <Link
                  to={choiceLink(search, choice)}
                  preventScrollReset
                  aria-current={current ? "true" : undefined}
                  className={cx("inline-flex min-h-8 items-center gap-1.5 rounded-control border px-2.5 text-sm", current ? "border-harbour bg-harbour-soft font-medium" : "border-line-strong text-harbour hover:bg-surface-sunken")}
                >
                  <span className="font-mono">
                    {choice.interface} {choice.service}
                  </span>
                  <span className="text-xs text-ink-muted">
                    IPv{choice.family} · {sourcesText(choice.changed)}
                  </span>
                </Link>
              </li>
            );
          })}
        </ul>
      </nav>
      <p className="text-sm" data-testid="effect-space-shown">
        <span className="font-mono">{name}</span>: {sourcesText(space.changed)} whose outcome changes somewhere.
      </p>
      <AddressZoom view={space.view} problem={space.problem} kinds={zoomKinds(space.kinds)} param={SPACE_PARAMS.block} hash={`#${HEADING_ID}`} markWords="Ringed: sources whose outcome the change moves" label={name} />
    </section>
  );
}
