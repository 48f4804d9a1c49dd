import { data, Form, useSearchParams } from "react-router";
import type { Route } from "./+types/reach";
import { answerReach, reachQueryOf, type ReachRow } from "#server/analysis/reach.server";
import { requireDevice } from "#server/http/device-access.server";
import { isLayer, LAYERS, outcomeRank } from "#server/engine/vocabulary";
import { reachSummary, worstByPlace } from "#app/utils/reach-words";
import { OutcomeOrderNote, ReachAnswerCells, ReachAnswerHead, ReachPlaceCells } from "#app/components/analysis/reach-cells";
import { formatInstant } from "#server/engine/format";
import { buttonClasses } from "#app/components/ui/button";
import { Card } from "#app/components/ui/card";
import { EmptyState } from "#app/components/ui/empty-state";
import { NoInterfacesYet } from "#app/components/device/no-interfaces";
import { TextField } from "#app/components/ui/field";
import { SortHeader } from "#app/components/ui/sort-header";
import { nameTie, tableRows, urlSort, type ColumnDef } from "#app/components/ui/table-rows";
import { Table, Th } from "#app/components/ui/table";

export const meta: Route.MetaFunction = ({ data: loaded }) => [{ title: `Reach${loaded?.query.from ? ` from ${loaded.query.from}` : ""} · ${loaded?.deviceName ?? "Device"} · Sallyport` }];

// Sortable columns (?sort=); the first is the engine's order: interfaces as in the model,
// services as in the catalogue. Outcome and layer ties keep that order.
const COLUMNS = [
  { id: "interface", accessorFn: (row) => row.interfaceIndex * 10_000 + row.serviceIndex },
  { id: "service", accessorFn: (row) => row.serviceIndex * 10_000 + row.interfaceIndex },
  { id: "outcome", accessorFn: (row) => outcomeRank(row.outcome) * 10_000 + row.interfaceIndex * 100 + row.serviceIndex },
  { id: "layer", accessorFn: (row) => (isLayer(row.layer) ? LAYERS.indexOf(row.layer) : -1) * 10_000 + row.interfaceIndex * 100 + row.serviceIndex },
  { id: "rule", accessorFn: (row) => row.ruleId ?? "" },
  { id: "accounts", accessorFn: (row) => row.eligibleAccounts.join(" ") },
] as const satisfies readonly ColumnDef<ReachRow>[];

export async function loader({ request, context }: Route.LoaderArgs) {
  const access = requireDevice(context);
  const url = new URL(request.url);
  const query = reachQueryOf(url);
  const { sort, descending, sorting } = urlSort(url.searchParams, COLUMNS);
  const noErrors: { from?: string; at?: string; interface?: string } = {};
  const interfaces = access.effective.interfaces.map((entry) => ({ name: entry.name, role: entry.role }));
  const base = { deviceName: access.device.name, devicePath: `/o/${access.organisation.slug}/devices/${access.device.id}`, timezone: access.effective.device.timezone, interfaces, query, sort, descending };
  // No source yet: just the form (asking is not an error).
  if (!url.searchParams.has("from") && !url.searchParams.has("at")) return { ...base, answer: null, errors: noErrors };
  const answer = answerReach(access.analysis.compiled, query);
  if (!answer.ok) return data({ ...base, answer: null, errors: answer.errors }, { status: 400 });
  return { ...base, answer: { ...answer, rows: tableRows(answer.rows, [...COLUMNS, nameTie<ReachRow>()], { sorting }) }, errors: noErrors };
}

