import { Form, Link, useSearchParams } from "react-router";
import type { Route } from "./+types/findings";
import { requireRole } from "#server/auth/guard.server";
import { fleetFindings } from "#server/services/findings.server";
import { ElementLink } from "#app/components/device/element-link";
import { filterFindingRows, parseFindingsQuery, sortFindingRows } from "#app/utils/finding-keys";
import { countBySeverity } from "#server/engine/finding-keys";
import { SEVERITY_ORDER, SeverityBadge } from "#app/components/severity";
import { ButtonLink } from "#app/components/ui/button";
import { Card, PageHeader } from "#app/components/ui/card";
import { cx } from "#app/components/ui/cx";
import { EmptyState } from "#app/components/ui/empty-state";
import { SortHeader } from "#app/components/ui/sort-header";
import { Table, Td, Th } from "#app/components/ui/table";
import { SiteFilter } from "#app/components/ui/site-filter";
import { PageErrorBoundary } from "#app/components/error-panel";

export const meta: Route.MetaFunction = () => [{ title: "Findings · Sallyport" }];

// A refusal (a role too low, say) shows inside the organisation's frame.
export const ErrorBoundary = PageErrorBoundary;

export async function loader({ request, context }: Route.LoaderArgs) {
  const access = requireRole(context);
  const query = parseFindingsQuery(new URL(request.url).searchParams);
  // Computed from each device's current revision on every visit (memoised per immutable
  // revision in the service); demo fleets are small. Large fleets: store per revision.
  const { devices, rows } = await fleetFindings(access.organisation.id);
  // The counts follow the place filters (site, device, code) but not the severity threshold,
  // so they show what the threshold would hide.
  const inScope = filterFindingRows(rows, { ...query, minSeverity: "", showDismissed: true });
  const shown = sortFindingRows(filterFindingRows(rows, query), query.sort, query.descending);
  const sites = [...new Map(devices.map((device) => [device.siteId, device.siteName])).entries()].map(([id, name]) => ({ id, name })).sort((a, b) => a.name.localeCompare(b.name));
  return {
    slug: access.organisation.slug,
    query,
    rows: shown,
    counts: countBySeverity(inScope.filter((row) => !row.dismissed)),
    dismissedCount: inScope.filter((row) => row.dismissed).length,
    total: rows.length,
    deviceCount: devices.length,
    devices: devices.map((device) => ({ id: device.id, name: device.name })),
    sites,
    codes: [...new Set(rows.map((row) => row.code))].sort(),
  };
}

const selectClasses = "h-9 rounded-control border border-line-strong bg-surface px-2 text-sm";

