import { useState } from "react";
import { Link, useSearchParams } from "react-router";
import { OUTCOME_LABELS } from "#app/components/outcome";
import { formatCount } from "#server/engine/format";
import { OUTCOMES } from "#server/engine/vocabulary";
import type { ZoomCell, ZoomView } from "#server/analysis/address-grids";
import { CellMark, cellStyle, OutcomeLegend } from "./outcome-marks";

// The address-space picture: one block of the source space as up to 16 × 16 cells, each
// filled with its outcome (a letter as well as a colour), mixed cells striped and linked to
// the block where their changes are, a breadcrumb back out, and the view in words below for
// those who do not use the picture. The server computes every cell (server/analysis/
// address-grids.ts); this file only draws. A cell's rank is an outcome on the exposure map; the
// effect of a change passes `kinds` instead — per rank the outcome it is drawn with, whether
// its sources' outcome changes (those cells are ringed and listed) and its words.

/** How a rank reads: the outcome rank drawn (fill and letter; -1 none), whether it is a change, and its words (lower case). */
export type ZoomKind = { fill: number; marked: boolean; name: string };

/** The exposure map's reading: each rank is that outcome. */
const OUTCOME_KINDS: readonly ZoomKind[] = OUTCOMES.map((outcome, rank) => ({ fill: rank, marked: false, name: OUTCOME_LABELS[outcome].toLowerCase() }));

/** The ring of a cell whose sources' outcome changes (a shape, not a colour alone: WCAG 2.2 SC 1.4.1). */
export const CHANGE_RING = "inset 0 0 0 2px var(--color-brass), inset 0 0 0 3px var(--color-surface)";

const kindAt = (kinds: readonly ZoomKind[], rank: number): ZoomKind => kinds[rank] ?? { fill: -1, marked: false, name: "no outcome" };

/** A count in words for a label or a tooltip: exact below 10^15, else a power of two or rounded. */
function countWords(decimal: string): string {
  const { text, exact } = formatCount(decimal);
  if (text === exact) return exact;
  const value = BigInt(decimal);
  if ((value & (value - 1n)) === 0n) return `2 to the power ${value.toString(2).length - 1}`;
  return `about ${text.replace("≈ ", "").replace(/[⁰¹²³⁴⁵⁶⁷⁸⁹]+/, (digits) => `^${[...digits].map((digit) => "⁰¹²³⁴⁵⁶⁷⁸⁹".indexOf(digit)).join("")}`)}`;
}

/** "2,048 login with second factor, 254 no answer": the ranks present, most telling (highest) first; `spoken` for labels read aloud. */
function countsInWords(counts: readonly string[], kinds: readonly ZoomKind[], spoken = false, only?: (rank: number) => boolean): string {
  return [...counts.keys()]
    .reverse()
    .filter((rank) => counts[rank] !== "0" && (!only || only(rank)))
    .map((rank) => `${spoken ? countWords(counts[rank]) : formatCount(counts[rank]).text} ${kindAt(kinds, rank).name}`)
    .join(", ");
}

function cellWords(cell: ZoomCell, kinds: readonly ZoomKind[], spoken = false): string {
  const what = cell.uniform && cell.top < kinds.length ? `all ${kindAt(kinds, cell.top).name}` : `outcomes change here: ${countsInWords(cell.counts, kinds, spoken)}`;
  return `${cell.cidr}${cell.special ? ` (${cell.special})` : ""}: ${what}`;
}

/** The cell holds sources whose outcome changes (a change is drawn on top, as its top rank). */
const holdsChange = (cell: ZoomCell, kinds: readonly ZoomKind[]): boolean => cell.counts.some((count, rank) => count !== "0" && kindAt(kinds, rank).marked);

const capitalised = (text: string): string => text.charAt(0).toUpperCase() + text.slice(1);

const familyName = (family: 4 | 6) => `IPv${family}`;

/**
 * `kinds` (the effect's reading of the ranks) replaces the outcomes; `param` names the query
 * parameter that holds the block shown; `hash` keeps the picture in view after a zoom;
 * `markWords` is the legend's line for a ringed cell.
 */
