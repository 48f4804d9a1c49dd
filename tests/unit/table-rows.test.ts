// The list pages' sorting and searching (devices, sites, reach): the URL's ?sort=, ?dir=, ?q=
// and filters run through @tanstack/react-table's row models in the loader.

import { describe, expect, test } from "vitest";
import { nameTie, tableRows, urlSort, type ColumnDef } from "#app/components/ui/table-rows";

type Site = { name: string; customer: string; location: string; devices: number };
const sites: Site[] = [
  { name: "Quay south", customer: "Harbour Trust", location: "Pier 9", devices: 10 },
  { name: "Annex", customer: "Zephyr Works", location: "Mill Lane", devices: 9 },
  { name: "Quay north", customer: "Harbour Trust", location: "Pier 1", devices: 100 },
];
const COLUMNS = [
  { id: "name", accessorFn: (site) => site.name.toLowerCase(), enableGlobalFilter: true },
  { id: "customer", accessorFn: (site) => site.customer.toLowerCase(), enableGlobalFilter: true },
  { id: "devices", accessorKey: "devices" },
] as const satisfies readonly ColumnDef<Site>[];
const ALL = [...COLUMNS, { id: "location", accessorKey: "location", enableGlobalFilter: true }, nameTie<Site>()];

const names = (rows: Site[]) => rows.map((site) => site.name);
const sorted = (query: string) => names(tableRows(sites, ALL, { sorting: urlSort(new URLSearchParams(query), COLUMNS).sorting }));

describe("Sorting through the URL", () => {
  test("The URL names a column and a direction; anything else sorts by the first column, ascending", () => {
    expect(urlSort(new URLSearchParams("sort=devices&dir=desc"), COLUMNS)).toMatchObject({ sort: "devices", descending: true });
    expect(urlSort(new URLSearchParams("sort=colour&dir=up"), COLUMNS)).toMatchObject({ sort: "name", descending: false });
    expect(sorted("")).toEqual(["Annex", "Quay north", "Quay south"]);
    expect(sorted("sort=colour")).toEqual(["Annex", "Quay north", "Quay south"]);
  });

  test("Ties fall back to the name, in the same direction as the chosen column", () => {
    expect(sorted("sort=customer")).toEqual(["Quay north", "Quay south", "Annex"]);
    expect(sorted("sort=customer&dir=desc")).toEqual(["Annex", "Quay south", "Quay north"]);
  });

  test("Numbers sort as numbers, not as text", () => {
    expect(sorted("sort=devices")).toEqual(["Annex", "Quay south", "Quay north"]);
    expect(sorted("sort=devices&dir=desc")).toEqual(["Quay north", "Quay south", "Annex"]);
  });
});

describe("Searching and filtering", () => {
  test("The search matches any searchable column, ignoring case, and only those", () => {
    expect(names(tableRows(sites, ALL, { globalFilter: "PIER" }))).toEqual(["Quay south", "Quay north"]);
    expect(names(tableRows(sites, ALL, { globalFilter: "zephyr" }))).toEqual(["Annex"]);
    expect(names(tableRows(sites, ALL, { globalFilter: "100" }))).toEqual([]); // the device count is not searched
    expect(names(tableRows(sites, ALL, { globalFilter: "" }))).toEqual(["Quay south", "Annex", "Quay north"]);
  });

  test("A column filter keeps the rows whose value equals it, together with the search", () => {
    const columns = [...ALL, { id: "customerName", accessorKey: "customer", filterFn: "equals" } as const satisfies ColumnDef<Site>];
    const harbour = [{ id: "customerName", value: "Harbour Trust" }];
    expect(names(tableRows(sites, columns, { columnFilters: harbour }))).toEqual(["Quay south", "Quay north"]);
    expect(names(tableRows(sites, columns, { columnFilters: harbour, globalFilter: "pier 1" }))).toEqual(["Quay north"]);
  });

  test("Rows come back as the same objects and the input is left as it was", () => {
    const before = [...sites];
    const rows = tableRows(sites, ALL, { sorting: [{ id: "devices", desc: false }] });
    expect(rows[0]).toBe(sites[1]);
    expect(sites).toEqual(before);
  });
});
