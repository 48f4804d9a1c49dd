import { Form, Link, redirect, useActionData, useNavigation } from "react-router";
import type { Route } from "./+types/expectations";
import { serializeFlash } from "#server/auth/flash.server";
import { hasAtLeastRole } from "#server/auth/roles";
import { BUILTIN_SERVICES, checkExpectations, expectationWords, OUTCOMES } from "#server/engine/index";
import type { Expectation, ExpectationWitness } from "#server/engine/index";
import { formatNumber, plural } from "#server/engine/format";
import { OUTCOME_LABELS } from "#server/engine/vocabulary";
import { Refusal } from "#server/errors";
import { actorOf } from "#server/http/actor.server";
import { requireDevice } from "#server/http/device-access.server";
import { expectationInputOf, fieldOfPath } from "#server/http/expectation-form";
import { formValues, readForm, unknownIntent } from "#server/http/form.server";
import { refusedForm } from "#server/http/refusals.server";
import { clientAddressOf } from "#server/http/request-context.server";
import { addExpectation, deleteExpectation, editExpectation, importExpectations, listExpectations, moveExpectation, type ImportMode } from "#server/services/expectations.server";
import { TextAreaField } from "#app/components/device/editor-kit";
import { Badge, Card } from "#app/components/ui/card";
import { Button } from "#app/components/ui/button";
import { EmptyState } from "#app/components/ui/empty-state";
import { FormError, SelectField, TextField } from "#app/components/ui/field";
import { Time } from "#app/components/ui/time";
import { EXPECTATION_STATUS } from "#app/components/proposals/expectation-status";
import { witnessTracePath } from "#app/utils/trace-links";

export const meta: Route.MetaFunction = () => [{ title: "Expectations · Sallyport" }];

/** Expectation files are small; a larger upload is refused before it is read. */
const MAX_FILE_BYTES = 256 * 1024;

export async function loader({ context }: Route.LoaderArgs) {
  const access = requireDevice(context);
  const stored = await listExpectations(access.organisation.id, access.device.id);
  const results = checkExpectations(
    access.analysis.compiled,
    stored.map((item) => item.expectation),
  );
  const model = access.effective;
  return {
    devicePath: `/o/${access.organisation.slug}/devices/${access.device.id}`,
    revision: access.revision.number,
    timezone: model.device.timezone,
    canEdit: hasAtLeastRole(access.role, "engineer"),
    interfaces: model.interfaces.map((entry) => entry.name),
    services: [...BUILTIN_SERVICES.map((service) => service.name), ...model.services.map((service) => service.name)],
    items: stored.map((item, index) => ({ ...item, words: expectationWords(item.expectation), result: results[index] })),
  };
}

type Values = Record<string, string>;

/** The file or pasted text of an import, or why there is none. */
async function importText(form: FormData): Promise<{ text: string } | { error: string }> {
  const upload = form.get("file");
  if (upload !== null && typeof upload !== "string" && !(upload.size === 0 && upload.name === "")) {
    if (upload.size > MAX_FILE_BYTES) return { error: `The file is ${Math.ceil(upload.size / 1024)} KiB; expectation files may be at most 256 KiB.` };
    return { text: await upload.text() };
  }
  const pasted = form.get("documentText");
  if (typeof pasted === "string" && pasted.trim() !== "") return pasted.length > MAX_FILE_BYTES ? { error: "The text is larger than 256 KiB." } : { text: pasted };
  return { error: "Choose an expectations file (.json) or paste its text." };
}

