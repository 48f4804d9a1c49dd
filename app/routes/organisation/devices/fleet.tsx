import { useEffect } from "react";
import { Form, Link, useRevalidator, useSearchParams } from "react-router";
import { SiteFilter } from "#app/components/ui/site-filter";
import { SortHeader } from "#app/components/ui/sort-header";
import { nameTie, tableRows, urlSort, type ColumnDef } from "#app/components/ui/table-rows";
import type { Route } from "./+types/fleet";
import { requireRole } from "#server/auth/guard.server";
import { hasAtLeastRole, PAGE_ROLES } from "#server/auth/roles";
import { fleetTable, type FleetTableRow } from "#server/services/device-list.server";
import { AgreementRate } from "#app/components/field-checks";
import { OutcomeChip } from "#app/components/outcome";
import { isOutcome, outcomeRank } from "#server/engine/vocabulary";
import { SEVERITY_ORDER, SeverityCounts } from "#app/components/severity";
import { ButtonLink } from "#app/components/ui/button";
import { PageHeader } from "#app/components/ui/card";
import { EmptyState } from "#app/components/ui/empty-state";
import { Table, Td } from "#app/components/ui/table";
import { NavAnchor, useNavAnchorContext } from "#app/components/ui/nav-anchor";
import { Time } from "#app/components/ui/time";
import { formatNumber, plural } from "#server/engine/format";
import { looksLikeSource } from "#app/utils/search";
import { PageErrorBoundary } from "#app/components/error-panel";
import { Pager } from "#app/components/analysis/common";
import { pageOf } from "#server/analysis/paging";

export const meta: Route.MetaFunction = () => [{ title: "Devices · Sallyport" }];

// A refusal (a role too low, say) shows inside the organisation's frame.
export const ErrorBoundary = PageErrorBoundary;

function findingsWeight(counts: Record<string, number>): number {
  // Worst severity first, then how many: critical outweighs any number of lower ones.
  return SEVERITY_ORDER.reduce((total, severity, index) => total + (counts[severity] ?? 0) * 1000 ** (SEVERITY_ORDER.length - index), 0);
}

// Sortable columns, in the order of ?sort= values; name and site are searched by ?q=.
const COLUMNS = [
  { id: "name", accessorFn: (device) => device.name.toLowerCase(), enableGlobalFilter: true },
  { id: "site", accessorFn: (device) => device.siteName.toLowerCase(), enableGlobalFilter: true },
  { id: "findings", accessorFn: (device) => findingsWeight(device.findingsBySeverity) },
  { id: "exposure", accessorFn: (device) => (isOutcome(device.worstOutsideOutcome) ? outcomeRank(device.worstOutsideOutcome) : -1) },
  { id: "updated", accessorKey: "updatedAt" },
  { id: "proposals", accessorKey: "openProposals" },
  // By agreement rate; a device with no field check (or none that could be checked) sorts below every rate.
  { id: "field-check", accessorFn: (device) => device.fieldCheck?.counts.agreementRate ?? -1 },
] as const satisfies readonly ColumnDef<FleetRow>[];
const SITE_FILTER = { id: "siteId", accessorKey: "siteId", filterFn: "equals" } as const satisfies ColumnDef<FleetRow>;

type FleetRow = FleetTableRow;

