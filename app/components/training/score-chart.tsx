import { CartesianGrid, Legend, Line, LineChart, Tooltip, XAxis, YAxis } from "recharts";
import { formatDay, formatInstant } from "#server/engine/format";
import { useHydrated } from "#app/components/use-hydrated";

// Scores over time, one line per member (recharts). Drawn only in the browser: the chart measures
// its box, which the server cannot. The page's table of the same points is the text alternative,
// so the picture itself is hidden from assistive technology. Colours are the design tokens, which
// switch with the colour scheme (light-dark()), so the chart reads in dark mode too.

export type ChartPoint = { attemptId: string; userId: string; name: string; title: string; at: string; percent: number };

const COLOURS = ["var(--color-harbour)", "var(--color-brass)", "var(--color-info)", "var(--color-success)", "var(--color-danger)", "var(--color-outcome-refused)", "var(--color-outcome-login-mfa)", "var(--color-outcome-silent)"];
const DASHES = ["", "6 3", "2 3", "8 3 2 3"];

type Row = { t: number; percent: number; title: string };

export function ScoreChart({ points }: { points: readonly ChartPoint[] }) {
  const hydrated = useHydrated();
  const series = new Map<string, { name: string; rows: Row[] }>();
  for (const point of points) {
    const entry = series.get(point.userId) ?? { name: point.name, rows: [] };
    entry.rows.push({ t: Date.parse(point.at), percent: point.percent, title: point.title });
    series.set(point.userId, entry);
  }
  return (
    <div className="h-72 w-full" aria-hidden="true" data-testid="score-chart">
      {hydrated ? (
        <LineChart responsive accessibilityLayer={false} style={{ width: "100%", height: "100%" }} margin={{ top: 8, right: 16, bottom: 8, left: 0 }}>
          <CartesianGrid stroke="var(--color-line)" strokeDasharray="3 3" />
          <XAxis dataKey="t" type="number" scale="time" domain={["dataMin", "dataMax"]} tickFormatter={(value: number) => formatDay(value).replace(/^\w+ /, "")} stroke="var(--color-ink-muted)" tick={{ fill: "var(--color-ink-muted)", fontSize: 12 }} allowDuplicatedCategory={false} />
          <YAxis domain={[0, 100]} unit="%" width={48} stroke="var(--color-ink-muted)" tick={{ fill: "var(--color-ink-muted)", fontSize: 12 }} />
          <Tooltip
            contentStyle={{ background: "var(--color-surface-raised)", border: "1px solid var(--color-line)", color: "var(--color-ink)" }}
            labelFormatter={(value) => (typeof value === "number" ? formatInstant(value) : String(value))}
            formatter={(value, name) => [`${String(value)}%`, name]}
          />
          <Legend wrapperStyle={{ color: "var(--color-ink)", fontSize: 12 }} />
          {[...series.entries()].map(([userId, entry], index) => (
            <Line
              key={userId}
              data={entry.rows}
              dataKey="percent"
              name={entry.name}
              stroke={COLOURS[index % COLOURS.length]}
              strokeDasharray={DASHES[Math.floor(index / COLOURS.length) % DASHES.length]}
              strokeWidth={2}
              dot={{ r: 4, fill: COLOURS[index % COLOURS.length] }}
              isAnimationActive={false}
            />
          ))}
        </LineChart>
      ) : null}
    </div>
  );
}
