import { data, Form, redirect, useNavigation } from "react-router";
import type { Route } from "./+types/import";
import { serializeFlash } from "#server/auth/flash.server";
import { requireRole } from "#server/auth/guard.server";
import { actorOf } from "#server/http/actor.server";
import { readForm } from "#server/http/form.server";
import { refusedWith } from "#server/http/refusals.server";
import { createDevice, findDevice, listDevices, loadSharedLibrary, saveEdit } from "#server/services/devices.server";
import { listSites } from "#server/services/sites.server";
import { summariseDocument, validateDocument, type ModelDocument } from "#server/workspace/index";
import { OutcomeChip } from "#app/components/outcome";
import { isOutcome } from "#server/engine/vocabulary";
import { MODEL_SCHEMA_VERSION, VERSION_1_UPGRADE_SUMMARY } from "#server/engine/index";
import { SeverityCounts } from "#app/components/severity";
import { Button } from "#app/components/ui/button";
import { Card, PageHeader } from "#app/components/ui/card";
import { FormError, SelectField } from "#app/components/ui/field";
import { clientAddressOf } from "#server/http/request-context.server";
import { plural } from "#server/engine/format";

export const meta: Route.MetaFunction = () => [{ title: "Import a model · Sallyport" }];

/** Model documents are small; a larger upload is refused before it is parsed. */
export const MAX_MODEL_BYTES = 1024 * 1024;

export async function loader({ context }: Route.LoaderArgs) {
  const access = requireRole(context, "engineer");
  const [sites, devices] = await Promise.all([listSites(access.organisation.id), listDevices(access.organisation.id)]);
  return { sites: sites.map((site) => ({ id: site.id, name: site.name })), devices: devices.map((device) => ({ id: device.id, name: device.name, revision: device.revision })) };
}

type Problem = { path: string; message: string };
type ActionResult =
  | { stage: "refused"; message: string; problems: Problem[]; target: string }
  | { stage: "preview"; documentText: string; target: string; fileName: string; summary: ReturnType<typeof summariseDocument>; deviceName: string; warnings: Problem[]; baseRevision: number | null; targetLabel: string; upgradeNote: string | null };

function refuse(message: string, problems: Problem[], target: string, status = 400) {
  return data<ActionResult>({ stage: "refused", message, problems, target }, { status });
}

async function readDocument(form: FormData): Promise<{ text: string; fileName: string } | { error: string }> {
  const upload = form.get("file");
  if (typeof upload === "string" || upload === null) {
    const text = form.get("documentText");
    if (typeof text === "string" && text.length > 0) return text.length > MAX_MODEL_BYTES ? { error: "The document is larger than 1 MiB." } : { text, fileName: String(form.get("fileName") ?? "document.json").slice(0, 200) };
    return { error: "Choose a model document (.json) to upload." };
  }
  if (upload.size === 0) return { error: "The chosen file is empty." };
  if (upload.size > MAX_MODEL_BYTES) return { error: `The file is ${Math.ceil(upload.size / 1024)} KiB; model documents may be at most 1024 KiB.` };
  return { text: await upload.text(), fileName: upload.name.slice(0, 200) };
}

export async function action({ request, context }: Route.ActionArgs) {
  const access = requireRole(context, "engineer");
  const form = await readForm(request);
  const intent = form.get("intent");
  const target = String(form.get("target") ?? "");
  if (intent !== "preview" && intent !== "import") throw data({ message: "Unknown action." }, { status: 400 });
  const read = await readDocument(form);
  if ("error" in read) return refuse(read.error, [], target);
  let parsed: unknown;
  try {
    parsed = JSON.parse(read.text);
  } catch (error) {
    return refuse(`This is not JSON: ${error instanceof Error ? error.message : "unreadable"}. Sallyport imports its own model documents (schemaVersion 2, or 1).`, [], target);
  }
  const validated = validateDocument(parsed, await loadSharedLibrary(access.organisation.id));
  if (!validated.ok) return refuse(`The document is not a valid Sallyport model: ${plural(validated.errors.length, { one: "problem", other: "problems" })}. Nothing was created.`, [...validated.errors], target);

  const [kind, id] = target.split(":");
  if (kind !== "site" && kind !== "device") return refuse("Choose where to import: a new device at a site, or a new revision of a device.", [], target);
  const existing = kind === "device" ? await findDevice(access.organisation.id, id ?? "") : null;
  if (kind === "device" && !existing) return refuse("No such device in this organisation.", [], target, 404);
  const actor = actorOf(access, clientAddressOf(context));

  if (intent === "preview") {
    return data<ActionResult>({
      stage: "preview",
      documentText: JSON.stringify(validated.document),
      fileName: read.fileName,
      target,
      summary: summariseDocument(validated.effective),
      deviceName: validated.document.device.name,
      warnings: [...validated.warnings],
      baseRevision: existing?.revision.number ?? null,
      targetLabel: existing ? `a new revision of ${existing.device.name} (now r${existing.revision.number})` : "a new device",
      upgradeNote: validated.upgradedFrom ? `Written in version ${validated.upgradedFrom} of the model document; read and saved as version ${MODEL_SCHEMA_VERSION} (${VERSION_1_UPGRADE_SUMMARY}). Nothing else changes.` : null,
    });
  }
  try {
    if (existing) {
      const baseRevision = Number(form.get("baseRevision"));
      const document: ModelDocument = validated.document;
      const saved = await saveEdit(access.organisation.id, existing.device.id, baseRevision, () => document, actor, `Imported ${read.fileName}`);
      throw redirect(`/o/${access.organisation.slug}/devices/${existing.device.id}/history`, { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message: saved.changes.length ? `Imported as revision r${saved.number}.` : "The import matched the current revision; nothing changed." }) } });
    }
    const device = await createDevice(access.organisation.id, id ?? "", validated.document, actor, `Imported ${read.fileName}`);
    throw redirect(`/o/${access.organisation.slug}/devices/${device.id}`, { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message: `Device ${device.name} imported.` }) } });
  } catch (error) {
    return refusedWith(error, (refusal): ActionResult => {
      const advice = refusal.field === "name" ? " Import it as a new revision of that device instead, or rename the device in the document." : "";
      return { stage: "refused", message: refusal.issues.length ? "The document is not a valid Sallyport model." : `${refusal.message}${advice}`, problems: [...refusal.issues], target };
    });
  }
}