export async function loader({ request, context }: Route.LoaderArgs) {
  const access = requireRole(context);
  const url = new URL(request.url);
  const { sort, descending, sorting } = urlSort(url.searchParams, COLUMNS);
  // Counts leave out dismissed findings (accepted risks), as the device overview does.
  // Kept per organisation under its fleet stamp, read with the session (docs/decisions/026).
  const { rows: devices, sites } = await fleetTable(access.organisation, { reuse: request.method === "GET" });
  const matching = tableRows(devices, [...COLUMNS, SITE_FILTER, nameTie<FleetRow>()], {
    globalFilter: (url.searchParams.get("q") ?? "").trim().slice(0, 100),
    columnFilters: url.searchParams.get("site") ? [{ id: "siteId", value: url.searchParams.get("site") }] : [],
    sorting,
  });
  // Sorted and searched over the whole fleet, then one page of rows sent: a fleet of hundreds
  // renders (and hydrates) 50 rows, not all of them.
  const { page, pages, start, end } = pageOf(url.searchParams.get("page"), matching.length);
  const q = (url.searchParams.get("q") ?? "").trim().slice(0, 100);
  return { devices: matching.slice(start, end), matching: matching.length, first: start + 1, page, pages, total: devices.length, analysing: devices.filter((device) => device.analysing).length, reachFrom: looksLikeSource(q) ? q : null, sites, sort, descending, canAdd: hasAtLeastRole(access.role, PAGE_ROLES.newDevice), canImport: hasAtLeastRole(access.role, PAGE_ROLES.importModel), slug: access.organisation.slug, now: new Date().toISOString() };
}

