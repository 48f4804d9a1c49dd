import { Form, Link, useLocation, useSearchParams } from "react-router";
import type { Route } from "./+types/findings";
import { requireRole } from "#server/auth/guard.server";
import { hasAtLeastRole } from "#server/auth/roles";
import { fleetFindings } from "#server/services/findings.server";
import { CONFIRM_ROLE, DISMISS_ROLE } from "#server/services/dismissal-rules";
import { ElementLink } from "#app/components/device/element-link";
import { filterFindingRows, groupFindingRows, parseFindingsQuery, sortFindingRows, type FindingGroupBy } from "#app/utils/finding-keys";
import { countBySeverity } from "#server/engine/finding-keys";
import { SEVERITY_ORDER, SeverityBadge } from "#app/components/severity";
import { AwaitingDismissal, mayAnswer, tryItPath, type DismissalPowers } from "#app/components/findings/finding-card";
import { ButtonLink } from "#app/components/ui/button";
import { PageHeader } from "#app/components/ui/card";
import { cx } from "#app/components/ui/cx";
import { EmptyState } from "#app/components/ui/empty-state";
import { SortHeader } from "#app/components/ui/sort-header";
import { Table, Th } from "#app/components/ui/table";
import { SiteFilter } from "#app/components/ui/site-filter";
import { SimulationCaution } from "#app/components/analysis/common";
import { Time } from "#app/components/ui/time";
import { formatNumber, plural } from "#server/engine/format";
import { PageErrorBoundary } from "#app/components/error-panel";

export const meta: Route.MetaFunction = () => [{ title: "Findings · Sallyport" }];

// A refusal (a role too low, say) shows inside the organisation's frame.
export const ErrorBoundary = PageErrorBoundary;

export async function loader({ request, context }: Route.LoaderArgs) {
  const access = requireRole(context);
  const url = new URL(request.url);
  const query = parseFindingsQuery(url.searchParams);
  const powers: DismissalPowers = { userId: access.user.id, canDismiss: hasAtLeastRole(access.role, DISMISS_ROLE), canConfirm: hasAtLeastRole(access.role, CONFIRM_ROLE) };
  // Computed from each device's current revision on every visit (memoised per immutable
  // revision in the service); demo fleets are small. Large fleets: store per revision.
  const fleet = await fleetFindings(access.organisation.id);
  const devices = fleet.devices;
  const rows = fleet.rows.map((row) => ({ ...row, awaitsMyConfirmation: mayAnswer(row.dismissal, powers) }));
  // The counts follow the place filters (site, device, code) but not the severity threshold
  // (nor "awaiting my confirmation"), so they show what the threshold would hide.
  const inScope = filterFindingRows(rows, { ...query, minSeverity: "", showDismissed: true, awaitingMine: false });
  const shown = sortFindingRows(filterFindingRows(rows, query), query.sort, query.descending);
  const sites = [...new Map(devices.map((device) => [device.siteId, device.siteName])).entries()].map(([id, name]) => ({ id, name })).sort((a, b) => a.name.localeCompare(b.name));
  return {
    slug: access.organisation.slug,
    query,
    groups: groupFindingRows(shown, query.group),
    shownCount: shown.length,
    counts: countBySeverity(inScope.filter((row) => !row.dismissed)),
    dismissedCount: inScope.filter((row) => row.dismissed).length,
    awaitingCount: inScope.filter((row) => row.awaitingConfirmation).length,
    awaitingMineCount: inScope.filter((row) => row.awaitsMyConfirmation).length,
    powers,
    total: rows.length,
    deviceCount: devices.length,
    devices: devices.map((device) => ({ id: device.id, name: device.name })),
    sites,
    codes: [...new Set(rows.map((row) => row.code))].sort(),
    now: new Date().toISOString(),
  };
}

const selectClasses = "h-9 rounded-control border border-line-strong bg-surface px-2 text-sm";

