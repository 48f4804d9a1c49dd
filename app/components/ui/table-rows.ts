// The rows a list page shows, filtered and sorted by @tanstack/react-table's row models from
// state read off the URL. Loaders call this, so the URL stays the source of truth: links are
// shareable and the pages work without JavaScript (SortHeader writes ?sort=…&dir=…).

import { createTable, getCoreRowModel, getFilteredRowModel, getSortedRowModel, type ColumnDef, type ColumnFiltersState, type SortingState } from "@tanstack/react-table";

export type { ColumnDef };

/**
 * `data` through the filter and sort row models. Columns compare with `<` unless they name
 * another sortingFn, and take part in the search (`globalFilter`, case-insensitive "contains")
 * only when they say `enableGlobalFilter: true`.
 */
export function tableRows<Row>(data: readonly Row[], columns: readonly ColumnDef<Row>[], state: { sorting?: SortingState; columnFilters?: ColumnFiltersState; globalFilter?: string }): Row[] {
  const table = createTable<Row>({
    data: [...data],
    columns: [...columns],
    defaultColumn: { sortingFn: "basic", enableGlobalFilter: false },
    getCoreRowModel: getCoreRowModel(),
    getFilteredRowModel: getFilteredRowModel(),
    getSortedRowModel: getSortedRowModel(),
    state: {},
    onStateChange: () => {},
    renderFallbackValue: null,
  });
  // Every feature's defaults, overridden by what the URL says.
  table.setOptions((options) => ({ ...options, state: { ...table.initialState, ...state } }));
  return table.getRowModel().rows.map((row) => row.original);
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