export default function Fleet({ loaderData }: Route.ComponentProps) {
  const [searchParams] = useSearchParams();
  const { devices, sites, sort, descending, canAdd, canImport, slug, analysing } = loaderData;
  // While a large device's background analysis runs, look again every few seconds and show its figures once stored.
  const revalidator = useRevalidator();
  // A page holds up to 50 rows of links: plain anchors with one navigate function, not a Link each (decision 026).
  const anchors = useNavAnchorContext();
  useEffect(() => {
    if (analysing === 0) return;
    const timer = setInterval(() => {
      if (revalidator.state === "idle") void revalidator.revalidate();
    }, 3_000);
    return () => clearInterval(timer);
  }, [analysing, revalidator]);
  return (
    <>
      <PageHeader
        title="Devices"
        description="Each device's management plane: who can reach it, and what they would see. Figures are from each device's current revision."
        actions={
          <>
            {loaderData.total > 0 ? (
              <ButtonLink to={`/o/${slug}/reach`} variant="secondary">
                Fleet reach
              </ButtonLink>
            ) : null}
            {canAdd || canImport ? (
            <>
              {canImport ? (
                <ButtonLink to={`/o/${slug}/devices/import`} variant="secondary">
                  Import model
                </ButtonLink>
              ) : null}
              {canAdd ? <ButtonLink to={`/o/${slug}/devices/new`}>New device</ButtonLink> : null}
            </>
            ) : null}
          </>
        }
      />
      {loaderData.total === 0 ? (
        <EmptyState
          title="No devices yet"
          action={
            canAdd || canImport ? (
              <div className="flex flex-wrap justify-center gap-2">
                {canAdd ? <ButtonLink to={`/o/${slug}/devices/new`}>Add the first device</ButtonLink> : null}
                {canImport ? (
                  <ButtonLink to={`/o/${slug}/devices/import`} variant="secondary">
                    Import a model document
                  </ButtonLink>
                ) : null}
              </div>
            ) : undefined
          }
        >
          {canAdd ? "Describe a device by hand — its site, interfaces, accounts and inbound rules — or import a model document exported earlier." : "Engineers, admins and owners add devices; they appear here as soon as one is saved."}
        </EmptyState>
      ) : (
        <>
          <Form method="get" role="search" className="mb-4 flex flex-wrap items-end gap-3">
            <input type="hidden" name="sort" value={sort} />
            <input type="hidden" name="dir" value={descending ? "desc" : "asc"} />
            <label className="text-sm">
              <span className="mb-1 block font-medium">Search</span>
              <input name="q" defaultValue={searchParams.get("q") ?? ""} placeholder="Device or site" className="h-9 w-64 max-w-full rounded-control border border-line-strong bg-surface px-3 text-sm" />
            </label>
            <SiteFilter sites={sites} defaultValue={searchParams.get("site") ?? ""} className="h-9 rounded-control border border-line-strong bg-surface px-2 text-sm" />
            <button type="submit" className="h-9 rounded-control border border-line-strong bg-surface px-3 text-sm font-medium hover:bg-surface-sunken">
              Apply
            </button>
            <span className="text-sm text-ink-muted" aria-live="polite">
              {formatNumber(loaderData.matching)} of {plural(loaderData.total, { one: "device", other: "devices" })}
              {loaderData.pages > 1 ? `; ${formatNumber(loaderData.first)}–${formatNumber(loaderData.first + devices.length - 1)} shown` : ""}
            </span>
          </Form>
          {loaderData.reachFrom ? (
            <p className="mb-3 text-sm" role="status">
              Looking for what <code>{loaderData.reachFrom}</code> reaches?{" "}
              <Link to={`/o/${slug}/reach?${new URLSearchParams({ from: loaderData.reachFrom }).toString()}`} className="font-medium text-harbour underline-offset-4 hover:underline">
                Ask fleet reach
              </Link>
              .
            </p>
          ) : null}
          <Table>
            <caption className="sr-only">Devices, sortable by column</caption>
            <thead>
              <tr>
                <SortHeader column="name" label="Device" sort={sort} descending={descending} />
                <SortHeader column="site" label="Site" sort={sort} descending={descending} />
                <SortHeader column="findings" label="Findings" sort={sort} descending={descending} />
                <SortHeader column="exposure" label="Worst on wan" sort={sort} descending={descending} />
                <SortHeader column="updated" label="Revision" sort={sort} descending={descending} />
                <SortHeader column="proposals" label="Open proposals" sort={sort} descending={descending} />
                <SortHeader column="field-check" label="Field check" sort={sort} descending={descending} />
              </tr>
            </thead>
            <tbody>
              {devices.map((device) => (
                <tr key={device.id}>
                  {/* One line where the table has room (names often hold hyphens); on a phone they wrap. */}
                  <Td className="font-medium max-sm:min-w-36! lg:whitespace-nowrap">
                    <NavAnchor to={`/o/${slug}/devices/${device.id}`} context={anchors} className="text-harbour underline-offset-4 hover:underline">
                      {device.name}
                    </NavAnchor>
                  </Td>
                  <Td className="text-ink-muted">{device.siteName}</Td>
                  {device.analysing ? (
                    <Td colSpan={2}>
                      <span className="text-xs text-ink-muted" role="status">
                        {`Analysing r${device.revision}… its figures appear here once stored.`}
                      </span>
                    </Td>
                  ) : (
                    <>
                      <Td>
                        <SeverityCounts counts={device.findingsBySeverity} />
                      </Td>
                      <Td>{isOutcome(device.worstOutsideOutcome) ? <OutcomeChip outcome={device.worstOutsideOutcome} /> : <span className="text-xs text-ink-faint">no wan interface</span>}</Td>
                    </>
                  )}
                  <Td className="tabular text-ink-muted">
                    r{device.revision} · <Time at={device.updatedAt} now={loaderData.now} />
                  </Td>
                  <Td className="tabular">
                    {device.openProposals > 0 ? (
                      <NavAnchor to={`/o/${slug}/devices/${device.id}/proposals`} context={anchors} className="text-harbour underline-offset-4 hover:underline" label={`${plural(device.openProposals, { one: "open proposal", other: "open proposals" })} for ${device.name}`}>
                        {formatNumber(device.openProposals)}
                      </NavAnchor>
                    ) : (
                      <span className="text-ink-faint">none</span>
                    )}
                  </Td>
                  <Td>
                    {device.fieldCheck ? (
                      <NavAnchor to={`/o/${slug}/devices/${device.id}/field-checks/${device.fieldCheck.id}`} context={anchors} className="underline-offset-4 hover:underline" label={`Last field check of ${device.name}`}>
                        <AgreementRate counts={device.fieldCheck.counts} className="text-xs" />
                        <span className="block text-xs text-ink-muted">
                          <Time at={device.fieldCheck.createdAt} now={loaderData.now} />
                        </span>
                      </NavAnchor>
                    ) : (
                      <span className="text-xs text-ink-faint">none yet</span>
                    )}
                  </Td>
                </tr>
              ))}
            </tbody>
          </Table>
          <Pager param="page" page={loaderData.page} pages={loaderData.pages} search={searchParams} label="Device pages" />
        </>
      )}
    </>
  );
}