export default function Findings({ loaderData }: Route.ComponentProps) {
  const { slug, query, groups, counts, devices, sites, codes } = loaderData;
  const [searchParams] = useSearchParams();
  // The page's own address (the browser's, not a data request's), so answering a dismissal comes back to the same view.
  const location = useLocation();
  const here = `${location.pathname}${location.search}`;
  const severityLink = (severity: string) => {
    const next = new URLSearchParams(searchParams);
    next.set("severity", severity);
    return `?${next.toString()}`;
  };
  const awaitingLink = () => {
    const next = new URLSearchParams(searchParams);
    next.set("awaiting", "mine");
    return `?${next.toString()}`;
  };
  const groupLink = (group: FindingGroupBy) => {
    const next = new URLSearchParams(searchParams);
    next.set("group", group);
    return `?${next.toString()}`;
  };
  return (
    <>
      <PageHeader
        title="Findings"
        description="Hardening checks on every device's current revision: what is wrong, which elements, why it matters and the published source. Dismissed findings are accepted risks; dismissing changes nothing on a device. A high or critical finding's dismissal counts only once a second person confirms it."
      />
      {loaderData.deviceCount === 0 ? (
        <EmptyState title="No devices yet" action={<ButtonLink to={`/o/${slug}/devices`}>Go to devices</ButtonLink>}>
          Findings appear here once devices are modelled. Nothing is shown until then rather than invented results.
        </EmptyState>
      ) : (
        <>
          <section aria-label="Active findings by severity" className="mb-4 flex flex-wrap items-center gap-2 text-sm">
            {SEVERITY_ORDER.map((severity) => (
              <Link
                key={severity}
                to={severityLink(severity)}
                preventScrollReset
                aria-label={`${formatNumber(counts[severity])} active ${severity}; show ${severity} and above`}
                className={cx("inline-flex items-center gap-2 rounded-control border bg-surface px-2.5 py-1 shadow-card hover:border-line-strong", query.minSeverity === severity ? "border-harbour" : "border-line")}
              >
                <SeverityBadge severity={severity} />
                <span className="font-semibold tabular">{formatNumber(counts[severity])}</span>
              </Link>
            ))}
            <span className="inline-flex items-center gap-2 rounded-control border border-dashed border-line px-2.5 py-1 text-ink-muted">
              dismissed <span className="font-semibold tabular">{formatNumber(loaderData.dismissedCount)}</span>
            </span>
            {loaderData.awaitingCount > 0 ? (
              <span className="inline-flex items-center gap-2 rounded-control border border-dashed border-brass/60 px-2.5 py-1 text-ink-muted" data-testid="awaiting-count">
                dismissals awaiting confirmation <span className="font-semibold tabular">{formatNumber(loaderData.awaitingCount)}</span>
              </span>
            ) : null}
            {loaderData.powers.canConfirm && loaderData.awaitingMineCount > 0 && !query.awaitingMine ? (
              <Link to={awaitingLink()} preventScrollReset className="font-medium text-harbour underline-offset-4 hover:underline" data-testid="awaiting-mine-link">
                {formatNumber(loaderData.awaitingMineCount)} awaiting your confirmation
              </Link>
            ) : null}
          </section>

          {/* Keyed by the query, so the fields show the URL's filters after a link (a severity chip, "awaiting your confirmation") changed them. */}
          <Form key={searchParams.toString()} method="get" role="search" className="mb-4 flex flex-wrap items-end gap-3">
            <input type="hidden" name="sort" value={query.sort} />
            <input type="hidden" name="dir" value={query.descending ? "desc" : "asc"} />
            <input type="hidden" name="group" value={query.group} />
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
            {loaderData.powers.canConfirm ? (
              <label className="flex h-9 items-center gap-2 text-sm">
                <input type="checkbox" name="awaiting" value="mine" defaultChecked={query.awaitingMine} className="size-4 accent-harbour" />
                Awaiting my confirmation
              </label>
            ) : null}
            <button type="submit" className="h-9 rounded-control border border-line-strong bg-surface px-3 text-sm font-medium hover:bg-surface-sunken">
              Apply
            </button>
            <Link to="?" className="h-9 content-center text-sm text-ink-muted underline-offset-4 hover:underline">
              Clear
            </Link>
            <span className="ml-auto text-sm text-ink-muted" aria-live="polite">
              {formatNumber(loaderData.shownCount)} of {plural(loaderData.total, { one: "finding", other: "findings" })}
            </span>
          </Form>

          <nav aria-label="Group findings" className="mb-3 flex flex-wrap items-center gap-1 text-sm">
            <span className="mr-1 text-ink-muted">Group by</span>
            {(
              [
                ["code", "Check"],
                ["device", "Device"],
                ["none", "No grouping"],
              ] as const
            ).map(([group, label]) => (
              <Link
                key={group}
                to={groupLink(group)}
                preventScrollReset
                aria-current={query.group === group ? "true" : undefined}
                className={cx("rounded-control border px-2.5 py-1", query.group === group ? "border-harbour bg-harbour-soft font-medium text-harbour-strong" : "border-line bg-surface hover:border-line-strong")}
              >
                {label}
              </Link>
            ))}
          </nav>

          {loaderData.shownCount === 0 ? (
            <EmptyState title={query.awaitingMine ? "Nothing awaits your confirmation" : "No findings match"}>
              {query.awaitingMine
                ? "No dismissal asked for by someone else waits for a second person among the findings these filters show."
                : loaderData.total === 0
                  ? "The hardening checks found nothing on any device's current revision."
                  : "Loosen the filters, or show dismissed findings."}
            </EmptyState>
          ) : (
            <FindingsTable slug={slug} groups={groups} query={query} powers={loaderData.powers} here={here} />
          )}
          <div className="mt-8">
            <SimulationCaution />
          </div>
        </>
      )}
    </>
  );
}

