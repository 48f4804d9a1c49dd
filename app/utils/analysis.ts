// Presentation helpers for the reach and exposure map pages: safe download names. Counts and
// times are formatted by the one formatting module (server/engine/format.ts); the computation
// behind the pages (grids, counts, paging) lives in server/analysis/; nothing under server/
// imports this file.

/** A safe download name: letters, digits, dot, dash and underscore only. */
export function downloadName(...parts: string[]): string {
  return parts.join("-").replace(/[^A-Za-z0-9._-]/g, "_");
}
