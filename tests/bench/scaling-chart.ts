// The benchmark's scaling series as a small hand-written SVG: two log-log panels (time per
// operation, peak RSS) against the number of inbound rules, one labelled line per measure.
// Text and axes use currentColor with a light default and a dark override, so the chart
// reads on light and dark pages; the line colours are mid-tone and each line also has its
// own dash pattern and an end label, so colour is never the only cue.

export interface ChartPoint {
  readonly rules: number;
  readonly compileMs: number;
  readonly exposureMs: number;
  readonly findingsMs: number;
  readonly diffMs: number;
  readonly peakRssMiB: number;
  readonly diffPeakRssMiB: number;
}

interface Line {
  readonly label: string;
  readonly colour: string;
  readonly dash: string;
  readonly values: readonly number[];
}

const WIDTH = 810;
const HEIGHT = 330;
const PANEL = { top: 44, bottom: 272, width: 250 };
const PANELS = [70, 470];

const fmt = (x: number): string => (Math.round(x * 10) / 10).toString();

function escapeXml(text: string): string {
  return text.replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;");
}

function tickLabel(value: number, unit: string): string {
  if (unit === "ms") return value >= 1000 ? `${value / 1000} s` : `${value} ms`;
  return value >= 1024 ? `${value / 1024} GiB` : `${value} MiB`;
}

/** One panel: log x (rules) and log y (value), the lines, and their end labels. */
function panel(left: number, title: string, unit: string, rules: readonly number[], lines: readonly Line[], guide?: { value: number; label: string }): string {
  const all = lines.flatMap((l) => l.values).filter((v) => v > 0);
  if (guide !== undefined) all.push(guide.value);
  // Times on decades (ticks at 1, 2, 5 ×); memory on powers of two (MiB, GiB).
  const base = unit === "ms" ? 10 : 2;
  const lo = base ** Math.floor(Math.log(Math.min(...all)) / Math.log(base));
  const hi = base ** Math.ceil(Math.log(Math.max(...all)) / Math.log(base));
  const xMin = Math.log(rules[0]);
  const xMax = Math.log(rules[rules.length - 1]);
  const x = (r: number): number => left + (xMax === xMin ? PANEL.width / 2 : ((Math.log(r) - xMin) / (xMax - xMin)) * PANEL.width);
  const y = (v: number): number => PANEL.bottom - ((Math.log(Math.max(v, lo)) - Math.log(lo)) / (Math.log(hi) - Math.log(lo))) * (PANEL.bottom - PANEL.top);
  const out: string[] = [];
  out.push(`<text x="${left}" y="${PANEL.top - 14}" class="title">${escapeXml(title)}</text>`);
  for (let step = lo; step <= hi; step *= base) {
    for (const m of base === 10 ? [1, 2, 5] : [1]) {
      const v = step * m;
      if (v < lo || v > hi) continue;
      const yy = fmt(y(v));
      out.push(`<line x1="${left}" x2="${left + PANEL.width}" y1="${yy}" y2="${yy}" class="${m === 1 ? "grid" : "grid minor"}"/>`);
      if (m !== 5) out.push(`<text x="${left - 6}" y="${yy}" class="tick" text-anchor="end" dominant-baseline="middle">${tickLabel(v, unit)}</text>`);
    }
  }
  for (const r of rules) {
    const xx = fmt(x(r));
    out.push(`<line x1="${xx}" x2="${xx}" y1="${PANEL.bottom}" y2="${PANEL.bottom + 4}" class="axis"/>`);
    out.push(`<text x="${xx}" y="${PANEL.bottom + 16}" class="tick" text-anchor="middle">${r >= 1000 ? `${r / 1000}k` : r}</text>`);
  }
  out.push(`<line x1="${left}" x2="${left + PANEL.width}" y1="${PANEL.bottom}" y2="${PANEL.bottom}" class="axis"/>`);
  out.push(`<line x1="${left}" x2="${left}" y1="${PANEL.top}" y2="${PANEL.bottom}" class="axis"/>`);
  out.push(`<text x="${left + PANEL.width / 2}" y="${PANEL.bottom + 32}" class="tick" text-anchor="middle">inbound rules (log scale)</text>`);
  if (guide !== undefined) {
    const gy = fmt(y(guide.value));
    out.push(`<line x1="${left}" x2="${left + PANEL.width}" y1="${gy}" y2="${gy}" class="guide"/>`);
    out.push(`<text x="${left + 4}" y="${fmt(y(guide.value) - 4)}" class="tick">${escapeXml(guide.label)}</text>`);
  }
  // Lines with markers; labels at the right end, nudged apart so they never overlap.
  const labels: { y: number; line: Line }[] = [];
  for (const line of lines) {
    const points = line.values.map((v, i) => `${fmt(x(rules[i]))},${fmt(y(v))}`);
    out.push(`<polyline points="${points.join(" ")}" fill="none" stroke="${line.colour}" stroke-width="2" stroke-dasharray="${line.dash}"/>`);
    for (const p of points) {
      const [px, py] = p.split(",");
      out.push(`<circle cx="${px}" cy="${py}" r="2.5" fill="${line.colour}"/>`);
    }
    labels.push({ y: y(line.values[line.values.length - 1]), line });
  }
  labels.sort((a, b) => a.y - b.y);
  for (let i = 1; i < labels.length; i++) labels[i].y = Math.max(labels[i].y, labels[i - 1].y + 13);
  for (const { y: ly, line } of labels) {
    out.push(`<text x="${left + PANEL.width + 8}" y="${fmt(ly)}" class="label" dominant-baseline="middle" style="fill: ${line.colour}">${escapeXml(line.label)}</text>`);
  }
  return out.join("\n  ");
}