export function AddressZoom({ view, problem, kinds = OUTCOME_KINDS, param = "block", hash = "", markWords, label }: { view: ZoomView; problem: string | null; kinds?: readonly ZoomKind[]; param?: string; hash?: string; markWords?: string; label?: string }) {
  const [searchParams] = useSearchParams();
  const [active, setActive] = useState<number | null>(null);
  const linkTo = (block: string | null) => {
    const next = new URLSearchParams(searchParams);
    if (block) next.set(param, block);
    else next.delete(param);
    next.delete("page");
    return `?${next.toString()}${hash}`;
  };
  const radix = view.family === 4 ? 10 : 16;
  const rows = Math.ceil(view.cells.length / view.columns);
  const cellSize = view.cellPrefix;
  const mixed = view.cells.filter((cell) => !cell.uniform);
  const present = OUTCOMES.filter((_, outcome) => view.cells.some((cell) => cell.counts.some((count, rank) => count !== "0" && kindAt(kinds, rank).fill === outcome)));
  const changed = view.cells.filter((cell) => holdsChange(cell, kinds));
  const shown = active === null ? null : view.cells[active];
  const parent = view.trail.at(-1) ?? null;
  return (
    <div className="space-y-3">
      <nav aria-label={label ? `Address block shown: ${label}` : "Address block shown"} className="flex flex-wrap items-center gap-x-1 gap-y-1 text-sm">
        <ol className="flex flex-wrap items-center gap-x-1">
          {view.trail.map((block, index) => (
            <li key={block} className="flex items-center gap-1">
              <Link to={linkTo(index === 0 ? null : block)} preventScrollReset className="font-mono text-harbour underline-offset-4 hover:underline">
                {index === 0 ? `All ${familyName(view.family)}` : block}
              </Link>
              <span aria-hidden="true" className="text-ink-faint">
                ›
              </span>
            </li>
          ))}
          <li>
            <span aria-current="location" className="font-mono font-semibold">
              {view.trail.length === 0 ? `All ${familyName(view.family)}` : view.block}
            </span>
          </li>
        </ol>
        {parent ? (
          <Link to={linkTo(view.trail.length === 1 ? null : parent)} preventScrollReset className="ml-auto rounded-control border border-line-strong bg-surface px-2 py-0.5 text-xs hover:bg-surface-sunken">
            Zoom out
          </Link>
        ) : null}
      </nav>
      {problem ? (
        <p role="status" className="text-sm text-warning">
          {problem}
        </p>
      ) : null}

      <div className="flex flex-wrap items-start gap-x-6 gap-y-4">
        <div className="w-full max-w-[30rem] min-w-0">
          <table className="w-full table-fixed border-separate border-spacing-[2px] text-[9px] sm:text-[10px]" onMouseLeave={() => setActive(null)}>
            <caption className="mb-1 text-left text-xs text-ink-muted">
              {view.block}
              {view.special ? ` (${view.special})` : ""}: {view.cells.length.toLocaleString("en")} cells of /{cellSize}, in address order (left to right, then down). Hover or focus a cell for its counts; striped cells link to where their outcomes change{changed.length ? "; ringed cells hold sources whose outcome the change moves" : ""}.
            </caption>
            <thead>
              <tr>
                <th scope="col" className="w-7 sm:w-9">
                  <span className="sr-only">First cell of the row</span>
                </th>
                {Array.from({ length: view.columns }, (_, column) => (
                  // Every fourth column labelled on narrow screens, where "+10" does not fit a cell.
                  <th key={column} scope="col" className="font-normal text-ink-faint">
                    <span className={column % 4 ? "max-sm:sr-only" : undefined}>+{column.toString(radix)}</span>
                  </th>
                ))}
              </tr>
            </thead>
            <tbody>
              {Array.from({ length: rows }, (_, row) => (
                <tr key={row}>
                  <th scope="row" className="pr-0.5 text-right font-normal text-ink-faint tabular">
                    {(row * view.columns).toString(radix)}
                  </th>
                  {view.cells.slice(row * view.columns, (row + 1) * view.columns).map((cell, column) => {
                    const index = row * view.columns + column;
                    const words = cellWords(cell, kinds);
                    const fill = kindAt(kinds, cell.top).fill;
                    const ring = holdsChange(cell, kinds) ? { boxShadow: CHANGE_RING } : {};
                    const classes =
                      "relative flex aspect-square w-full items-center justify-center rounded-[2px] outline-offset-1 hover:outline-2 hover:outline-ink focus-visible:outline-2 focus-visible:outline-brass";
                    const notch = cell.marked ? <span aria-hidden="true" className="absolute top-0 left-0 size-0 border-t-[5px] border-r-[5px] border-t-ink/70 border-r-transparent" /> : null;
                    return (
                      <td key={cell.cidr} className="p-0" data-changed={ring.boxShadow ? "true" : undefined}>
                        {cell.zoom ? (
                          <Link
                            to={linkTo(cell.zoom)}
                            preventScrollReset
                            aria-label={`${cellWords(cell, kinds, true)}. Zoom in to ${cell.zoom}`}
                            title={`${words}. Select to zoom in to ${cell.zoom}.`}
                            onFocus={() => setActive(index)}
                            onMouseEnter={() => setActive(index)}
                            className={`${classes} border border-dashed border-ink/70`}
                            style={{ ...cellStyle(fill, true), ...ring }}
                          >
                            {notch}
                            <CellMark rank={fill} mixed />
                          </Link>
                        ) : ring.boxShadow ? (
                          // A ringed cell takes the focus (and a click), so its before → after is read from the keyboard too.
                          <button
                            type="button"
                            title={words}
                            aria-label={cellWords(cell, kinds, true)}
                            onMouseEnter={() => setActive(index)}
                            onFocus={() => setActive(index)}
                            onClick={() => setActive(index)}
                            className={classes}
                            style={{ ...cellStyle(fill, false), ...ring }}
                          >
                            {notch}
                            <CellMark rank={fill} mixed={false} />
                          </button>
                        ) : (
                          <span title={words} onMouseEnter={() => setActive(index)} className={classes} style={cellStyle(fill, false)}>
                            {notch}
                            <CellMark rank={fill} mixed={false} />
                            <span className="sr-only">{words}</span>
                          </span>
                        )}
                      </td>
                    );
                  })}
                </tr>
              ))}
            </tbody>
          </table>
        </div>

        <div className="min-w-0 flex-1 basis-64 space-y-3 text-xs">
          <p className="min-h-[3.5em] rounded-control border border-line bg-surface-sunken px-3 py-2 text-sm" aria-hidden="true">
            {shown ? (
              <>
                <span className="font-mono font-semibold">{shown.cidr}</span>
                {shown.special ? <span className="text-ink-muted"> · {shown.special}</span> : null}
                <br />
                {shown.uniform ? capitalised(kindAt(kinds, shown.top).name) : countsInWords(shown.counts, kinds)}
                {shown.zoom ? <span className="text-ink-muted"> — select to zoom in to {shown.zoom}</span> : null}
              </>
            ) : (
              <span className="text-ink-muted">Point at or tab to a cell to read its block and counts here.</span>
            )}
          </p>
          <div>
            <h4 className="mb-1 font-semibold text-ink-muted">Outcomes, worst first</h4>
            <OutcomeLegend
              outcomes={present}
              className="flex-col"
              extra={
                <>
                  {mixed.length ? (
                    <li className="flex items-center gap-1.5">
                      <span aria-hidden="true" className="inline-flex size-4 shrink-0 items-center justify-center rounded-[3px] border border-dashed border-ink/70" style={cellStyle(kindAt(kinds, mixed[0].top).fill, true)} />
                      Striped, dashed edge: several outcomes inside; the colour and letter show the worst. Select to zoom in.
                    </li>
                  ) : null}
                  {changed.length ? (
                    <li className="flex items-center gap-1.5">
                      <span aria-hidden="true" className="inline-block size-4 shrink-0 rounded-[3px] border border-line-strong bg-surface" style={{ boxShadow: CHANGE_RING }} />
                      {markWords ?? "Ringed: sources whose outcome changes"}
                    </li>
                  ) : null}
                  {view.cells.some((cell) => cell.marked) ? (
                    <li className="flex items-center gap-1.5">
                      <span aria-hidden="true" className="relative inline-block size-4 shrink-0 rounded-[3px] border border-line-strong bg-surface">
                        <span className="absolute top-0 left-0 size-0 border-t-[6px] border-r-[6px] border-t-ink/70 border-r-transparent" />
                      </span>
                      Corner notch: special-purpose space (private, documentation, multicast…), named on hover
                    </li>
                  ) : null}
                </>
              }
            />
          </div>
        </div>
      </div>

      <ViewInWords view={view} mixed={mixed} changed={changed} kinds={kinds} linkTo={linkTo} />
    </div>
  );
}

