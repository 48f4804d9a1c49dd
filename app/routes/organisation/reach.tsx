import { data, Form, Link, useSearchParams } from "react-router";
import type { Route } from "./+types/reach";
import { requireRole } from "#server/auth/guard.server";
import { pageOf } from "#server/analysis/paging";
import { askFleetReach } from "#server/http/fleet-reach.server";
import type { FleetReachParams } from "#server/analysis/fleet-reach";
import { siteNames } from "#server/services/sites.server";
import { BUILTIN_SERVICES, INTERFACE_ROLES } from "#server/engine/vocabulary";
import { formatNumber, plural } from "#server/engine/format";
import { Pager, SimulationCaution } from "#app/components/analysis/common";
import { OutcomeOrderNote, ReachAnswerCells, ReachAnswerHead, ReachPlaceCells } from "#app/components/analysis/reach-cells";
import { buttonClasses } from "#app/components/ui/button";
import { Card, PageHeader } from "#app/components/ui/card";
import { EmptyState } from "#app/components/ui/empty-state";
import { TextField } from "#app/components/ui/field";
import { SiteFilter } from "#app/components/ui/site-filter";
import { Table, Td, Th } from "#app/components/ui/table";
import { PageErrorBoundary } from "#app/components/error-panel";
import { reachSummary, worstByPlace } from "#app/utils/reach-words";

export const meta: Route.MetaFunction = ({ data: loaded }) => [{ title: `Fleet reach${loaded?.params.from ? ` from ${loaded.params.from}` : ""} · Sallyport` }];

// A refusal (a role too low, say) shows inside the organisation's frame.
export const ErrorBoundary = PageErrorBoundary;

const ROWS_PER_PAGE = 50;

export async function loader({ request, context }: Route.LoaderArgs) {
  const access = requireRole(context);
  const url = new URL(request.url);
  const slug = access.organisation.slug;
  const sites = await siteNames(access.organisation.id);
  const base = { slug, sites, services: BUILTIN_SERVICES.map((service) => service.name) };
  // No source yet: just the form (asking is not an error).
  const none: FleetReachParams = { from: "", roles: [], services: [] };
  if (!url.searchParams.has("from")) return { ...base, params: none, errors: {}, answer: null };
  const asked = await askFleetReach(access.organisation.id, url.searchParams);
  if (!asked.ok) return data({ ...base, params: asked.params, errors: asked.errors, answer: null }, { status: asked.status });
  const { result } = asked;
  const { page, pages, start, end } = pageOf(url.searchParams.get("page"), result.rows.length, ROWS_PER_PAGE);
  // Each device counted once, by the most any asked source gets on any of its interfaces and services shown.
  const worst = worstByPlace(result.rows, (row) => row.deviceId);
  const answered = new Set(result.rows.filter((row) => row.outcome !== "silent").map((row) => row.deviceId)).size;
  return {
    ...base,
    params: asked.params,
    errors: {},
    answer: {
      from: result.from,
      count: result.count,
      block: result.from.includes("/"),
      at: result.at,
      devices: result.devices,
      answered,
      summary: reachSummary(worst, { one: "device", other: "devices" }),
      totalRows: result.rows.length,
      rows: result.rows.slice(start, end),
      page,
      pages,
    },
  };
}

const boxes = "flex flex-wrap gap-x-4 gap-y-1.5";

