import { data, Form, Link, useSearchParams } from "react-router";
import type { Route } from "./+types/exposure";
import { answerExposure, exposureQueryOf } from "#server/analysis/exposure.server";
import { requireDevice } from "#server/http/device-access.server";
import { AddressZoom } from "#app/components/analysis/address-map";
import { Count, Pager } from "#app/components/analysis/common";
import { WeekHourView } from "#app/components/analysis/week-hour";
import { OUTCOME_LABELS, OutcomeChip } from "#app/components/outcome";
import { OUTCOMES } from "#server/engine/vocabulary";
import { formatInstant, formatNumber, plural } from "#server/engine/format";
import { buttonClasses } from "#app/components/ui/button";
import { Card } from "#app/components/ui/card";
import { cx } from "#app/components/ui/cx";
import { EmptyState } from "#app/components/ui/empty-state";
import { NoInterfacesYet } from "#app/components/device/no-interfaces";
import { Table, Td, Th } from "#app/components/ui/table";

export const meta: Route.MetaFunction = ({ data: loaded }) => [{ title: `Exposure map · ${loaded?.deviceName ?? "Device"} · Sallyport` }];

export async function loader({ request, context }: Route.LoaderArgs) {
  const access = requireDevice(context);
  const query = exposureQueryOf(new URL(request.url));
  const base = { deviceName: access.device.name, devicePath: `/o/${access.organisation.slug}/devices/${access.device.id}`, timezone: access.effective.device.timezone, query };
  const answer = answerExposure(access.analysis.compiled, query);
  if (!answer.ok) return data({ ...base, answer: null, error: answer.errors.at }, { status: 400 });
  return { ...base, answer, error: null };
}

/** Index (day × 24 + hour, Monday first) of a device wall-clock time "YYYY-MM-DDTHH:MM:SS±hh:mm". */
function hourIndexOf(localTime: string): number | null {
  const match = /^(\d{4})-(\d{2})-(\d{2})T(\d{2})/.exec(localTime);
  if (!match) return null;
  const day = new Date(Date.UTC(Number(match[1]), Number(match[2]) - 1, Number(match[3]))).getUTCDay();
  return ((day + 6) % 7) * 24 + Number(match[4]);
}

const selectClass = "h-9 rounded-control border border-line-strong bg-surface px-2 text-sm";