export async function action({ request, context }: Route.ActionArgs) {
  const access = requireDevice(context, "engineer");
  const form = await readForm(request);
  const values: Values = formValues(form);
  const intent = values.intent;
  const organisationId = access.organisation.id;
  const deviceId = access.device.id;
  const actor = actorOf(access, clientAddressOf(context));
  const page = `/o/${access.organisation.slug}/devices/${deviceId}/expectations`;
  const done = async (message: string, anchor = "") => redirect(`${page}${anchor}`, { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message }) } });
  try {
    switch (intent) {
      case "add": {
        const added = await addExpectation(organisationId, deviceId, expectationInputOf(values), actor);
        return await done(`Added expectation “${added.expectation.id}”.`, `#expectation-${added.expectation.id}`);
      }
      case "edit": {
        const edited = await editExpectation(organisationId, deviceId, values.target ?? "", expectationInputOf(values), actor);
        return await done(`Saved expectation “${edited.expectation.id}”.`, `#expectation-${edited.expectation.id}`);
      }
      case "delete": {
        await deleteExpectation(organisationId, deviceId, values.target ?? "", actor);
        return await done(`Deleted expectation “${values.target}”.`);
      }
      case "move": {
        await moveExpectation(organisationId, deviceId, values.target ?? "", Number(values.position), actor);
        return await done(`Moved expectation “${values.target}” to position ${values.position}.`, `#expectation-${values.target}`);
      }
      case "import": {
        const mode: ImportMode = values.mode === "replace" ? "replace" : "append";
        const read = await importText(form);
        if ("error" in read) return refusedForm(new Refusal(read.error, 400, { field: "file" }), values);
        let parsed: unknown;
        try {
          parsed = JSON.parse(read.text);
        } catch (error) {
          return refusedForm(new Refusal(`This is not JSON: ${error instanceof Error ? error.message : "unreadable"}.`, 400, { field: "file" }), values);
        }
        const imported = await importExpectations(organisationId, deviceId, parsed, mode, actor);
        return await done(`Imported ${plural(imported.count, { one: "expectation", other: "expectations" })}; the device now has ${imported.total}.`);
      }
      default:
        return unknownIntent(intent);
    }
  } catch (error) {
    return refusedForm(error, values);
  }
}

type Item = Route.ComponentProps["loaderData"]["items"][number];

/** The trace page's address for a witness: the same query the trace form writes. */
function tryItPath(devicePath: string, witness: ExpectationWitness): string {
  return witnessTracePath(devicePath, witness);
}

const STATUS = EXPECTATION_STATUS;

export default function Expectations({ loaderData }: Route.ComponentProps) {
  const { items, revision, canEdit, devicePath } = loaderData;
  const failing = items.filter((item) => item.result.status === "fails").length;
  const unknown = items.filter((item) => item.result.status === "unknown").length;
  return (
    <div className="space-y-6">
      <div className="flex flex-wrap items-end justify-between gap-3">
        <div>
          <h2 className="text-lg font-semibold">Expectations</h2>
          <p className="mt-1 max-w-3xl text-sm text-ink-muted">
            What must always hold on this device: a probe and the outcome it must get, or a bound on the most any set of sources may get on an interface and service. Checked exactly on every address and slice of the week, on revision r{revision}, and on every proposed change.
          </p>
        </div>
        <a href={`${devicePath}/expectations.json`} className="text-sm font-medium text-harbour underline underline-offset-4" download>
          Export (JSON)
        </a>
      </div>
      {items.length === 0 ? (
        <EmptyState title="No expectations yet">
          {canEdit ? "Add what must always hold — for example that the operator network logs in with a second factor, or that no non-private source gets more than No answer on wan ssh." : "An engineer of this organisation can add what must always hold on this device."}
        </EmptyState>
      ) : (
        <>
          <p className="text-sm" role="status">
            {plural(items.length, { one: "expectation", other: "expectations" })} on r{revision}:{" "}
            <strong className={failing > 0 ? "text-danger" : "text-success"}>{failing > 0 ? plural(failing, { one: "fails", other: "fail" }) : "all that can be checked hold"}</strong>
            {unknown > 0 ? `, ${formatNumber(unknown)} cannot be checked` : ""}.
          </p>
          <ol className="space-y-3">
            {items.map((item, index) => (
              <ExpectationCard key={item.expectation.id} item={item} position={index + 1} count={items.length} devicePath={devicePath} canEdit={canEdit} interfaces={loaderData.interfaces} services={loaderData.services} timezone={loaderData.timezone} />
            ))}
          </ol>
        </>
      )}
      {/* Keyed by the list, so the forms start empty again once what they added is in it. */}
      {canEdit ? <EditorPanels key={items.map((item) => item.expectation.id).join(" ")} interfaces={loaderData.interfaces} services={loaderData.services} /> : null}
    </div>
  );
}

