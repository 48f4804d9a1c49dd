/** The "Site" filter of the fleet and findings tables (a GET form field). */
export function SiteFilter({ sites, defaultValue, className }: { sites: ReadonlyArray<{ id: string; name: string }>; defaultValue: string; className: string }) {
  return (
    <label className="text-sm">
      <span className="mb-1 block font-medium">Site</span>
      <select name="site" defaultValue={defaultValue} className={className}>
        <option value="">All sites</option>
        {sites.map((site) => (
          <option key={site.id} value={site.id}>
            {site.name}
          </option>
        ))}
      </select>
    </label>
  );
}
