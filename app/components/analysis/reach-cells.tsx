import type { ReachGroupRow } from "#server/engine/index";
import { OUTCOME_LABELS, OUTCOMES } from "#server/engine/vocabulary";
import { LAYER_TITLES } from "#app/utils/trace-words";
import { OutcomeChip } from "../outcome";
import { Td } from "../ui/table";
import { SourcesCell } from "./sources-cell";

/**
 * A reach row's answer as table cells — for a block its sources, then the outcome, the deciding
 * layer with its words, the rule and the eligible accounts — as a device's reach and fleet reach show it.
 */
export function ReachAnswerCells({ row, block }: { row: Pick<ReachGroupRow, "sources" | "count" | "outcome" | "layer" | "detail" | "ruleId" | "eligibleAccounts">; block: boolean }) {
  return (
    <>
      {block ? (
        <Td>
          <SourcesCell sources={row.sources} count={row.count} />
        </Td>
      ) : null}
      <Td>
        <OutcomeChip outcome={row.outcome} />
        <span className="sr-only"> ({row.outcome})</span>
      </Td>
      <Td className="max-w-md max-sm:min-w-56!">
        <span className="font-medium">{LAYER_TITLES[row.layer]}</span>
        <span className="block text-xs text-ink-muted">{row.detail}</span>
      </Td>
      <Td className="font-mono text-xs whitespace-nowrap">{row.ruleId ?? <span className="font-sans text-ink-faint">no rule matched</span>}</Td>
      <Td className="text-xs">{row.eligibleAccounts.length ? row.eligibleAccounts.join(", ") : <span className="text-ink-faint">—</span>}</Td>
    </>
  );
}

/** The outcomes' order in words, under a reach table. */
export function OutcomeOrderNote() {
  return (
    <p className="text-xs text-ink-muted">
      Outcomes, least to most exposed: {OUTCOMES.map((outcome) => OUTCOME_LABELS[outcome]).join(" < ")}. Anything above “{OUTCOME_LABELS.silent}” tells an outsider the device exists.
    </p>
  );
}
