import type { ReachGroupRow } from "#server/engine/index";
import { buttonClasses } from "../ui/button";
import { Count } from "./common";
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

/**
 * Where a reach row answers, as its first table cells: the interface (with its role, where the
 * table mixes devices) and its address, then the service with the outcome under it on a phone.
 */
export function ReachPlaceCells({ row, role }: { row: { interface: string; to: string | null; service: string; outcome: ReachGroupRow["outcome"] }; role?: string }) {
  return (
    <>
      <Td>
        <span className="font-medium">{row.interface}</span>
        {role ? <span className="text-xs text-ink-muted"> ({role})</span> : null}
        {row.to ? <span className="block font-mono text-xs text-ink-faint">{row.to}</span> : null}
      </Td>
      <Td className="font-mono">
        {row.service}
        <OutcomeOnPhone outcome={row.outcome} />
      </Td>
    </>
  );
}

/**
 * The outcome again under a row's service on a phone, where the outcome column sits beyond the
 * table's scroll edge: the one column nobody should have to scroll sideways for. Hidden from
 * assistive technology, which reads the outcome cell itself.
 */
export function OutcomeOnPhone({ outcome }: { outcome: ReachGroupRow["outcome"] }) {
  return (
    <span className="mt-1 block font-sans sm:hidden" aria-hidden="true" data-testid="outcome-on-phone">
      <OutcomeChip outcome={outcome} />
    </span>
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

/**
 * The head of a reach answer, for a device and for the fleet: "From 203.0.113.0/24", the block's
 * address count and when (and what) was asked, and the CSV of the same answer.
 */
export function ReachAnswerHead({ id, level, from, block, count, asked, csvHref }: { id: string; level: "h2" | "h3"; from: string; block: boolean; count: string; asked: string; csvHref: string }) {
  const Heading = level;
  return (
    <div className="flex flex-wrap items-end justify-between gap-3">
      <div>
        <Heading id={id} className="font-semibold">
          From <code>{from}</code>
        </Heading>
        <p className="text-sm text-ink-muted">
          {block ? (
            <>
              <Count value={count} /> addresses ·{" "}
            </>
          ) : null}
          {asked}
        </p>
      </div>
      <a href={csvHref} className={buttonClasses("secondary", "sm")} download>
        Download CSV
      </a>
    </div>
  );
}