/** The whole chart as SVG text. */
export function scalingChart(points: readonly ChartPoint[], caption: string): string {
  const rules = points.map((p) => p.rules);
  const times: Line[] = [
    { label: "findings", colour: "#d1495b", dash: "2 3", values: points.map((p) => p.findingsMs) },
    { label: "compile", colour: "#4f86c6", dash: "none", values: points.map((p) => p.compileMs) },
    { label: "exposure", colour: "#e0892f", dash: "7 3", values: points.map((p) => p.exposureMs) },
    { label: "diff", colour: "#3a9e4f", dash: "10 3 2 3", values: points.map((p) => p.diffMs) },
  ];
  const memory: Line[] = [
    { label: "whole run", colour: "#8e6cc9", dash: "none", values: points.map((p) => p.peakRssMiB) },
    { label: "diff", colour: "#3a9e4f", dash: "10 3 2 3", values: points.map((p) => p.diffPeakRssMiB) },
  ];
  return `<svg xmlns="http://www.w3.org/2000/svg" width="${WIDTH}" height="${HEIGHT}" viewBox="0 0 ${WIDTH} ${HEIGHT}" role="img" aria-labelledby="title desc">
  <title id="title">Engine scaling by number of inbound rules</title>
  <desc id="desc">${escapeXml(caption)} ${escapeXml(
    points.map((p) => `${p.rules} rules: compile ${p.compileMs} ms, exposure ${p.exposureMs} ms, findings ${p.findingsMs} ms, diff ${p.diffMs} ms, peak RSS ${p.peakRssMiB} MiB`).join("; "),
  )}</desc>
  <style>
    svg { color: #24292f; font-family: system-ui, -apple-system, "Segoe UI", sans-serif; }
    @media (prefers-color-scheme: dark) { svg { color: #d0d7de; } }
    text { fill: currentColor; font-size: 11px; }
    .title { font-size: 12px; font-weight: 600; }
    .label { font-size: 11px; font-weight: 600; }
    .axis { stroke: currentColor; stroke-width: 1; }
    .grid { stroke: currentColor; stroke-opacity: 0.22; stroke-width: 1; }
    .grid.minor { stroke-opacity: 0.1; }
    .guide { stroke: currentColor; stroke-opacity: 0.6; stroke-dasharray: 4 4; }
  </style>
  ${panel(PANELS[0], "Time per operation", "ms", rules, times)}
  ${panel(PANELS[1], "Peak RSS of the run", "MiB", rules, memory, { value: 1024, label: "1 GiB target at 16k rules" })}
  <text x="${WIDTH / 2}" y="${HEIGHT - 6}" class="tick" text-anchor="middle">${escapeXml(caption)}</text>
</svg>
`;
}
