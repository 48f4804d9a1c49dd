import { useId } from "react";
import { OUTCOME_LABELS } from "#app/components/outcome";
import { OUTCOMES } from "#server/engine/vocabulary";
import { buildGrid, gridRuns, type GridSpec } from "#server/analysis/address-grids";

// The address-space picture: each cell a block of addresses, filled with the most exposed
// outcome present in it. Drawn as SVG with one rect per run of equal cells in a row (a
// handful for the demo devices), so it renders on the server and follows the theme tokens.
// Special-purpose space is drawn over it as hatched, outlined areas, named in the legend.

const CELL = 2;

export const OUTCOME_FILL = (rank: number): string => (rank >= 0 && rank < OUTCOMES.length ? `var(--color-outcome-${OUTCOMES[rank]})` : "var(--color-surface-sunken)");

type Special = { key: string; label: string; source: string; cidrs: readonly string[]; mark: "hatch" | "dots" | "cross" | "ring" };

/** Special-purpose blocks (RFC 6890 registry) shown on the IPv4 map. */
const IPV4_SPECIAL: readonly Special[] = [
  { key: "private", label: "Private", source: "RFC 1918", cidrs: ["10.0.0.0/8", "172.16.0.0/12", "192.168.0.0/16"], mark: "hatch" },
  { key: "shared", label: "Shared address space", source: "RFC 6598", cidrs: ["100.64.0.0/10"], mark: "hatch" },
  { key: "local", label: "Loopback and link-local", source: "RFC 1122, RFC 3927", cidrs: ["127.0.0.0/8", "169.254.0.0/16"], mark: "dots" },
  { key: "reserved", label: "This network, multicast, reserved", source: "RFC 1122, RFC 5771, RFC 1112", cidrs: ["0.0.0.0/8", "224.0.0.0/4", "240.0.0.0/4"], mark: "cross" },
  { key: "documentation", label: "Documentation (smaller than a cell: ringed)", source: "RFC 5737", cidrs: ["192.0.2.0/24", "198.51.100.0/24", "203.0.113.0/24"], mark: "ring" },
];
const IPV6_SPECIAL: Record<string, readonly Special[]> = {
  "2000::/3": [{ key: "documentation", label: "Documentation 2001:db8::/32 (ringed)", source: "RFC 3849", cidrs: ["2001:db8::/32"], mark: "ring" }],
  "fc00::/7": [{ key: "ula", label: "Unique local (the whole strip)", source: "RFC 4193", cidrs: ["fc00::/7"], mark: "hatch" }],
};

function specialsOf(spec: GridSpec): readonly Special[] {
  return spec.family === 4 ? IPV4_SPECIAL : (IPV6_SPECIAL[spec.base] ?? []);
}

function Patterns({ id }: { id: string }) {
  const stroke = "var(--color-ink)";
  return (
    <defs>
      <pattern id={`${id}-hatch`} width="6" height="6" patternUnits="userSpaceOnUse" patternTransform="rotate(45)">
        <line x1="0" y1="0" x2="0" y2="6" stroke={stroke} strokeWidth="1.5" strokeOpacity="0.55" />
      </pattern>
      <pattern id={`${id}-dots`} width="4" height="4" patternUnits="userSpaceOnUse">
        <circle cx="2" cy="2" r="0.9" fill={stroke} fillOpacity="0.7" />
      </pattern>
      <pattern id={`${id}-cross`} width="6" height="6" patternUnits="userSpaceOnUse">
        <path d="M0 0 L6 6 M6 0 L0 6" stroke={stroke} strokeWidth="0.8" strokeOpacity="0.5" />
      </pattern>
    </defs>
  );
}

function SpecialShapes({ id, spec, special }: { id: string; spec: GridSpec; special: Special }) {
  const cells = buildGrid(spec, [special.cidrs]);
  const runs = gridRuns(cells, spec.columns).filter((run) => run.rank === 0);
  if (special.mark === "ring") {
    return (
      <g aria-hidden="true">
        {runs.map((run) => (
          <circle key={`${run.row}-${run.column}`} cx={(run.column + 0.5) * CELL} cy={(run.row + 0.5) * CELL} r={spec.columns >= 256 ? 5 : 1.4} fill="none" stroke="var(--color-ink)" strokeWidth={spec.columns >= 256 ? 1.25 : 0.3} />
        ))}
      </g>
    );
  }
  return (
    <g aria-hidden="true">
      {runs.map((run) => (
        // A pale wash first, so even a one-row block (10/8 is 2 px tall) stands out from the outcome colour.
        <g key={`${run.row}-${run.column}`}>
          <rect x={run.column * CELL} y={run.row * CELL} width={run.length * CELL} height={CELL} fill="var(--color-surface)" fillOpacity="0.55" />
          <rect x={run.column * CELL} y={run.row * CELL} width={run.length * CELL} height={CELL} fill={`url(#${id}-${special.mark})`} stroke="var(--color-ink)" strokeOpacity="0.8" strokeWidth="0.6" />
        </g>
      ))}
    </g>
  );
}

