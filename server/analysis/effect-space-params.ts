// The query parameters of the effect's address-space picture (server/analysis/effect-space.ts):
// the page's links write them, its loader and the effect's JSON route read them. Browser-safe.

export const SPACE_PARAMS = { interface: "space-interface", service: "space-service", family: "space-family", block: "space-block" } as const;

/** The address space asked for in a query (each value trimmed and bounded; the view falls back on anything unknown). */
export function spaceQueryOf(search: URLSearchParams): { interface?: string; service?: string; family?: string; block?: string } {
  const get = (name: string) => search.get(name)?.trim().slice(0, 100) || undefined;
  return { interface: get(SPACE_PARAMS.interface), service: get(SPACE_PARAMS.service), family: get(SPACE_PARAMS.family), block: get(SPACE_PARAMS.block) };
}