export default function Findings({ loaderData }: Route.ComponentProps) {
  const { slug, query, rows, counts, devices, sites, codes } = loaderData;
  const [searchParams] = useSearchParams();
  const severityLink = (severity: string) => {
    const next = new URLSearchParams(searchParams);
    next.set("severity", severity);
    return `?${next.toString()}`;
  };
  return (
    <>
      <PageHeader
        title="Findings"
        description="Hardening checks on every device's current revision: what is wrong, which elements, why it matters and the published source. Dismissed findings are accepted risks; dismissing changes nothing on a device."
      />
      {loaderData.deviceCount === 0 ? (
        <EmptyState title="No devices yet" action={<ButtonLink to={`/o/${slug}/devices`}>Go to devices</ButtonLink>}>
          Findings appear here once devices are modelled. Nothing is shown until then rather than invented results.
        </EmptyState>
      ) : (
        <>
          <section aria-label="Active findings by severity" className="mb-6 grid grid-cols-2 gap-3 sm:grid-cols-3 lg:grid-cols-6">
            {SEVERITY_ORDER.map((severity) => (
              <Link
                key={severity}
                to={severityLink(severity)}
                preventScrollReset
                aria-label={`${counts[severity]} active ${severity}; show ${severity} and above`}
                className={cx("rounded-card border bg-surface p-3 shadow-card hover:border-line-strong", query.minSeverity === severity ? "border-harbour" : "border-line")}
              >
                <SeverityBadge severity={severity} />
                <span className="mt-2 block text-2xl font-semibold tabular">{counts[severity]}</span>
                <span className="text-xs text-ink-muted">active</span>
              </Link>
            ))}
            <Card className="p-3">
              <span className="inline-flex rounded px-1.5 py-0.5 text-xs font-semibold tracking-wide text-ink-muted uppercase">dismissed</span>
              <span className="mt-2 block text-2xl font-semibold text-ink-muted tabular">{loaderData.dismissedCount}</span>
              <span className="text-xs text-ink-muted">accepted risks</span>
            </Card>
          </section>

          <Form method="get" role="search" className="mb-4 flex flex-wrap items-end gap-3">
            <input type="hidden" name="sort" value={query.sort} />
            <input type="hidden" name="dir" value={query.descending ? "desc" : "asc"} />
            <label className="text-sm">
              <span className="mb-1 block font-medium">Severity at least</span>
              <select name="severity" defaultValue={query.minSeverity} className={selectClasses}>
                <option value="">Any</option>
                {SEVERITY_ORDER.map((severity) => (
                  <option key={severity} value={severity}>
                    {severity}
                  </option>
                ))}
              </select>
            </label>
            <label className="text-sm">
              <span className="mb-1 block font-medium">Check</span>
              <select name="code" defaultValue={query.code} className={selectClasses}>
                <option value="">All checks</option>
                {codes.map((code) => (
                  <option key={code} value={code}>
                    {code}
                  </option>
                ))}
              </select>
            </label>
            <SiteFilter sites={sites} defaultValue={query.site} className={selectClasses} />
            <label className="text-sm">
              <span className="mb-1 block font-medium">Device</span>
              <select name="device" defaultValue={query.device} className={selectClasses}>
                <option value="">All devices</option>
                {devices.map((device) => (
                  <option key={device.id} value={device.id}>
                    {device.name}
                  </option>
                ))}
              </select>
            </label>
            <label className="flex h-9 items-center gap-2 text-sm">
              <input type="checkbox" name="dismissed" value="show" defaultChecked={query.showDismissed} className="size-4 accent-harbour" />
              Show dismissed
            </label>
            <button type="submit" className="h-9 rounded-control border border-line-strong bg-surface px-3 text-sm font-medium hover:bg-surface-sunken">
              Apply
            </button>
            <Link to="?" className="h-9 content-center text-sm text-ink-muted underline-offset-4 hover:underline">
              Clear
            </Link>
            <span className="ml-auto text-sm text-ink-muted" aria-live="polite">
              {rows.length} of {loaderData.total} findings
            </span>
          </Form>

          {rows.length === 0 ? (
            <EmptyState title="No findings match">
              {loaderData.total === 0 ? "The hardening checks found nothing on any device's current revision. The simulation models the configuration, not the device: confirm on the device." : "Loosen the filters, or show dismissed findings."}
            </EmptyState>
          ) : (
            <Table>
              <caption className="sr-only">Findings on every device's current revision, sortable by severity, device and check</caption>
              <thead>
                <tr>
                  <SortHeader column="severity" label="Severity" sort={query.sort} descending={query.descending} />
                  <Th>Finding</Th>
                  <SortHeader column="device" label="Device" sort={query.sort} descending={query.descending} />
                  <Th>Affected elements</Th>
                  <SortHeader column="code" label="Check" sort={query.sort} descending={query.descending} />
                  <Th>State</Th>
                </tr>
              </thead>
              <tbody>
                {rows.map((row) => {
                  const devicePath = `/o/${slug}/devices/${row.deviceId}`;
                  return (
                    <tr key={`${row.deviceId} ${row.key}`} className={row.dismissed ? "bg-surface-sunken" : undefined}>
                      <Td className="align-top">
                        <SeverityBadge severity={row.severity} />
                      </Td>
                      <Td className="max-w-lg min-w-64 align-top">
                        <span className={cx("font-medium", row.dismissed && "text-ink-muted")}>{row.title}</span>
                        <p className="mt-1 text-xs text-ink-muted">{row.detail}</p>
                        <p className="mt-1 text-xs text-ink-faint">Source: {row.source}</p>
                      </Td>
                      <Td className="max-w-48 align-top">
                        <Link to={devicePath} className="font-mono text-sm whitespace-nowrap text-harbour underline-offset-4 hover:underline">
                          {row.deviceName}
                        </Link>
                        <span className="block text-xs text-ink-muted">
                          {row.siteName} · r{row.revision}
                        </span>
                      </Td>
                      <Td className="align-top">
                        <span className="flex flex-col gap-1 whitespace-nowrap">
                          {row.elements.map((element) => (
                            <ElementLink key={element} devicePath={devicePath} element={element} />
                          ))}
                        </span>
                      </Td>
                      <Td className="align-top">
                        <code className="text-xs whitespace-nowrap">{row.code}</code>
                      </Td>
                      <Td className="max-w-56 min-w-36 align-top text-xs">
                        {row.dismissal ? (
                          <>
                            <span className="font-semibold text-ink-muted uppercase">Dismissed</span>
                            <span className="mt-1 block text-ink-muted">“{row.dismissal.reason}”</span>
                            <span className="mt-1 block text-ink-faint">
                              {row.dismissal.by} · {row.dismissal.at.slice(0, 10)}
                            </span>
                          </>
                        ) : (
                          <span className="text-ink">Active</span>
                        )}
                      </Td>
                    </tr>
                  );
                })}
              </tbody>
            </Table>
          )}
        </>
      )}
    </>
  );
}
