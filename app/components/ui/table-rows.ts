// The rows a list page shows, filtered and sorted from state read off the URL. Loaders call
// this, so the URL stays the source of truth: links are shareable and the pages work without
// JavaScript (SortHeader writes ?sort=…&dir=…). Columns are described as @tanstack/react-table
// column definitions and keep its meaning (the subset the pages use: accessorFn / accessorKey,
// enableGlobalFilter, filterFn "equals", sortingFn "basic" or a function of two rows), but are
// applied here directly: its row models cost about 30 ms for a fleet of 500 devices on every
// request (measured on the load benchmark's fleet, issue 14), a plain filter and sort well under one.

import type { ColumnDef, ColumnFiltersState, SortingState } from "@tanstack/react-table";

export type { ColumnDef };

/** What a row model's row offers a sortingFn: the row as given. */
type RowLike<Row> = { original: Row };
type Compare<Row> = (a: RowLike<Row>, b: RowLike<Row>, columnId: string) => number;

/** The column's value of a row, as tanstack's accessorFn / accessorKey give it. */
function accessorOf<Row>(column: ColumnDef<Row>): ((row: Row, index: number) => unknown) | null {
  if ("accessorFn" in column && typeof column.accessorFn === "function") return column.accessorFn as (row: Row, index: number) => unknown;
  if ("accessorKey" in column && column.accessorKey !== undefined) {
    const key = String(column.accessorKey);
    return (row) => (row as Record<string, unknown>)[key];
  }
  return null;
}

/** tanstack's "basic" sortingFn: `<` and `>` on the values as they are. */
function compareBasic(a: unknown, b: unknown): number {
  if (a === b) return 0;
  // Compared as tanstack does, whatever the type (numbers as numbers, strings by code unit).
  return (a as number) > (b as number) ? 1 : -1;
}

/** A value to search: text and numbers only, as tanstack's global filter takes them. */
function searchable(value: unknown): value is string | number {
  return typeof value === "string" || typeof value === "number";
}

/**
 * `data` filtered and sorted. Columns compare with `<` unless they name another sortingFn, and
 * take part in the search (`globalFilter`, case-insensitive "contains") only when they say
 * `enableGlobalFilter: true`; a column filter keeps the rows whose value equals it. Ties keep the
 * input order. The rows come back as the same objects; `data` is left as it was.
 */
export function tableRows<Row>(data: readonly Row[], columns: readonly ColumnDef<Row>[], state: { sorting?: SortingState; columnFilters?: ColumnFiltersState; globalFilter?: string }): Row[] {
  // A column without an id goes by its accessorKey, as in tanstack.
  const idOf = (column: ColumnDef<Row>) => column.id ?? ("accessorKey" in column && column.accessorKey !== undefined ? String(column.accessorKey) : undefined);
  const byId = new Map(columns.flatMap((column) => {
    const id = idOf(column);
    return id ? [[id, column] as const] : [];
  }));
  const valueOf = new Map<string, (row: Row, index: number) => unknown>();
  for (const [id, column] of byId) {
    const accessor = accessorOf(column);
    if (accessor) valueOf.set(id, accessor);
  }
  let indexed = data.map((row, index) => ({ row, index }));

  // Column filters ("equals"); an empty value filters nothing, as tanstack's autoRemove does.
  for (const { id, value } of state.columnFilters ?? []) {
    const accessor = valueOf.get(id);
    if (!accessor || value === undefined || value === null || value === "") continue;
    indexed = indexed.filter(({ row, index }) => accessor(row, index) === value);
  }

  // The search: any searchable text or number column contains it, ignoring case.
  const search = (state.globalFilter ?? "").toLowerCase();
  if (search !== "") {
    const searched = [...byId].flatMap(([id, column]) => {
      const accessor = valueOf.get(id);
      return column.enableGlobalFilter === true && accessor ? [accessor] : [];
    });
    // As tanstack: a column whose first value is neither text nor a number is not searched.
    const first = data[0];
    const used = first === undefined ? [] : searched.filter((accessor) => searchable(accessor(first, 0)));
    indexed = indexed.filter(({ row, index }) =>
      used.some((accessor) => {
        const value = accessor(row, index);
        return searchable(value) && String(value).toLowerCase().includes(search);
      }),
    );
  }

  // Sorting, each column in turn, then the input order.
  const sorts = (state.sorting ?? []).flatMap(({ id, desc }) => {
    const column = byId.get(id);
    const accessor = valueOf.get(id);
    if (!column) return [];
    const given = column.sortingFn;
    if (typeof given === "function") return [{ desc, compare: (a: { row: Row }, b: { row: Row }) => (given as Compare<Row>)({ original: a.row }, { original: b.row }, id) }];
    if (!accessor) return [];
    return [{ desc, compare: (a: { row: Row; index: number }, b: { row: Row; index: number }) => compareBasic(accessor(a.row, a.index), accessor(b.row, b.index)) }];
  });
  if (sorts.length === 0) return indexed.map(({ row }) => row);
  return indexed
    .sort((a, b) => {
      for (const { desc, compare } of sorts) {
        const order = compare(a, b);
        if (order !== 0) return desc ? -order : order;
      }
      return a.index - b.index;
    })
    .map(({ row }) => row);
}

const NAME_TIE = "name-tie";

/**
 * The sort a URL asks for (?sort=…&dir=…): one of `columns`, else the first; ascending unless
 * dir=desc. `sorting` breaks ties by name in the same direction: give tableRows nameTie() too.
 */
export function urlSort<Id extends string>(params: URLSearchParams, columns: readonly { readonly id: Id }[]): { sort: Id; descending: boolean; sorting: SortingState } {
  const sort = columns.find((column) => column.id === params.get("sort"))?.id ?? columns[0].id;
  const descending = params.get("dir") === "desc";
  return { sort, descending, sorting: [{ id: sort, desc: descending }, { id: NAME_TIE, desc: descending }] };
}

/** The tie-breaking column for urlSort: by name, localeCompare (as people read a list). */
export function nameTie<Row extends { name: string }>(): ColumnDef<Row> {
  return { id: NAME_TIE, accessorFn: (row) => row.name, sortingFn: (a, b) => a.original.name.localeCompare(b.original.name) };
}