type Loaded = Route.ComponentProps["loaderData"];

/**
 * One line per finding, under a header per check or device: severity, title (the detail, the
 * published source, the witness and any dismissal fold out beneath it), where, the affected
 * elements, a "Try it" link that replays the witness on the trace page, and the state.
 */
function FindingsTable({ slug, groups, query, powers, here }: { slug: string; groups: Loaded["groups"]; query: Loaded["query"]; powers: DismissalPowers; here: string }) {
  const showDevice = query.group !== "device";
  const showCode = query.group !== "code";
  const columns = 4 + Number(showDevice) + Number(showCode);
  return (
    // Below the sm breakpoint each finding is a short stacked block instead of a wide row.
    <Table className="text-sm max-sm:block">
      <caption className="sr-only">
        Findings on every device's current revision{query.group === "none" ? "" : `, grouped by ${query.group === "code" ? "check" : "device"}`}; sortable by severity, device and check
      </caption>
      <thead className="max-sm:hidden">
        <tr className="max-sm:flex max-sm:flex-wrap">
          <SortHeader column="severity" label="Severity" sort={query.sort} descending={query.descending} />
          <Th>Finding</Th>
          {showDevice ? <SortHeader column="device" label="Device" sort={query.sort} descending={query.descending} /> : null}
          {showCode ? <SortHeader column="code" label="Check" sort={query.sort} descending={query.descending} /> : null}
          <Th>Affected elements</Th>
          <Th>
            <span className="sr-only">Try the witness</span>
          </Th>
        </tr>
      </thead>
      {groups.map((group) => {
        const first = group.rows[0];
        const deviceCount = new Set(group.rows.map((row) => row.deviceId)).size;
        return (
          <tbody key={group.key || "all"} className="max-sm:block">
            {query.group === "none" ? null : (
              <tr className="bg-surface-sunken max-sm:block">
                <th colSpan={columns} scope="colgroup" className="border-b border-line px-4 py-1.5 text-left font-normal max-sm:block max-sm:px-3">
                  <span className="flex flex-wrap items-center gap-x-3 gap-y-1">
                    <SeverityBadge severity={group.worst} />
                    {query.group === "code" ? (
                      <code className="font-semibold">{group.key}</code>
                    ) : (
                      <Link to={`/o/${slug}/devices/${group.key}`} className="font-mono font-semibold text-harbour underline-offset-4 hover:underline">
                        {first.deviceName}
                      </Link>
                    )}
                    <span className="text-xs text-ink-muted">
                      {query.group === "code"
                        ? `${group.rows.length} ${group.rows.length === 1 ? "finding" : "findings"} on ${deviceCount} ${deviceCount === 1 ? "device" : "devices"}`
                        : `${first.siteName} · r${first.revision} · ${group.rows.length} ${group.rows.length === 1 ? "finding" : "findings"}`}
                      {group.active < group.rows.length ? ` (${group.rows.length - group.active} dismissed)` : ""}
                    </span>
                  </span>
                </th>
              </tr>
            )}
            {group.rows.map((row) => (
              <FindingRow key={`${row.deviceId} ${row.key}`} row={row} devicePath={`/o/${slug}/devices/${row.deviceId}`} showDevice={showDevice} showCode={showCode} powers={powers} here={here} />
            ))}
          </tbody>
        );
      })}
    </Table>
  );
}