/**
 * The view as text: the commonest uniform kind in a sentence, the other uniform blocks, and the
 * places that hold a change (the effect: whole blocks of one changing kind, merged, then the
 * mixed cells that hold one) or else the mixed cells (the exposure map), listed.
 */
function ViewInWords({ view, mixed, changed, kinds, linkTo }: { view: ZoomView; mixed: readonly ZoomCell[]; changed: readonly ZoomCell[]; kinds: readonly ZoomKind[]; linkTo: (block: string) => string }) {
  const LIMIT = 12;
  const name = (rank: number): string => kindAt(kinds, rank).name;
  const marked = (rank: number) => kindAt(kinds, rank).marked;
  const changes = changed.length > 0;
  // Most telling first (the most exposed outcome, or a change), as the reader looks for that.
  const ranked = [...(changes ? changed.filter((cell) => !cell.uniform) : mixed)].sort((a, b) => b.top - a.top);
  const [commonest, ...others] = view.uniform;
  // With changes, whole blocks of a changing kind are listed with the changes, not again among the other blocks.
  const changingBlocks = changes ? [...view.uniform].filter((group) => marked(group.rank)).sort((a, b) => b.rank - a.rank) : [];
  const blockList = (cidrs: readonly string[]) => (
    <>
      <span className="font-mono text-xs">{cidrs.slice(0, LIMIT).join(", ")}</span>
      {cidrs.length > LIMIT ? ` and ${(cidrs.length - LIMIT).toLocaleString("en")} more blocks` : ""}
    </>
  );
  return (
    <div className="space-y-2 text-sm">
      <p>
        In {view.block}: {countsInWords(view.counts, kinds)}.{" "}
        {commonest ? `${commonest.cells.toLocaleString("en")} of ${view.cells.length.toLocaleString("en")} cells are all ${name(commonest.rank)}` : "Every cell has several outcomes"}
        {commonest && mixed.length ? `; ${mixed.length.toLocaleString("en")} ${mixed.length === 1 ? "has" : "have"} several outcomes` : ""}.
      </p>
      {others
        .filter((group) => !changes || !marked(group.rank))
        .sort((a, b) => b.rank - a.rank)
        .map((group) => (
          <p key={group.rank}>
            All {name(group.rank)}: {blockList(group.cidrs)}
          </p>
        ))}
      {ranked.length + changingBlocks.length > 0 ? (
        <div>
          <h4 className="text-xs font-semibold text-ink-muted">{changes ? "Where sources' outcome changes" : "Where the outcome changes (most exposed first)"}</h4>
          <ul className="mt-1 space-y-0.5" data-testid={changes ? "changed-cells" : undefined}>
            {changingBlocks.map((group) => (
              <li key={`all-${group.rank}`} className="text-xs">
                <span className="text-ink-muted">All {name(group.rank)}:</span> {blockList(group.cidrs)}
              </li>
            ))}
            {ranked.slice(0, LIMIT).map((cell) => (
              <li key={cell.cidr}>
                {cell.zoom ? (
                  <Link to={linkTo(cell.zoom)} preventScrollReset className="font-mono text-xs text-harbour underline-offset-4 hover:underline">
                    {cell.zoom}
                  </Link>
                ) : (
                  <span className="font-mono text-xs">{cell.cidr}</span>
                )}{" "}
                <span className="text-xs text-ink-muted">
                  {cell.zoom && cell.zoom !== cell.cidr ? `(inside ${cell.cidr}) ` : ""}
                  {changes ? countsInWords(cell.counts, kinds, false, marked) : countsInWords(cell.counts, kinds)}
                </span>
              </li>
            ))}
          </ul>
          {ranked.length > LIMIT ? <p className="mt-1 text-xs text-ink-muted">and {(ranked.length - LIMIT).toLocaleString("en")} more {changes ? "ringed, striped" : "striped"} cells in the picture.</p> : null}
        </div>
      ) : null}
    </div>
  );
}