export default function Reach({ loaderData }: Route.ComponentProps) {
  const [searchParams] = useSearchParams();
  const { query, errors, answer, sort, descending, timezone, devicePath, interfaces } = loaderData;
  const csvParams = new URLSearchParams({ from: answer?.from ?? query.from });
  if (query.at) csvParams.set("at", query.at);
  for (const name of query.interfaces) csvParams.append("interface", name);
  // The headline counts what the table shows: each interface × service once, by the most any asked source gets there.
  const cells = answer ? worstByPlace(answer.rows, (row) => `${row.interface} ${row.service}`) : [];
  return (
    <div className="space-y-6">
      <div>
        <h2 className="text-lg font-semibold">Reach</h2>
        <p className="mt-1 max-w-3xl text-sm text-ink-muted">
          Everything one source can reach on this device: every interface × catalogue service, the outcome, and the layer that decided it. A CIDR block is answered per group of its sources that get the same answer.
        </p>
      </div>
      <Card className="p-5">
        <Form key={searchParams.toString()} method="get" className="grid items-start gap-4 md:grid-cols-[minmax(0,16rem)_minmax(0,20rem)_auto]" aria-label="Reach query">
          {searchParams.get("sort") ? <input type="hidden" name="sort" value={sort} /> : null}
          {searchParams.get("dir") ? <input type="hidden" name="dir" value={descending ? "desc" : "asc"} /> : null}
          <TextField label="Source address or CIDR block" name="from" defaultValue={query.from} placeholder="203.0.113.50 or 203.0.113.0/24" error={errors.from} autoComplete="off" spellCheck={false} required />
          <TextField
            label="Time (optional)"
            name="at"
            defaultValue={query.at}
            placeholder="2026-12-02T10:00"
            error={errors.at}
            autoComplete="off"
            spellCheck={false}
            hint={
              <>
                ISO 8601. Without an offset it is read on the device clock ({timezone}); with <code>Z</code> or an offset it is that instant. Empty: now.
              </>
            }
          />
          {interfaces.length > 1 ? (
            <fieldset className="md:col-span-3" aria-describedby={errors.interface ? "reach-interface-error" : undefined}>
              <legend className="text-sm font-medium">Interfaces</legend>
              <p className="text-xs text-ink-muted">None ticked: every interface.</p>
              <div className="mt-1.5 flex flex-wrap gap-x-4 gap-y-1.5">
                {interfaces.map((entry) => (
                  <label key={entry.name} className="flex items-center gap-1.5 text-sm">
                    <input type="checkbox" name="interface" value={entry.name} defaultChecked={query.interfaces.includes(entry.name)} className="size-4" />
                    <span className="font-mono">{entry.name}</span> <span className="text-ink-muted">({entry.role})</span>
                  </label>
                ))}
              </div>
              {errors.interface ? (
                <p id="reach-interface-error" role="alert" className="mt-1 text-sm text-danger">
                  {errors.interface}
                </p>
              ) : null}
            </fieldset>
          ) : null}
          {/* After the interface filter in reading order (a phone shows it last); beside the fields on a wide screen. */}
          <div className="md:col-start-3 md:row-start-1 md:pt-7">
            <button type="submit" className={buttonClasses("primary")}>
              Show reach
            </button>
          </div>
        </Form>
      </Card>

      {answer ? (
        <section aria-labelledby="reach-results" className="space-y-3">
          <ReachAnswerHead
            id="reach-results"
            level="h3"
            from={answer.from}
            block={answer.block}
            count={answer.count}
            asked={`At ${formatInstant(answer.at, timezone)}${query.interfaces.length > 0 ? ` · on ${query.interfaces.join(", ")}` : ""}`}
            csvHref={`${devicePath}/reach.csv?${csvParams.toString()}`}
          />
          <p className="text-sm" aria-live="polite">
            {answer.block ? "Some of " : ""}
            <strong>{answer.from}</strong> {reachSummary(cells, { one: "service", other: "services" })}
            {answer.block ? " (each service counted by the most any of its addresses gets)" : ""}.
          </p>
          {answer.rows.length === 0 ? (
            <NoInterfacesYet page="Reach" />
          ) : (
            <Table>
              <caption className="sr-only">Outcome for each interface and service, sortable by column</caption>
              <thead>
                <tr>
                  <SortHeader column="interface" label="Interface" sort={sort} descending={descending} />
                  <SortHeader column="service" label="Service" sort={sort} descending={descending} />
                  {answer.block ? <Th>Sources</Th> : null}
                  <SortHeader column="outcome" label="Outcome" sort={sort} descending={descending} />
                  <SortHeader column="layer" label="Deciding layer" sort={sort} descending={descending} />
                  <SortHeader column="rule" label="Rule" sort={sort} descending={descending} />
                  <SortHeader column="accounts" label="Eligible accounts" sort={sort} descending={descending} />
                </tr>
              </thead>
              <tbody>
                {answer.rows.map((row) => (
                  <tr key={row.name}>
                    <ReachPlaceCells row={row} />
                    <ReachAnswerCells row={row} block={answer.block} />
                  </tr>
                ))}
              </tbody>
            </Table>
          )}
          <OutcomeOrderNote />
        </section>
      ) : Object.keys(errors).length ? null : (
        <EmptyState title="Ask about one source">Enter a source address to see what it can reach on every interface, and what it would see.</EmptyState>
      )}
    </div>
  );
}