/** The action's refusal when it belongs to this form: the same intent and target. */
function useRefusal(intent: string, target = "") {
  const data = useActionData<typeof action>();
  if (!data || data.ok !== false || data.values.intent !== intent || (data.values.target ?? "") !== target) return null;
  const byField: Record<string, string> = {};
  for (const issue of data.issues) byField[fieldOfPath(issue.path)] ??= issue.message;
  for (const [field, message] of Object.entries(data.errors)) byField[field] ??= message;
  return { form: data.errors.form, field: (name: string) => byField[name], values: data.values, issues: data.issues };
}

function ExpectationCard({ item, position, count, devicePath, canEdit, interfaces, services, timezone }: { item: Item; position: number; count: number; devicePath: string; canEdit: boolean; interfaces: string[]; services: string[]; timezone: string }) {
  const { expectation, result } = item;
  const status = STATUS[result.status];
  const refusal = useRefusal("edit", expectation.id);
  return (
    <li id={`expectation-${expectation.id}`}>
      <Card className="p-4">
        <div className="flex flex-wrap items-center gap-2">
          <span className="tabular text-sm text-ink-faint">{position}.</span>
          <code className="font-mono text-sm font-semibold">{expectation.id}</code>
          <Badge tone={status.tone}>{status.label}</Badge>
          <span className="text-xs text-ink-faint">{expectation.kind === "probe" ? "probe" : "bound"}</span>
        </div>
        <p className="mt-2 font-medium break-words">{item.words}</p>
        {expectation.note ? <p className="mt-1 text-sm text-ink-muted">{expectation.note}</p> : null}
        <p className={`mt-2 text-sm ${result.status === "fails" ? "text-danger" : "text-ink-muted"}`}>{result.words}</p>
        {result.witness ? (
          <p className="mt-1 text-sm">
            <Link to={tryItPath(devicePath, result.witness)} className="font-medium text-harbour underline-offset-4 hover:underline">
              Try it: trace {result.witness.service} from {result.witness.from} on {result.witness.interface}
            </Link>
          </p>
        ) : null}
        <p className="mt-2 text-xs text-ink-faint">
          Added by {item.author} <Time at={item.createdAt} timeZone={timezone} />
          {item.updatedAt !== item.createdAt ? (
            <>
              {" "}
              · changed by {item.updatedBy} <Time at={item.updatedAt} timeZone={timezone} />
            </>
          ) : null}
        </p>
        {canEdit ? (
          <div className="mt-3 flex flex-wrap items-center gap-2">
            <MoveButton id={expectation.id} to={position - 1} label="Move up" disabled={position === 1} />
            <MoveButton id={expectation.id} to={position + 1} label="Move down" disabled={position === count} />
            <Form method="post">
              <input type="hidden" name="intent" value="delete" />
              <input type="hidden" name="target" value={expectation.id} />
              <Button type="submit" size="sm" variant="ghost-danger" aria-label={`Delete expectation ${expectation.id}`}>
                Delete
              </Button>
            </Form>
            <details className="basis-full" open={refusal !== null}>
              <summary className="cursor-pointer text-sm font-medium text-harbour">Edit {expectation.id}</summary>
              <ExpectationForm intent="edit" target={expectation.id} kind={expectation.kind} initial={expectation} interfaces={interfaces} services={services} />
            </details>
          </div>
        ) : null}
      </Card>
    </li>
  );
}

