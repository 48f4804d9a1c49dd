import { OUTCOME_LABELS } from "#app/components/outcome";
import { DAYS, OUTCOMES, type Day } from "#server/engine/vocabulary";
import type { HourCell } from "#server/analysis/week-hours";
import { OUTCOME_FILL } from "./address-map";
import { ScrollArea } from "#app/components/ui/scroll-area";

const DAY_LABELS: Record<Day, string> = { mon: "Mon", tue: "Tue", wed: "Wed", thu: "Thu", fri: "Fri", sat: "Sat", sun: "Sun" };

function labelOf(rank: number): string {
  return rank >= 0 && rank < OUTCOMES.length ? OUTCOME_LABELS[OUTCOMES[rank]] : "no data";
}

/**
 * The week as a table of 7 days × 24 hours on the device clock, each hour filled with the
 * most exposed outcome during it. A table, so screen readers can walk it by day and hour;
 * a small corner notch marks hours where the outcome changes inside the hour.
 */
export function WeekHourGrid({ cells, current, caption }: { cells: readonly HourCell[]; current: number | null; caption: string }) {
  return (
    <ScrollArea>
      <table className="border-separate border-spacing-[2px] text-[10px]">
        <caption className="mb-1 text-left text-xs text-ink-muted">{caption}</caption>
        <thead>
          <tr>
            <th scope="col" className="w-9">
              <span className="sr-only">Day</span>
            </th>
            {Array.from({ length: 24 }, (_, hour) => (
              <th key={hour} scope="col" className="w-6 text-center font-normal text-ink-faint">
                {String(hour).padStart(2, "0")}
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
                const cell = cells[index];
                const words = `${DAY_LABELS[day]} ${String(hour).padStart(2, "0")}:00: ${labelOf(cell.top)}${cell.wider ? ", more sources answered than at the quietest time" : ""}${cell.changes ? " (changes within the hour)" : ""}${current === index ? " — the chosen time" : ""}`;
                return (
                  <td key={hour} title={words} className="relative h-5 w-6 rounded-[3px] p-0" style={{ background: OUTCOME_FILL(cell.top), outline: current === index ? "2px solid var(--color-ink)" : undefined, outlineOffset: 1 }}>
                    <span className="sr-only">{words}</span>
                    {cell.wider ? <span aria-hidden="true" className="absolute top-1/2 left-1/2 h-1.5 w-1.5 -translate-x-1/2 -translate-y-1/2 rounded-full bg-surface ring-1 ring-ink/60" /> : null}
                    {cell.changes ? <span aria-hidden="true" className="absolute top-0 right-0 h-0 w-0 border-t-[6px] border-l-[6px] border-t-ink border-l-transparent" /> : null}
                  </td>
                );
              })}
            </tr>
          ))}
        </tbody>
      </table>
    </ScrollArea>
  );
}
