import "@xyflow/react/dist/style.css";
import { useEffect, useRef, useState } from "react";
import { Form, Link, useFetcher } from "react-router";
import type { Route } from "./+types/analysis";
import { probeInputOf, probeQueryOf, ProbeQuerySchema } from "#server/analysis/probe";
import { isSourceBlock, trace, traceGroups } from "#server/engine/index";
import { inCatalogueOrder, namesByKind } from "#server/analysis/catalogue";
import { refusalOf, refusedPage } from "#server/http/refusals.server";
import { traceSubjectOf, type TraceSubjectNote } from "#server/http/trace-subject.server";
import { requireDevice } from "#server/http/device-access.server";
import { LayerCanvas, type CanvasModel } from "#app/components/analysis/layer-canvas";
import { useTraceStore, type ProbeFields, type TraceAnswer } from "#app/components/analysis/trace-store";
import { SourcesCell } from "#app/components/analysis/sources-cell";
import { OutcomeChip } from "#app/components/outcome";
import { isOutcome, LAYERS } from "#server/engine/vocabulary";
import { VerdictBadge } from "#app/components/training/layer-steps";
import { Button } from "#app/components/ui/button";
import { Card } from "#app/components/ui/card";
import { cx } from "#app/components/ui/cx";
import { NoInterfacesYet } from "#app/components/device/no-interfaces";
import { LAYER_TITLES, outcomeSentence } from "#app/utils/trace-words";
import { formatInstant, plural } from "#server/engine/format";
import type { TraceGroups } from "#server/engine/index";

export const meta: Route.MetaFunction = () => [{ title: "Trace a probe · Sallyport" }];

export async function loader({ request, context }: Route.LoaderArgs) {
  const access = requireDevice(context);
  const url = new URL(request.url);
  // The current revision, a stored one or a proposal's draft (read-only), as the URL says.
  const subject = await traceSubjectOf(access, url.searchParams).catch(refusedPage);
  const model = subject.model;
  const compiled = subject.compiled;
  const query = probeQueryOf(url.searchParams);
  let initial: { answer: TraceAnswer | null; error: string | null } = { answer: null, error: null };
  if (query.from) {
    const parsed = ProbeQuerySchema.safeParse(query);
    if (!parsed.success) initial = { answer: null, error: parsed.error.issues[0].message };
    else {
      try {
        const probe = probeInputOf(parsed.data);
        initial = { answer: isSourceBlock(probe.from) ? traceGroups(compiled, probe) : trace(compiled, probe), error: null };
      } catch (error) {
        initial = { answer: null, error: refusalOf(error).message };
      }
    }
  }
  const canvas: CanvasModel = {
    interfaces: model.interfaces.map((entry) => ({ name: entry.name, role: entry.role, addresses: entry.addresses, listeners: inCatalogueOrder(entry.listeners, compiled.catalogue) })),
    rules: model.inboundRules.map((rule, index) => ({
      id: rule.id,
      position: index + 1,
      action: rule.action,
      enabled: rule.enabled,
      interface: rule.interface,
      summary: `${rule.sources.join(", ")} → ${rule.destinations.join(", ")} · ${rule.services.join(", ")}`,
    })),
    defaultInbound: model.device.defaultInbound,
    unlistenedPort: model.device.unlistenedPort,
    accounts: model.accounts.map((account) => ({ name: account.name, loginSources: account.loginSources, secondFactor: account.secondFactor, enabled: account.enabled })),
  };
  return {
    canvas,
    services: namesByKind(compiled.catalogue),
    timezone: model.device.timezone,
    devicePath: `/o/${access.organisation.slug}/devices/${access.device.id}`,
    subject: { query: subject.query, modelPath: subject.modelPath, note: subject.note },
    query,
    initial,
    // A link opens the walkthrough at its first step, nothing revealed; a link that asks for the
    // whole trace (`reveal=all`, as "trace this witness" links do) opens with every verdict shown.
    revealAll: url.searchParams.get("reveal") === "all",
  };
}

function queryOf(fields: ProbeFields): string {
  return new URLSearchParams(Object.entries(fields).filter(([, value]) => value.trim() !== "")).toString();
}

function fieldsFrom(query: Record<string, string>, fallback: { interface: string; service: string }): ProbeFields {
  return {
    from: query.from ?? "",
    interface: query.interface ?? fallback.interface,
    service: query.service ?? fallback.service,
    to: query.to ?? "",
    at: query.at ?? "",
    account: query.account ?? "",
  };
}

