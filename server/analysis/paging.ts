// Paging of long lists on the analysis pages, driven by a 1-based ?page= in the URL.

export const PAGE_SIZE = 50;

/** A 1-based page number from the URL, clamped to the pages there are. */
export function pageOf(value: string | null, total: number, size = PAGE_SIZE): { page: number; pages: number; start: number; end: number } {
  const pages = Math.max(1, Math.ceil(total / size));
  const asked = Number(value);
  const page = Number.isInteger(asked) && asked >= 1 ? Math.min(asked, pages) : 1;
  const start = (page - 1) * size;
  return { page, pages, start, end: Math.min(total, start + size) };
}