export default function FleetReach({ loaderData }: Route.ComponentProps) {
  const [searchParams] = useSearchParams();
  const { slug, sites, services, params, errors, answer } = loaderData;
  const errorOf = (field: string): string | undefined => (errors as Record<string, string | undefined>)[field];
  const customServices = params.services.filter((name) => !services.includes(name));
  const csvParams = new URLSearchParams(searchParams);
  csvParams.delete("page");
  return (
    <>
      <PageHeader
        title="Fleet reach"
        description="Which of your devices one source reaches, and how: every device at its current revision, each interface × service with the outcome and the layer that decided it, most exposed first. A CIDR block is answered per group of its sources that get the same answer."
      />
      <Card className="mb-6 p-5">
        {/* Keyed by the question, so fields typed into with defaultValue follow an in-app navigation to another one. */}
        <Form key={searchParams.toString()} method="get" className="space-y-4" aria-label="Fleet reach query">
          <div className="grid items-start gap-4 md:grid-cols-[minmax(0,18rem)_minmax(0,16rem)_minmax(0,14rem)]">
            <TextField label="Source address or CIDR block" name="from" defaultValue={params.from} placeholder="203.0.113.7 or 203.0.113.0/24" error={errorOf("from")} autoComplete="off" spellCheck={false} required />
            <TextField
              label="Time (optional)"
              name="at"
              defaultValue={params.at ?? ""}
              placeholder="2026-12-02T10:00"
              error={errorOf("at")}
              autoComplete="off"
              spellCheck={false}
              hint={
                <>
                  ISO 8601. Without an offset it is read on each device's own clock; with <code>Z</code> or an offset it is that instant. Empty: now.
                </>
              }
            />
            <SiteFilter sites={sites} defaultValue={params.site ?? ""} className="h-10 w-full rounded-control border border-line-strong bg-surface px-2 text-sm" />
          </div>
          <fieldset>
            <legend className="text-sm font-medium">Interface roles</legend>
            <p className="text-xs text-ink-muted">None ticked: every interface.</p>
            <div className={`mt-1.5 ${boxes}`}>
              {INTERFACE_ROLES.map((role) => (
                <label key={role} className="flex items-center gap-1.5 text-sm">
                  <input type="checkbox" name="role" value={role} defaultChecked={params.roles.includes(role)} className="size-4" />
                  {role}
                </label>
              ))}
            </div>
            {errorOf("roles") ? (
              <p role="alert" className="mt-1 text-sm text-danger">
                {errorOf("roles")}
              </p>
            ) : null}
          </fieldset>
          <fieldset>
            <legend className="text-sm font-medium">Services</legend>
            <p className="text-xs text-ink-muted">None ticked: every service of each device's catalogue.</p>
            <div className={`mt-1.5 ${boxes}`}>
              {services.map((name) => (
                <label key={name} className="flex items-center gap-1.5 text-sm">
                  <input type="checkbox" name="service" value={name} defaultChecked={params.services.includes(name)} className="size-4" />
                  <span className="font-mono">{name}</span>
                </label>
              ))}
            </div>
            <div className="mt-3 max-w-sm">
              <TextField label="Other services" name="service" defaultValue={customServices.join(", ")} placeholder="webconsole, tcp/8443" error={errorOf("services")} autoComplete="off" spellCheck={false} hint="A device's own service names, or tcp/PORT, udp/PORT; separate with commas." />
            </div>
          </fieldset>
          {errorOf("site") ? (
            <p role="alert" className="text-sm text-danger">
              {errorOf("site")}
            </p>
          ) : null}
          <button type="submit" className={buttonClasses("primary")}>
            Show fleet reach
          </button>
        </Form>
      </Card>

      {answer ? (
        <section aria-labelledby="fleet-reach-results" className="space-y-3">
          <ReachAnswerHead
            id="fleet-reach-results"
            level="h2"
            from={answer.from}
            block={answer.block}
            count={answer.count}
            asked={`${answer.at ? `At ${answer.at}` : "Now"} · ${plural(answer.devices, { one: "device", other: "devices" })} asked`}
            csvHref={`/o/${slug}/reach.csv?${csvParams.toString()}`}
          />
          <p className="text-sm" aria-live="polite">
            {answer.block ? "Some of " : ""}
            <strong>{answer.from}</strong> gets an answer from {formatNumber(answer.answered)} of {plural(answer.devices, { one: "device", other: "devices" })}. Each device counted once, by the most it gives: it {answer.summary}.
          </p>
          {answer.devices === 0 ? (
            <EmptyState title="No devices to ask">{params.site ? "This site has no devices yet." : "This organisation has no devices yet."}</EmptyState>
          ) : answer.totalRows === 0 ? (
            <EmptyState title="Nothing matches the filters">No device has an interface of the chosen roles with the chosen services. Tick fewer roles or services.</EmptyState>
          ) : (
            <>
              <p className="text-xs text-ink-muted">
                {plural(answer.totalRows, { one: "row", other: "rows" })}, most exposed first{answer.pages > 1 ? `; page ${answer.page} of ${answer.pages}` : ""}.
              </p>
              <Table>
                <caption className="sr-only">Outcome for each device, interface and service, most exposed first</caption>
                <thead>
                  <tr>
                    <Th>Device</Th>
                    <Th>Interface</Th>
                    <Th>Service</Th>
                    {answer.block ? <Th>Sources</Th> : null}
                    <Th>Outcome</Th>
                    <Th>Deciding layer</Th>
                    <Th>Rule</Th>
                    <Th>Eligible accounts</Th>
                  </tr>
                </thead>
                <tbody>
                  {answer.rows.map((row) => (
                    <tr key={`${row.deviceId} ${row.interface} ${row.service} ${row.sources[0] ?? ""}`}>
                      <Td>
                        <Link to={`/o/${slug}/devices/${row.deviceId}/reach?${new URLSearchParams({ from: answer.from, ...(answer.at ? { at: answer.at } : {}), interface: row.interface }).toString()}`} className="font-medium whitespace-nowrap text-harbour underline-offset-4 hover:underline">
                          {row.device}
                        </Link>
                        <span className="block text-xs text-ink-muted">
                          {row.site} · r{row.revision}
                        </span>
                      </Td>
                      <ReachPlaceCells row={row} role={row.role} />
                      <ReachAnswerCells row={row} block={answer.block} />
                    </tr>
                  ))}
                </tbody>
              </Table>
              <Pager param="page" page={answer.page} pages={answer.pages} search={searchParams} label="Fleet reach pages" />
            </>
          )}
          <OutcomeOrderNote />
          <SimulationCaution />
        </section>
      ) : Object.keys(errors).length ? null : (
        <EmptyState title="Ask about one source">Enter an address or a CIDR block to see which of your devices it reaches, on which interfaces and services, and what it would see. Typing an address in the search box at the top brings you here.</EmptyState>
      )}
    </>
  );
}