export default function Exposure({ loaderData }: Route.ComponentProps) {
  const [searchParams] = useSearchParams();
  const { query, answer, error, timezone, devicePath } = loaderData;
  const filterParams = new URLSearchParams();
  for (const name of ["at", "interface", "service", "family", "outcome"] as const) if (query[name]) filterParams.set(name, query[name]);
  const focusLink = (key: string) => {
    const next = new URLSearchParams(searchParams);
    next.set("focus", key);
    next.delete("page");
    return `?${next.toString()}`;
  };
  const focus = answer?.focus ?? null;
  if (answer && answer.interfaces.length === 0) return <NoInterfacesYet page="An exposure map" />;
  return (
    <div className="space-y-6">
      <div>
        <h2 className="text-lg font-semibold">Exposure map</h2>
        <p className="mt-1 max-w-3xl text-sm text-ink-muted">
          For every interface × each of its addresses × catalogue service: how the whole source space (IPv4 or IPv6, the family of the address) splits by outcome at one instant — address counts and minimal CIDR lists.
        </p>
      </div>

      <Card className="p-4">
        <Form method="get" className="flex flex-wrap items-end gap-3" aria-label="Exposure map filters">
          <label className="text-sm">
            <span className="mb-1 block font-medium">Time</span>
            <input
              name="at"
              defaultValue={query.at}
              placeholder="now (e.g. 2025-03-04T10:00)"
              aria-invalid={error ? true : undefined}
              aria-describedby="exposure-at-hint"
              autoComplete="off"
              spellCheck={false}
              className={cx("h-9 w-60 rounded-control border bg-surface px-3 text-sm", error ? "border-danger" : "border-line-strong")}
            />
          </label>
          <label className="text-sm">
            <span className="mb-1 block font-medium">Interface</span>
            <select name="interface" defaultValue={query.interface} className={selectClass}>
              <option value="">All interfaces</option>
              {(answer?.interfaces ?? []).map((name) => (
                <option key={name}>{name}</option>
              ))}
            </select>
          </label>
          <label className="text-sm">
            <span className="mb-1 block font-medium">Service</span>
            <select name="service" defaultValue={query.service} className={selectClass}>
              <option value="">All services</option>
              {(answer?.services ?? []).map((name) => (
                <option key={name}>{name}</option>
              ))}
            </select>
          </label>
          <label className="text-sm">
            <span className="mb-1 block font-medium">Family</span>
            <select name="family" defaultValue={query.family} className={selectClass}>
              <option value="">IPv4 and IPv6</option>
              <option value="4">IPv4</option>
              <option value="6">IPv6</option>
            </select>
          </label>
          <label className="text-sm">
            <span className="mb-1 block font-medium">Outcome present</span>
            <select name="outcome" defaultValue={query.outcome} className={selectClass}>
              <option value="">Any outcome</option>
              {[...OUTCOMES].reverse().map((outcome) => (
                <option key={outcome} value={outcome}>
                  {OUTCOME_LABELS[outcome]}
                </option>
              ))}
            </select>
          </label>
          <button type="submit" className={buttonClasses("secondary", "sm") + " h-9"}>
            Apply
          </button>
          <p id="exposure-at-hint" className="basis-full text-xs text-ink-muted">
            Time is ISO 8601; without an offset it is read on the device clock ({timezone}); empty means now.
          </p>
          {error ? (
            <p role="alert" className="basis-full text-sm text-danger">
              {error}
            </p>
          ) : null}
        </Form>
      </Card>

      {answer ? (
        <>
          <div className="flex flex-wrap items-end justify-between gap-3">
            <p className="text-sm">
              At <strong className="tabular">{formatInstant(answer.at, timezone)}</strong>, which falls in the slice{" "}
              <strong>
                {answer.slice.start} – {answer.slice.end}
              </strong>{" "}
              ({answer.sliceCount === 1 ? "the only slice: exposure does not change over the week" : `one of ${formatNumber(answer.sliceCount)} slices of the week`}).
            </p>
            <a href={`${devicePath}/exposure.csv?${filterParams.toString()}`} className={buttonClasses("secondary", "sm")} download>
              Download CSV
            </a>
          </div>

          {answer.total === 0 ? (
            <EmptyState title="Nothing matches these filters">Clear a filter to see more of the exposure map.</EmptyState>
          ) : (
            <section aria-labelledby="entries-heading">
              <h3 id="entries-heading" className="mb-2 font-semibold">
                Addresses per outcome <span className="font-normal text-ink-muted">({plural(answer.total, { one: "entry", other: "entries" })})</span>
              </h3>
              <Table className="text-xs">
                <caption className="sr-only">Address counts per outcome for each interface, address and service; choose one to map it</caption>
                <thead>
                  <tr>
                    <Th className="px-3">Interface · address</Th>
                    <Th className="px-3">Service</Th>
                    {[...OUTCOMES].reverse().map((outcome) => (
                      <Th key={outcome} className="px-3 text-right normal-case">
                        {OUTCOME_LABELS[outcome]}
                      </Th>
                    ))}
                    <Th className="px-3">
                      <span className="sr-only">Map</span>
                    </Th>
                  </tr>
                </thead>
                <tbody>
                  {answer.entries.map((entry) => {
                    const focused = focus?.key === entry.key;
                    return (
                      <tr key={entry.key} className={focused ? "bg-harbour-soft" : undefined} aria-current={focused ? "true" : undefined}>
                        <Td className="px-3 py-2">
                          <span className="font-medium">{entry.interface}</span> <span className="font-mono text-ink-muted">{entry.to}</span>
                        </Td>
                        <Td className="px-3 py-2 font-mono">{entry.service}</Td>
                        {[...OUTCOMES.keys()].reverse().map((rank) => (
                          <Td key={rank} className={cx("px-3 py-2 text-right", entry.counts[rank] === "0" ? "text-ink-faint" : rank === entry.top && rank > 0 ? "font-semibold" : undefined)}>
                            <Count value={entry.counts[rank]} />
                          </Td>
                        ))}
                        <Td className="px-3 py-2 text-right">
                          {focused ? (
                            <span className="text-ink-muted">Shown below</span>
                          ) : (
                            <Link to={focusLink(entry.key)} preventScrollReset className="text-harbour underline-offset-4 hover:underline">
                              Map<span className="sr-only"> {entry.interface} {entry.to} {entry.service}</span>
                            </Link>
                          )}
                        </Td>
                      </tr>
                    );
                  })}
                </tbody>
              </Table>
              <Pager param="epage" page={answer.entryPage.page} pages={answer.entryPage.pages} search={searchParams} label="Entry pages" />
            </section>
          )}

          {focus ? (
            <section aria-labelledby="focus-heading" className="space-y-5">
              <div>
                <h3 id="focus-heading" className="font-semibold">
                  {focus.interface} <span className="font-mono">{focus.to}</span> · <span className="font-mono">{focus.service}</span>
                </h3>
                <p className="text-sm text-ink-muted">Most exposed entry under these filters unless you chose one above.</p>
              </div>

              <Card className="p-4 sm:p-5">
                <section aria-labelledby="address-view-heading">
                  <h4 id="address-view-heading" className="mb-1 text-sm font-semibold">
                    Where in the {focus.family === 4 ? "IPv4" : "IPv6"} space the outcome changes
                  </h4>
                  <p className="mb-3 text-xs text-ink-muted">Each cell is a block of source addresses. Striped cells hold more than one outcome: select one to zoom in to the block where its outcomes change.</p>
                  <AddressZoom view={focus.view} problem={focus.blockProblem} />
                </section>
              </Card>

              <Card className="p-4 sm:p-5">
                <section aria-labelledby="week-heading">
                <h4 id="week-heading" className="mb-2 text-sm font-semibold">
                  Over the week
                </h4>
                {focus.week ? (
                  <WeekHourView week={focus.week} current={hourIndexOf(answer.localTime)} timezone={timezone} />
                ) : (
                  <p className="text-sm text-ink-muted">No schedule changes anything on this device: exposure does not change over the week.</p>
                )}
                </section>
              </Card>

              <section aria-labelledby="cidr-heading">
                <h4 id="cidr-heading" className="mb-2 text-sm font-semibold">
                  CIDR lists{query.outcome ? ` — ${OUTCOME_LABELS[query.outcome]}` : ""} <span className="font-normal text-ink-muted">({plural(focus.cidrTotal, { one: "block", other: "blocks" })}, most exposed first)</span>
                </h4>
                <Table className="text-xs">
                  <caption className="sr-only">Minimal CIDR blocks of each outcome for the chosen entry</caption>
                  <thead>
                    <tr>
                      <Th className="w-16 px-3">#</Th>
                      <Th className="px-3">Outcome</Th>
                      <Th className="px-3">CIDR</Th>
                    </tr>
                  </thead>
                  <tbody>
                    {focus.cidrs.map((row, index) => (
                      <tr key={`${row.outcome}-${row.cidr}`}>
                        <Td className="tabular px-3 py-1.5 text-ink-faint">{focus.cidrPage.start + index + 1}</Td>
                        <Td className="px-3 py-1.5">
                          <OutcomeChip outcome={row.outcome} />
                        </Td>
                        <Td className="px-3 py-1.5 font-mono">{row.cidr}</Td>
                      </tr>
                    ))}
                  </tbody>
                </Table>
                <Pager param="page" page={focus.cidrPage.page} pages={focus.cidrPage.pages} search={searchParams} label="CIDR list pages" />
              </section>
            </section>
          ) : null}
          <p className="text-xs text-ink-muted">
            Counts below a million are exact; larger ones are rounded to three figures (“3.70 billion”), and IPv6-sized ones shown as a power of two or in scientific form; hover for the exact figure.
          </p>
        </>
      ) : null}
    </div>
  );
}
