// The two totals a change's effect opens with: how many sources get more exposure and how many
// less. Shared by the proposal's effect and the shared-object and import reviews.
import { formatCount, pluralWord } from "#server/engine/format";
import { cx } from "../ui/cx";

/**
 * "More exposed: 16 sources" and "Less exposed: 336 sources". More exposure is marked as a
 * danger; less is not marked as good, because sources losing their answer may be the team
 * itself losing its login (the lockout guard says so, not this colour).
 */
export function ExposureTotals({ more, less, testIds }: { more: string; less: string; testIds: { more: string; less: string } }) {
  const sources = (decimal: string) => `${formatCount(decimal).text} ${pluralWord(BigInt(decimal), { one: "source", other: "sources" })}`;
  return (
    <>
      <span className={cx("rounded-control border px-2 py-1", BigInt(more) > 0n ? "border-danger/40 bg-danger-soft text-danger" : "border-line text-ink-muted")} data-testid={testIds.more} data-count={more}>
        More exposed: {sources(more)}
      </span>
      <span className={cx("rounded-control border px-2 py-1", BigInt(less) > 0n ? "border-line-strong text-ink" : "border-line text-ink-muted")} data-testid={testIds.less} data-count={less}>
        Less exposed: {sources(less)}
      </span>
    </>
  );
}