export default function Analysis({ loaderData }: Route.ComponentProps) {
  if (loaderData.canvas.interfaces.length === 0) return <NoInterfacesYet page="A trace" />;
  return <TraceWorkspace loaderData={loaderData} />;
}

/** Above the probe, when a side of a proposal is traced: which one, read-only, and the ways back. */
function SubjectNote({ note, devicePath }: { note: TraceSubjectNote; devicePath: string }) {
  const linkClass = "font-medium text-harbour underline underline-offset-4";
  const proposal = (
    <Link to={note.proposalPath} className={linkClass}>
      “{note.title}”
    </Link>
  );
  const where =
    note.side === "base"
      ? { title: `Tracing the base of a proposal: r${note.baseRevision}`, body: <>the revision {proposal} was drafted on{note.baseRevision === note.current ? " (the current revision)" : ` (the device is at r${note.current} now)`}</> }
      : note.appliedRevision !== null
        ? { title: `Tracing what a proposal made: r${note.appliedRevision}`, body: <>the revision applying {proposal} made</> }
        : { title: "Tracing a draft — not live", body: <>the draft of {proposal} (version {note.draftVersion}, made on r{note.baseRevision}); nothing here changes it</> };
  return (
    <div role="note" className="rounded-card border-2 border-dashed border-brass bg-brass-soft p-4 text-sm" data-testid="trace-subject">
      <p className="font-semibold text-brass">{where.title}</p>
      <p className="mt-1">
        Probes here are traced on {where.body}. Or{" "}
        <Link to={`${devicePath}/analysis`} className={linkClass}>
          trace on the live device
        </Link>
        .
      </p>
    </div>
  );
}