function MoveButton({ id, to, label, disabled }: { id: string; to: number; label: string; disabled: boolean }) {
  return (
    <Form method="post">
      <input type="hidden" name="intent" value="move" />
      <input type="hidden" name="target" value={id} />
      <input type="hidden" name="position" value={to} />
      <Button type="submit" size="sm" variant="secondary" disabled={disabled} aria-label={`${label}: ${id}`}>
        {label}
      </Button>
    </Form>
  );
}

/** The add forms (one per kind) and the import form. */
function EditorPanels({ interfaces, services }: { interfaces: string[]; services: string[] }) {
  const importRefusal = useRefusal("import");
  const navigation = useNavigation();
  const busy = navigation.state !== "idle";
  return (
    <section aria-labelledby="add-heading" className="grid gap-4 lg:grid-cols-2">
      <h2 id="add-heading" className="sr-only">
        Add and import expectations
      </h2>
      <Card className="p-5">
        <h3 className="font-semibold">Add a probe</h3>
        <p className="mt-1 text-sm text-ink-muted">One source on one interface and service, and the outcome it must get — all week or at one time of the week.</p>
        <ExpectationForm intent="add" kind="probe" interfaces={interfaces} services={services} />
      </Card>
      <Card className="p-5">
        <h3 className="font-semibold">Add a bound</h3>
        <p className="mt-1 text-sm text-ink-muted">The most exposed outcome any of a set of sources may get on an interface and service, at any address and time.</p>
        <ExpectationForm intent="add" kind="bound" interfaces={interfaces} services={services} />
      </Card>
      <Card className="p-5 lg:col-span-2">
        <h3 className="font-semibold">Import</h3>
        <p className="mt-1 text-sm text-ink-muted">An expectations file as Export writes it (format sallyport-expectations, version 1).</p>
        <Form method="post" encType="multipart/form-data" className="mt-3 space-y-3" noValidate>
          <input type="hidden" name="intent" value="import" />
          <FormError message={importRefusal?.form} />
          {importRefusal && importRefusal.issues.length > 0 ? (
            <ul className="max-h-60 overflow-auto rounded-control border border-line bg-surface-sunken p-3 font-mono text-xs">
              {importRefusal.issues.map((issue, index) => (
                <li key={index}>
                  <span className="text-danger">{issue.path || "file"}</span>: {issue.message}
                </li>
              ))}
            </ul>
          ) : null}
          <div className="space-y-1.5">
            <label htmlFor="expectations-file" className="block text-sm font-medium">
              Expectations file
            </label>
            <input id="expectations-file" type="file" name="file" accept=".json,application/json" className="block w-full text-sm file:mr-3 file:rounded-control file:border file:border-line-strong file:bg-surface file:px-3 file:py-1.5" />
          </div>
          <details>
            <summary className="cursor-pointer text-sm text-harbour">Or paste the file's text</summary>
            <div className="mt-2">
              <TextAreaField label="File text" name="documentText" rows={6} defaultValue={importRefusal?.values.documentText ?? ""} />
            </div>
          </details>
          <fieldset className="flex flex-wrap gap-4 text-sm">
            <legend className="mb-1 text-sm font-medium">The list there now</legend>
            <label className="inline-flex items-center gap-2">
              <input type="radio" name="mode" value="append" defaultChecked className="accent-[var(--color-harbour)]" /> Keep it; add the file's after it
            </label>
            <label className="inline-flex items-center gap-2">
              <input type="radio" name="mode" value="replace" className="accent-[var(--color-harbour)]" /> Replace it with the file's
            </label>
          </fieldset>
          <Button type="submit" variant="secondary" disabled={busy}>
            Import
          </Button>
        </Form>
      </Card>
    </section>
  );
}