function FindingRow({ row, devicePath, showDevice, showCode, powers, here }: { row: Loaded["groups"][number]["rows"][number]; devicePath: string; showDevice: boolean; showCode: boolean; powers: DismissalPowers; here: string }) {
  const cell = "border-b border-line px-3 py-1.5 align-top max-sm:border-0 max-sm:p-0";
  const witness = row.witness;
  return (
    <tr className={cx(row.dismissed && "bg-surface-sunken", "max-sm:flex max-sm:flex-wrap max-sm:items-baseline max-sm:gap-x-2 max-sm:gap-y-1 max-sm:border-b max-sm:border-line max-sm:px-3 max-sm:py-2")}>
      <td className={cx(cell, "w-0 pl-4 max-sm:w-auto max-sm:pl-0")}><SeverityBadge severity={row.severity} /></td>
      <td className={cx(cell, "min-w-56 max-sm:min-w-0 max-sm:flex-1")}>
        <details className="group">
          <summary className={cx("cursor-pointer marker:text-ink-faint", row.dismissed && "text-ink-muted")}>
            {row.title}
            {row.dismissed ? <span className="ml-2 rounded border border-dashed border-line-strong px-1 text-xs font-semibold text-ink-muted uppercase">Dismissed</span> : null}
          </summary>
          <div className="mt-1 space-y-1 pb-1 text-xs text-ink-muted">
            <p>{row.detail}</p>
            {witness ? (
              <p>
                Witness: {witness.probe.service} from <span className="font-mono">{witness.probe.from}</span> on {witness.probe.interface} — {witness.shows}
                {witness.proof ? ` ${witness.proof}` : ""}
              </p>
            ) : null}
            <p className="text-ink-faint">
              Source: {row.source} · check <code>{row.code}</code>
            </p>
            {row.dismissal && row.dismissed ? (
              <p>
                Dismissed by {row.dismissal.by || "unknown"} <Time at={row.dismissal.at} />
                {row.dismissal.confirmedBy ? `, confirmed by ${row.dismissal.confirmedBy}` : ""}: “{row.dismissal.reason}”
              </p>
            ) : null}
          </div>
        </details>
        {row.awaitingConfirmation ? <AwaitingDismissal finding={row} devicePath={devicePath} powers={powers} returnTo={here} compact /> : null}
      </td>
      {showDevice ? (
        <td className={cx(cell, "max-w-64 truncate whitespace-nowrap max-sm:basis-full")} title={`${row.deviceName} · ${row.siteName} · revision r${row.revision}`}>
          <Link to={devicePath} className="font-mono text-harbour underline-offset-4 hover:underline">
            {row.deviceName}
          </Link>
          <span className="text-xs text-ink-muted">
            {" "}
            · {row.siteName}
          </span>
        </td>
      ) : null}
      {showCode ? (
        <td className={cell}>
          <code className="text-xs whitespace-nowrap">{row.code}</code>
        </td>
      ) : null}
      <td className={cx(cell, "lg:whitespace-nowrap")}>
        <span className="flex flex-wrap gap-x-2 gap-y-0.5 lg:flex-nowrap">
          {row.elements.map((element) => (
            <ElementLink key={element} devicePath={devicePath} element={element} />
          ))}
        </span>
      </td>
      <td className={cx(cell, "pr-4 text-xs whitespace-nowrap max-sm:pr-0")}>
        {witness ? (
          <Link to={tryItPath(devicePath, witness.probe)} className="font-medium text-harbour underline-offset-4 hover:underline">
            Try it<span className="sr-only">: trace {witness.probe.service} from {witness.probe.from} on {witness.probe.interface} of {row.deviceName}</span>
          </Link>
        ) : null}
      </td>
    </tr>
  );
}
