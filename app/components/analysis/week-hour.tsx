import { OUTCOME_LABELS } from "#app/components/outcome";
import { OutcomeChip } from "#app/components/outcome";
import { formatCount } from "#server/engine/format";
import { DAYS, OUTCOMES, type Day } from "#server/engine/vocabulary";
import type { WeekView } from "#server/analysis/week-hours";
import { Count } from "./common";
import { CellMark, cellStyle, OutcomeLegend, outcomeAt } from "./outcome-marks";

const DAY_LABELS: Record<Day, string> = { mon: "Mon", tue: "Tue", wed: "Wed", thu: "Thu", fri: "Fri", sat: "Sat", sun: "Sun" };

function labelOf(rank: number): string {
  const outcome = outcomeAt(rank);
  return outcome ? OUTCOME_LABELS[outcome] : "no data";
}

/** "32 login with second factor, 4,294,967,264 no answer" (most exposed first, zero counts left out). */
function countsText(counts: readonly string[]): string {
  return [...OUTCOMES.keys()]
    .reverse()
    .filter((rank) => counts[rank] !== "0")
    .map((rank) => `${formatCount(counts[rank]).text} ${OUTCOME_LABELS[OUTCOMES[rank]].toLowerCase()}`)
    .join(", ");
}

/**
 * The week of one exposure entry: what every hour has in common stated once, then the 7 × 24
 * hours on the device clock, each filled with the worst outcome (PRODUCT.md §3 order) of the
 * sources whose answer changes during the week. A table, so screen readers walk it by day and
 * hour; a corner notch marks an hour in which the outcome changes, an outline the chosen time.
 */
export function WeekHourView({ week, current, timezone }: { week: WeekView; current: number | null; timezone: string }) {
  if (week.changingCount === "0") {
    return (
      <p className="text-sm text-ink-muted">
        Schedules split this device's week into {week.slices.length} slices, but this entry's answers are the same in all of them: {countsText(week.steady)}.
      </p>
    );
  }
  const present = OUTCOMES.filter((_, rank) => week.hours.some((cell) => cell.top === rank));
  const steadyAny = week.steady.some((count) => count !== "0");
  return (
    <div className="space-y-3">
      <dl className="grid gap-x-4 gap-y-1 text-sm sm:grid-cols-[max-content_1fr]">
        {steadyAny ? (
          <>
            <dt className="font-medium">The same all week</dt>
            <dd className="text-ink-muted">{countsText(week.steady)}.</dd>
          </>
        ) : null}
        <dt className="font-medium">Changes over the week</dt>
        <dd className="text-ink-muted">
          <Count value={week.changingCount} /> {week.changingCount === "1" ? "address" : "addresses"}:{" "}
          <span className="font-mono text-xs text-ink">{week.changing.join(", ")}</span>
          {week.changingBlocks > week.changing.length ? ` and ${(week.changingBlocks - week.changing.length).toLocaleString("en")} more blocks` : ""}. The hours below show their worst outcome.
        </dd>
      </dl>
      {/* Scrolls inside the card on a narrow screen; focusable so the keyboard can scroll it (WCAG 2.1.1). */}
      {/* eslint-disable-next-line jsx-a11y/no-noninteractive-tabindex -- a scrolling region must take focus to be scrolled by keyboard (axe scrollable-region-focusable) */}
      <div className="overflow-x-auto" role="region" aria-label="Week by hour" tabIndex={0}>
        <table className="w-full min-w-[20rem] table-fixed border-separate border-spacing-[2px] text-[9px] sm:text-[10px]">
          <caption className="mb-1 text-left text-xs text-ink-muted">
            Worst outcome of the changing addresses in each hour, device clock ({timezone}).
          </caption>
          <thead>
            <tr>
              <th scope="col" className="w-8 sm:w-10">
                <span className="sr-only">Day</span>
              </th>
              {Array.from({ length: 24 }, (_, hour) => (
                // Every third hour labelled on narrow screens, where two digits do not fit a cell.
                <th key={hour} scope="col" className="text-center font-normal text-ink-faint tabular">
                  <span className={hour % 3 ? "max-sm:sr-only" : undefined}>{String(hour).padStart(2, "0")}</span>
                </th>
              ))}
            </tr>
          </thead>
          <tbody>
            {DAYS.map((day, dayIndex) => (
              <tr key={day}>
                <th scope="row" className="pr-1 text-left font-medium text-ink-muted">
                  {DAY_LABELS[day]}
                </th>
                {Array.from({ length: 24 }, (_, hour) => {
                  const index = dayIndex * 24 + hour;
                  const cell = week.hours[index];
                  const words = `${DAY_LABELS[day]} ${String(hour).padStart(2, "0")}:00: ${labelOf(cell.top)}${cell.changes ? " (changes within the hour)" : ""}${current === index ? " — the chosen time" : ""}`;
                  return (
                    <td
                      key={hour}
                      title={words}
                      className="relative h-5 rounded-[2px] p-0 text-center font-semibold sm:h-6"
                      style={{ ...cellStyle(cell.top, false), outline: current === index ? "2px solid var(--color-ink)" : undefined, outlineOffset: 1 }}
                    >
                      <CellMark rank={cell.top} mixed={false} />
                      <span className="sr-only">{words}</span>
                      {cell.changes ? <span aria-hidden="true" className="absolute top-0 right-0 size-0 border-t-[6px] border-l-[6px] border-t-ink border-l-transparent" /> : null}
                    </td>
                  );
                })}
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      <OutcomeLegend
        outcomes={present}
        extra={
          <>
            {week.hours.some((cell) => cell.changes) ? (
              <li className="flex items-center gap-1.5">
                <span aria-hidden="true" className="relative inline-block size-4 rounded-[3px] border border-line-strong bg-surface">
                  <span className="absolute top-0 right-0 size-0 border-t-[6px] border-l-[6px] border-t-ink border-l-transparent" />
                </span>
                Corner notch: the outcome changes within the hour
              </li>
            ) : null}
            {current !== null ? (
              <li className="flex items-center gap-1.5">
                <span aria-hidden="true" className="inline-block size-4 rounded-[3px] border border-line-strong bg-surface outline-2 outline-offset-1 outline-ink" />
                Outlined: the chosen time
              </li>
            ) : null}
          </>
        }
      />
      <details className="text-xs">
        <summary className="cursor-pointer text-ink-muted">The {week.slices.length} slices in words</summary>
        <ul className="mt-2 space-y-1">
          {week.slices.map((slice) => (
            <li key={`${slice.start}-${slice.end}`} className="flex flex-wrap items-center gap-x-2 gap-y-0.5">
              <span className="tabular w-36 font-mono">
                {slice.start} – {slice.end}
              </span>
              {slice.outcome ? <OutcomeChip outcome={slice.outcome} /> : <span className="text-ink-faint">not present</span>}
              <span className="text-ink-muted">{countsText(slice.counts)} among the changing addresses</span>
            </li>
          ))}
        </ul>
      </details>
    </div>
  );
}