/** The fields of one expectation, for adding (one kind) or editing. */
function ExpectationForm({ intent, target = "", kind, initial, interfaces, services }: { intent: "add" | "edit"; target?: string; kind: Expectation["kind"]; initial?: Expectation; interfaces: string[]; services: string[] }) {
  const refusal = useRefusal(intent, target);
  const mine = refusal !== null && (refusal.values.kind ?? "") === kind ? refusal : null;
  const value = (name: string, fallback = ""): string => mine?.values[name] ?? fallbackOf(initial, name) ?? fallback;
  const prefix = `${intent}-${target || "new"}-${kind}`;
  const listId = `${prefix}-services`;
  return (
    <Form method="post" className="mt-3 grid gap-3 sm:grid-cols-2" noValidate>
      <input type="hidden" name="intent" value={intent} />
      <input type="hidden" name="target" value={target} />
      <input type="hidden" name="kind" value={kind} />
      {mine ? (
        <div className="sm:col-span-2">
          <FormError message={mine.form} />
        </div>
      ) : null}
      <TextField label="Id" name="id" defaultValue={value("id")} error={mine?.field("id")} hint="A short name, e.g. noc-https-mfa" required />
      <SelectField label="Interface" name="interface" defaultValue={value("interface", interfaces[0] ?? "")} error={mine?.field("interface")}>
        {[...new Set([...interfaces, value("interface")])].filter((name) => name !== "").map((name) => (
          <option key={name} value={name}>
            {name}
          </option>
        ))}
      </SelectField>
      {kind === "probe" ? (
        <>
          <TextField label="From" name="from" defaultValue={value("from")} error={mine?.field("from")} hint="One source address" />
          <TextField label="To (optional)" name="to" defaultValue={value("to")} error={mine?.field("to")} hint="A device address; empty: the interface's first" />
        </>
      ) : (
        <div className="sm:col-span-2">
          <TextAreaField label="Sources" name="sources" rows={2} defaultValue={value("sources")} error={mine?.field("sources")} hint='“non-private”, or CIDRs, addresses and ranges separated by spaces or commas' />
        </div>
      )}
      <TextField label="Service" name="service" list={listId} defaultValue={value("service")} error={mine?.field("service")} hint="A service name, tcp/PORT, udp/PORT or icmp/echo" />
      <datalist id={listId}>
        {services.map((name) => (
          <option key={name} value={name} />
        ))}
      </datalist>
      {kind === "probe" ? (
        <>
          <TextField label="When" name="when" defaultValue={value("when", "all-week")} error={mine?.field("when")} hint="all-week, or a week time on the device's clock such as tue 10:00" />
          <SelectField label="Must get" name="expect" defaultValue={value("expect", "login-mfa")} error={mine?.field("expect")}>
            {OUTCOMES.map((outcome) => (
              <option key={outcome} value={outcome}>
                {OUTCOME_LABELS[outcome]}
              </option>
            ))}
          </SelectField>
        </>
      ) : (
        <SelectField label="At most" name="atMost" defaultValue={value("atMost", "silent")} error={mine?.field("atMost")}>
          {OUTCOMES.map((outcome) => (
            <option key={outcome} value={outcome}>
              {OUTCOME_LABELS[outcome]}
            </option>
          ))}
        </SelectField>
      )}
      <div className="sm:col-span-2">
        <TextField label="Note (optional)" name="note" defaultValue={value("note")} error={mine?.field("note")} hint="Why it must hold, for the next reader" />
      </div>
      <div className="sm:col-span-2">
        <Button type="submit" size="sm">
          {intent === "add" ? (kind === "probe" ? "Add probe" : "Add bound") : "Save"}
        </Button>
      </div>
    </Form>
  );
}

/** A field's text from a stored expectation (the form's starting values when editing). */
function fallbackOf(expectation: Expectation | undefined, name: string): string | undefined {
  if (expectation === undefined) return undefined;
  if (name === "sources" && expectation.kind === "bound") return expectation.sources === "non-private" ? "non-private" : expectation.sources.join(" ");
  const value = new Map<string, unknown>(Object.entries(expectation)).get(name);
  return typeof value === "string" ? value : undefined;
}