/** One grid: cells coloured by outcome rank, special space marked, described for screen readers. */
export function AddressGrid({ spec, runs, title, description }: { spec: GridSpec; runs: readonly number[]; title: string; description: string }) {
  const id = useId().replace(/:/g, "");
  const rows = Math.ceil(2 ** (spec.cellPrefix - Number(spec.base.split("/")[1])) / spec.columns);
  const width = spec.columns * CELL;
  const height = rows * CELL;
  const rects = [];
  for (let i = 0; i < runs.length; i += 4) {
    const [row, column, length, rank] = [runs[i], runs[i + 1], runs[i + 2], runs[i + 3]];
    rects.push(<rect key={i} x={column * CELL} y={row * CELL} width={length * CELL} height={CELL} fill={OUTCOME_FILL(rank)} />);
  }
  // A lone exposed /16 is 2 px wide: blocks more exposed than the bulk of the map get an
  // enlarged, outlined copy on top so they cannot be missed (bounded, so a busy map stays light).
  const cellsOf = new Map<number, number>();
  for (let i = 0; i < runs.length; i += 4) cellsOf.set(runs[i + 3], (cellsOf.get(runs[i + 3]) ?? 0) + runs[i + 2]);
  const bulk = [...cellsOf].reduce((best, entry) => (entry[1] > best[1] ? entry : best), [-1, -1])[0];
  const standouts: number[] = [];
  for (let i = 0; i < runs.length; i += 4) if (runs[i + 3] > bulk && runs[i + 3] !== 255) standouts.push(i);
  const halo = spec.columns >= 256 ? 3 : 0.75;
  const halos =
    standouts.length <= 2000
      ? standouts.map((i) => (
          <rect
            key={`h${i}`}
            x={runs[i + 1] * CELL - halo}
            y={runs[i] * CELL - halo}
            width={runs[i + 2] * CELL + 2 * halo}
            height={CELL + 2 * halo}
            fill={OUTCOME_FILL(runs[i + 3])}
            stroke="var(--color-ink)"
            strokeWidth={spec.columns >= 256 ? 0.8 : 0.3}
          />
        ))
      : null;
  // Small grids (IPv6) are scaled up so a cell is still visible.
  const scale = spec.columns >= 256 ? 1 : 8;
  return (
    <figure className="min-w-0">
      <div className="flex items-stretch gap-1">
      {spec.columns === 256 ? (
        // First-octet ticks beside the rows.
        <div aria-hidden="true" className="relative w-6 shrink-0 text-[9px] text-ink-faint">
          {[0, 64, 128, 192, 255].map((octet) => (
            <span key={octet} className="tabular absolute right-0 -translate-y-1/2" style={{ top: `${((octet + 0.5) / 256) * 100}%` }}>
              {octet}
            </span>
          ))}
        </div>
      ) : null}
      <div className="min-w-0">
      <svg
        role="img"
        aria-labelledby={`${id}-title ${id}-desc`}
        viewBox={`0 0 ${width} ${height}`}
        width={width * scale}
        height={height * scale}
        className="h-auto max-w-full rounded-[4px] border border-line-strong"
        shapeRendering="crispEdges"
        preserveAspectRatio="xMinYMin meet"
      >
        <title id={`${id}-title`}>{title}</title>
        <desc id={`${id}-desc`}>{description}</desc>
        <Patterns id={id} />
        {rects}
        {specialsOf(spec).map((special) => (
          <SpecialShapes key={special.key} id={id} spec={spec} special={special} />
        ))}
        <g aria-hidden="true">{halos}</g>
      </svg>
      {spec.columns === 256 ? (
        // Octet ticks under the picture: where 0, 64, 128, 192 and 255 fall on both axes.
        <div aria-hidden="true" className="relative mt-0.5 h-3 text-[9px] text-ink-faint" style={{ width: width * scale, maxWidth: "100%" }}>
          {[0, 64, 128, 192, 255].map((octet) => (
            <span key={octet} className="absolute -translate-x-1/2 tabular" style={{ left: `${((octet + 0.5) / 256) * 100}%` }}>
              {octet}
            </span>
          ))}
        </div>
      ) : null}
      </div>
      </div>
      <figcaption className="mt-1 text-xs text-ink-muted">{title}</figcaption>
    </figure>
  );
}

/** The legend: outcomes as swatches with words, then the special-purpose marks. */
export function AddressMapLegend({ specs }: { specs: readonly GridSpec[] }) {
  const id = useId().replace(/:/g, "");
  const specials = specs.flatMap(specialsOf);
  return (
    <div className="space-y-3 text-xs">
      <div>
        <h4 className="mb-1 font-semibold text-ink-muted">Cell colour: most exposed outcome in the block</h4>
        <p className="mb-1 text-ink-faint">Blocks more exposed than most of the map are drawn enlarged, outlined.</p>
        <ul className="space-y-1">
          {[...OUTCOMES].reverse().map((outcome) => (
            <li key={outcome} className="flex items-center gap-2">
              <span aria-hidden="true" className="inline-block h-3 w-5 rounded-[2px] border border-line-strong" style={{ background: `var(--color-outcome-${outcome})` }} />
              {OUTCOME_LABELS[outcome]}
            </li>
          ))}
        </ul>
      </div>
      {specials.length ? (
        <div>
          <h4 className="mb-1 font-semibold text-ink-muted">Special-purpose space</h4>
          <svg width="0" height="0" aria-hidden="true" className="absolute">
            <Patterns id={id} />
          </svg>
          <ul className="space-y-1">
            {specials.map((special) => (
              <li key={special.key} className="flex items-center gap-2">
                <svg aria-hidden="true" width="20" height="12" className="shrink-0">
                  {special.mark === "ring" ? (
                    <circle cx="10" cy="6" r="5" fill="none" stroke="var(--color-ink)" strokeWidth="1.25" />
                  ) : (
                    <rect x="0.5" y="0.5" width="19" height="11" fill={`url(#${id}-${special.mark})`} stroke="var(--color-ink)" strokeOpacity="0.6" />
                  )}
                </svg>
                <span>
                  {special.label} <span className="text-ink-faint">({special.source})</span>
                </span>
              </li>
            ))}
          </ul>
        </div>
      ) : null}
    </div>
  );
}