function TraceWorkspace({ loaderData }: Pick<Route.ComponentProps, "loaderData">) {
  const { canvas, services, devicePath, timezone, subject } = loaderData;
  // The subject's query (a revision or a proposal's draft) rides along on every fetch and in the address.
  const withSubject = (query: string) => [subject.query, query].filter(Boolean).join("&");
  const fallback = { interface: canvas.interfaces.find((entry) => entry.role === "wan")?.name ?? canvas.interfaces[0]?.name ?? "", service: "https" };
  const { probe, trace: result, groups, group, error, step, setProbe, showResult, chooseGroup, setStep, reset } = useTraceStore();
  const fetcher = useFetcher<TraceAnswer | { error: string }>();
  // `fetcher` is a new object on every render; its `load` is stable, so the debounce effect can depend on it.
  const loadTrace = fetcher.load;
  const [mounted, setMounted] = useState(false);
  const lastQuery = useRef<string | null>(null);

  // The route loader seeds the store (and the server-rendered page) once per device; typing then
  // asks the trace API, and the URL follows without a navigation so the query stays linkable.
  useEffect(() => {
    const fields = fieldsFrom(loaderData.query, fallback);
    reset(fields, loaderData.initial.answer, loaderData.initial.error, loaderData.revealAll);
    lastQuery.current = queryOf(fields);
    // eslint-disable-next-line react-hooks/set-state-in-effect -- the first client render must match the server's HTML; only after it does the page switch to the store
    setMounted(true);
    // eslint-disable-next-line react-hooks/exhaustive-deps -- seed once per device and model traced: the loader's query and the fallback are new on every revalidation and must not overwrite what the user is typing
  }, [devicePath, subject.query]);

  useEffect(() => {
    if (!mounted) return;
    const query = queryOf(probe);
    if (query === lastQuery.current || !probe.from.trim()) return;
    const timer = setTimeout(() => {
      lastQuery.current = query;
      loadTrace(`${devicePath}/api/trace?${withSubject(query)}`);
      window.history.replaceState(window.history.state, "", `${window.location.pathname}?${withSubject(query)}`);
    }, 250);
    return () => clearTimeout(timer);
    // eslint-disable-next-line react-hooks/exhaustive-deps -- withSubject only reads subject.query, listed
  }, [probe, mounted, devicePath, loadTrace, subject.query]);

  useEffect(() => {
    if (!fetcher.data) return;
    if ("error" in fetcher.data) showResult(null, fetcher.data.error);
    else showResult(fetcher.data, null);
  }, [fetcher.data, showResult]);

  const initialAnswer = loaderData.initial.answer;
  const initialTrace = initialAnswer === null ? null : "groups" in initialAnswer ? (initialAnswer.groups[0]?.trace ?? null) : initialAnswer;
  const shown = mounted
    ? { probe, trace: result, groups, group, error, step }
    : { probe: fieldsFrom(loaderData.query, fallback), trace: initialTrace, groups: initialAnswer !== null && "groups" in initialAnswer ? initialAnswer : null, group: 0, error: loaderData.initial.error, step: loaderData.revealAll ? (initialTrace?.layers.length ?? 0) : 0 };
  const total = shown.trace?.layers.length ?? 0;
  const rulePosition = canvas.rules.find((rule) => rule.id === shown.trace?.ruleId)?.position;
  const input = "h-9 w-full rounded-control border border-line-strong bg-surface px-2 text-sm";

  return (
    <div className="space-y-5">
      {subject.note ? <SubjectNote note={subject.note} devicePath={devicePath} /> : null}
      <Card className="p-4">
        <Form method="get" className="grid gap-3 md:grid-cols-3 xl:grid-cols-6" aria-label="Probe" onSubmit={(event) => mounted && event.preventDefault()}>
          {[...new URLSearchParams(subject.query)].map(([name, value]) => (
            <input key={name} type="hidden" name={name} value={value} />
          ))}
          <label className="text-sm">
            <span className="mb-1 block font-medium">From (source)</span>
            <input name="from" className={cx(input, "font-mono")} placeholder="203.0.113.0/24" title="One address or a block of addresses (CIDR)" value={shown.probe.from} onChange={(event) => setProbe({ from: event.target.value })} aria-invalid={shown.error ? true : undefined} aria-describedby="probe-error" />
          </label>
          <label className="text-sm">
            <span className="mb-1 block font-medium">Interface</span>
            <select name="interface" className={input} value={shown.probe.interface} onChange={(event) => setProbe({ interface: event.target.value })}>
              {canvas.interfaces.map((entry) => (
                <option key={entry.name} value={entry.name}>
                  {entry.name} ({entry.role})
                </option>
              ))}
            </select>
          </label>
          <label className="text-sm">
            <span className="mb-1 block font-medium">Service</span>
            <input name="service" list="probe-services" className={cx(input, "font-mono")} value={shown.probe.service} onChange={(event) => setProbe({ service: event.target.value })} />
            <datalist id="probe-services">
              {services.map((name) => (
                <option key={name} value={name} />
              ))}
            </datalist>
          </label>
          <label className="text-sm">
            <span className="mb-1 block font-medium">To (optional)</span>
            <input name="to" className={cx(input, "font-mono")} placeholder="interface address" value={shown.probe.to} onChange={(event) => setProbe({ to: event.target.value })} />
          </label>
          <label className="text-sm">
            <span className="mb-1 block font-medium">At (optional)</span>
            <input name="at" className={cx(input, "font-mono")} placeholder="YYYY-MM-DDTHH:MM" value={shown.probe.at} onChange={(event) => setProbe({ at: event.target.value })} aria-describedby="probe-at-hint" />
            <span id="probe-at-hint" className="mt-1 block text-xs text-ink-muted">
              Empty: now. A time is read on the device's clock ({timezone}); end it with Z for UTC.
            </span>
          </label>
          <label className="text-sm">
            <span className="mb-1 block font-medium">Account (optional)</span>
            <select name="account" className={input} value={shown.probe.account} onChange={(event) => setProbe({ account: event.target.value })}>
              <option value="">any eligible</option>
              {canvas.accounts.map((account) => (
                <option key={account.name} value={account.name}>
                  {account.name}
                </option>
              ))}
            </select>
          </label>
          <noscript>
            <Button type="submit">Trace</Button>
          </noscript>
        </Form>
        <p id="probe-error" role="status" aria-live="polite" className={cx("mt-2 min-h-5 text-sm", shown.error ? "text-danger" : "text-ink-muted")}>
          {shown.error
            ? shown.error
            : fetcher.state === "loading"
              ? "Tracing…"
              : shown.groups
                ? `Traced at ${formatInstant(shown.groups.at, timezone)}: ${plural(shown.groups.groups.length, { one: "group", other: "groups" })} of sources with the same answer; the walkthrough follows the group chosen below.`
                : shown.trace
                  ? `Traced at ${formatInstant(shown.trace.at, timezone)}.`
                  : "Type a source address — or a CIDR block — to trace a probe through every layer."}
        </p>
      </Card>

      {shown.groups ? <GroupChooser groups={shown.groups} chosen={shown.group} onChoose={mounted ? chooseGroup : undefined} /> : null}

      {mounted ? <LayerCanvas model={canvas} trace={shown.trace} step={shown.step} modelPath={subject.modelPath} probe={shown.probe} /> : <div className="h-[34rem] rounded-card border border-line bg-surface" aria-hidden="true" />}

      <div className="flex flex-wrap items-center gap-2" role="group" aria-label="Walkthrough">
        <Button variant="secondary" size="sm" onClick={() => setStep(0)} disabled={!shown.trace || shown.step === 0}>
          Start walkthrough
        </Button>
        <Button variant="secondary" size="sm" onClick={() => setStep(Math.max(0, shown.step - 1))} disabled={!shown.trace || shown.step === 0}>
          Previous layer
        </Button>
        <Button size="sm" onClick={() => setStep(Math.min(total, shown.step + 1))} disabled={!shown.trace || shown.step >= total}>
          Next layer
        </Button>
        <Button variant="ghost" size="sm" onClick={() => setStep(total)} disabled={!shown.trace || shown.step >= total}>
          Show all
        </Button>
        <span className="text-sm text-ink-muted" aria-live="polite">
          {shown.trace ? `Layer ${Math.min(shown.step, total)} of ${LAYERS.length}` : ""}
        </span>
      </div>

      {shown.trace ? (
        <Card className="p-5">
          {/* All six layers at every step: which of them the probe reaches is only known once they are revealed. */}
          <ol className="space-y-2" aria-label="Layer verdicts">
            {LAYERS.map((layerName, index) => {
              const layer = shown.trace?.layers[index];
              const revealed = layer !== undefined && index < shown.step;
              const unreached = layer === undefined && shown.step >= total;
              return (
                <li key={layerName} className={cx("grid grid-cols-[9rem_auto_1fr] items-baseline gap-3 text-sm max-sm:grid-cols-[minmax(0,1fr)_auto] max-sm:gap-x-3 max-sm:gap-y-0.5 max-sm:[&>:last-child]:col-span-2")}>
                  <span className={cx("font-medium", !revealed && "text-ink-muted")}>{LAYER_TITLES[layerName]}</span>
                  {revealed && layer ? (
                    <VerdictBadge result={layer.result} outcome={layer.result === "stop" && shown.trace && isOutcome(shown.trace.outcome) ? shown.trace.outcome : null} />
                  ) : (
                    <span className="w-fit rounded bg-surface-sunken px-1.5 py-0.5 text-xs font-semibold text-ink-muted">{unreached ? "not reached" : "?"}</span>
                  )}
                  <span className="text-ink-muted">{revealed && layer ? layer.detail : unreached ? "The probe never gets here: an earlier layer decided." : "Predict this layer's verdict, then step on."}</span>
                </li>
              );
            })}
          </ol>
          {shown.step >= total && isOutcome(shown.trace.outcome) ? (
            <div className="mt-4 flex flex-wrap items-center gap-3 border-t border-line pt-4" aria-label="Outcome">
              <OutcomeChip outcome={shown.trace.outcome} />
              <p className="font-medium">{outcomeSentence(shown.trace, rulePosition)}</p>
            </div>
          ) : null}
        </Card>
      ) : null}
    </div>
  );
}

