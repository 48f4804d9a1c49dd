import { Link, useSearchParams } from "react-router";
import { Th } from "./table";

/** A column header that sorts the table through the URL (?sort=…&dir=…), so the view is linkable. */
export function SortHeader<Column extends string>({ column, label, sort, descending }: { column: Column; label: string; sort: Column; descending: boolean }) {
  const [searchParams] = useSearchParams();
  const next = new URLSearchParams(searchParams);
  next.set("sort", column);
  next.set("dir", sort === column && !descending ? "desc" : "asc");
  // A new order starts at its first page.
  next.delete("page");
  const active = sort === column;
  return (
    <Th aria-sort={active ? (descending ? "descending" : "ascending") : "none"}>
      <Link to={`?${next.toString()}`} className="inline-flex items-center gap-1 hover:text-ink" preventScrollReset>
        {label}
        <span aria-hidden="true">{active ? (descending ? "▾" : "▴") : ""}</span>
      </Link>
    </Th>
  );
}
