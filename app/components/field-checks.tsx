import { formatNumber, formatPercent } from "#server/engine/format";
import type { FieldCheckCounts } from "#server/engine/index";
import { cx } from "./ui/cx";

/** "90% (18 of 20)": agreements over the observations that could be checked; a dash when none could. */
export function agreementText(counts: FieldCheckCounts): string {
  if (counts.agreementRate === null) return "—";
  const checked = counts.agreements + counts.differences;
  return `${formatPercent(counts.agreementRate)} (${formatNumber(counts.agreements)} of ${formatNumber(checked)})`;
}

/** The agreement rate of a check, coloured by whether anything differed; the words carry the meaning. */
export function AgreementRate({ counts, className }: { counts: FieldCheckCounts; className?: string }) {
  const tone = counts.agreementRate === null ? "text-ink-muted" : counts.differences > 0 ? "text-danger" : "text-success";
  return <span className={cx("tabular font-medium", tone, className)}>{agreementText(counts)}</span>;
}