export default function ImportModel({ loaderData, actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const busy = navigation.state === "submitting";
  const target = actionData?.target ?? "";
  return (
    <>
      <PageHeader title="Import a model document" description="Upload a Sallyport model document (JSON, schemaVersion 2 — version 1 is read too — at most 1 MiB). You see what it contains before anything is created." />
      <div className="grid gap-6 lg:grid-cols-2">
        <Card className="p-6">
          <Form method="post" encType="multipart/form-data" className="space-y-5" noValidate>
            <input type="hidden" name="intent" value="preview" />
            {actionData?.stage === "refused" ? (
              <div role="alert" className="space-y-2">
                <FormError message={actionData.message} />
                {actionData.problems.length > 0 ? (
                  <ul className="max-h-72 overflow-auto rounded-control border border-line bg-surface-sunken p-3 font-mono text-xs">
                    {actionData.problems.map((problem, index) => (
                      <li key={index}>
                        <span className="text-danger">{problem.path || "document"}</span>: {problem.message}
                      </li>
                    ))}
                  </ul>
                ) : null}
              </div>
            ) : null}
            <div className="space-y-1.5">
              <label htmlFor="model-file" className="block text-sm font-medium">
                Model document
              </label>
              <input id="model-file" type="file" name="file" accept=".json,application/json" className="block w-full text-sm file:mr-3 file:rounded-control file:border file:border-line-strong file:bg-surface file:px-3 file:py-1.5" />
            </div>
            <SelectField label="Import as" name="target" defaultValue={target}>
              <option value="" disabled>
                Choose…
              </option>
              <optgroup label="A new device at site">
                {loaderData.sites.map((site) => (
                  <option key={site.id} value={`site:${site.id}`}>
                    New device at {site.name}
                  </option>
                ))}
              </optgroup>
              {loaderData.devices.length > 0 ? (
                <optgroup label="A new revision of">
                  {loaderData.devices.map((device) => (
                    <option key={device.id} value={`device:${device.id}`}>
                      {device.name} (now r{device.revision})
                    </option>
                  ))}
                </optgroup>
              ) : null}
            </SelectField>
            <Button type="submit" disabled={busy}>
              Check the document
            </Button>
          </Form>
        </Card>
        {actionData?.stage === "preview" ? (
          <Card className="p-6" aria-labelledby="preview-heading">
            <h2 id="preview-heading" className="text-lg font-semibold">
              Preview: {actionData.deviceName}
            </h2>
            <p className="mt-1 text-sm text-ink-muted">
              From {actionData.fileName}, as {actionData.targetLabel}.
            </p>
            {actionData.upgradeNote ? <p className="mt-2 rounded-control border border-info/40 bg-info-soft p-3 text-sm">{actionData.upgradeNote}</p> : null}
            <dl className="mt-4 grid grid-cols-[10rem_1fr] gap-2 text-sm">
              <dt className="text-ink-muted">Will create</dt>
              <dd>
                {[
                  plural(actionData.summary.counts.interfaces, { one: "interface", other: "interfaces" }),
                  plural(actionData.summary.counts.addressObjects, { one: "address object or group", other: "address objects and groups" }),
                  plural(actionData.summary.counts.inboundRules, { one: "inbound rule", other: "inbound rules" }),
                  plural(actionData.summary.counts.accounts, { one: "account", other: "accounts" }),
                ].join(", ")}
              </dd>
              <dt className="text-ink-muted">Findings</dt>
              <dd>
                <SeverityCounts counts={actionData.summary.findingsBySeverity} />
              </dd>
              <dt className="text-ink-muted">Worst on wan</dt>
              <dd>{isOutcome(actionData.summary.worstOutsideOutcome) ? <OutcomeChip outcome={actionData.summary.worstOutsideOutcome} /> : "no wan interface"}</dd>
            </dl>
            {actionData.warnings.length > 0 ? (
              <ul className="mt-4 rounded-control border border-warning/40 bg-warning-soft p-3 text-xs">
                {actionData.warnings.map((warning, index) => (
                  <li key={index}>
                    <code>{warning.path}</code>: {warning.message}
                  </li>
                ))}
              </ul>
            ) : null}
            <Form method="post" className="mt-6">
              <input type="hidden" name="intent" value="import" />
              <input type="hidden" name="target" value={actionData.target} />
              <input type="hidden" name="fileName" value={actionData.fileName} />
              <input type="hidden" name="baseRevision" value={actionData.baseRevision ?? ""} />
              <input type="hidden" name="documentText" value={actionData.documentText} />
              <Button type="submit" disabled={busy}>
                Import {actionData.deviceName}
              </Button>
            </Form>
          </Card>
        ) : null}
      </div>
    </>
  );
}