/** The groups of a CIDR source, most exposed first; choosing one walks its trace (its first address's) on the canvas. */
function GroupChooser({ groups, chosen, onChoose }: { groups: TraceGroups; chosen: number; onChoose?: (index: number) => void }) {
  return (
    <Card className="p-4">
      <h2 className="text-sm font-semibold">
        {groups.from}: {plural(groups.groups.length, { one: "group", other: "groups" })} of sources with the same answer
      </h2>
      <p className="mt-1 text-xs text-ink-muted">Every address of a group gets the same outcome, deciding layer, rule and eligible accounts; the walkthrough traces the group's first address.</p>
      <ul className="mt-3 grid gap-2 md:grid-cols-2" aria-label="Groups of sources">
        {groups.groups.map((entry, index) => (
          <li key={entry.example} className={cx("rounded-control border p-3", index === chosen ? "border-harbour bg-harbour-soft" : "border-line")}>
            <div className="flex flex-wrap items-center justify-between gap-2">
              <OutcomeChip outcome={entry.outcome} />
              {onChoose ? (
                <Button size="sm" variant={index === chosen ? "primary" : "secondary"} aria-pressed={index === chosen} onClick={() => onChoose(index)}>
                  {index === chosen ? "Walking through" : "Walk through"}
                </Button>
              ) : null}
            </div>
            <div className="mt-2">
              <SourcesCell sources={entry.sources} count={entry.count} />
            </div>
            <p className="mt-1 text-xs text-ink-muted">
              {LAYER_TITLES[entry.layer]}
              {entry.ruleId ? ` · rule ${entry.ruleId}` : " · no rule matched"}
              {entry.eligibleAccounts.length ? ` · ${entry.eligibleAccounts.join(", ")}` : ""}
            </p>
          </li>
        ))}
      </ul>
    </Card>
  );
}
