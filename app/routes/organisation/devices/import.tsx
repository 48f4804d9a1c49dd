import { useState } from "react";
import { data, Form, redirect, useNavigation } from "react-router";
import type { Route } from "./+types/import";
import { serializeFlash } from "#server/auth/flash.server";
import { requireRole } from "#server/auth/guard.server";
import { PAGE_ROLES } from "#server/auth/roles";
import { WRITTEN_REASON_MIN } from "#server/proposals/state";
import { actorOf } from "#server/http/actor.server";
import { readForm } from "#server/http/form.server";
import { ElementNameSchema, ImportEffectReadSchema } from "#server/http/schemas";
import { isRefusal } from "#server/errors";
import { isUuid } from "#server/validation/ids";
import { MAX_MODEL_DOCUMENT_BYTES, sizeWords } from "#server/validation/limits";
import { refusedWith } from "#server/http/refusals.server";
import { createDevice, deviceNameChoice, findDevice, listDeviceNames, loadSharedLibrary } from "#server/services/devices.server";
import { hasAtLeastRole } from "#server/auth/roles";
import { appOrigin } from "#server/config.server";
import { GateReasons, unlistedReasons, type ShownReason } from "#app/components/proposals/proposal-bits";
import { TextAreaField } from "#app/components/device/editor-kit";
import { revisionEffect } from "#server/services/revision-effect.server";
import { siteNames } from "#server/services/sites.server";
import { diffDocuments, summariseDocument, validateDocument, type ModelDocument } from "#server/workspace/index";
import { readProposalDetails } from "#server/http/proposal-steps.server";
import { defaultWindowText } from "#server/proposals/change-window";
import { createProposal, directSaveGate, saveDirectEdit } from "#server/services/proposals.server";
import { gateBlocks } from "#server/proposals/gate-words";
import { OutcomeChip } from "#app/components/outcome";
import { isOutcome } from "#server/engine/vocabulary";
import { MODEL_SCHEMA_VERSION, VERSION_1_UPGRADE_SUMMARY } from "#server/engine/index";
import { SeverityCounts } from "#app/components/severity";
import { DeviceEffectDetails } from "#app/components/shared-objects/change-preview";
import { Button } from "#app/components/ui/button";
import { Card, PageHeader } from "#app/components/ui/card";
import { FormError, SelectField, TextField } from "#app/components/ui/field";
import { clientAddressOf } from "#server/http/request-context.server";
import { formatNumber, plural } from "#server/engine/format";
import { cx } from "#app/components/ui/cx";
import { PageErrorBoundary } from "#app/components/error-panel";

export const meta: Route.MetaFunction = () => [{ title: "Import a model · Sallyport" }];

// A refusal (a role too low, say) shows inside the organisation's frame.
export const ErrorBoundary = PageErrorBoundary;

/** Model documents are small; a larger upload is refused before it is parsed. */
export const MAX_MODEL_BYTES = MAX_MODEL_DOCUMENT_BYTES;

export async function loader({ context }: Route.LoaderArgs) {
  const access = requireRole(context, PAGE_ROLES.importModel);
  const [sites, devices] = await Promise.all([siteNames(access.organisation.id), listDeviceNames(access.organisation.id)]);
  return { sites, devices };
}

type Problem = { path: string; message: string };
/** Messages beside the fields of the first step: the file, the site and where to import. */
type StepErrors = { file?: string; target?: string; siteName?: string };
type Preview = {
  stage: "preview";
  documentText: string;
  target: string;
  siteName: string;
  fileName: string;
  summary: ReturnType<typeof summariseDocument>;
  deviceName: string;
  warnings: Problem[];
  baseRevision: number | null;
  targetLabel: string;
  /** Set when the file was a version-1 document, read (and saved) as the current version. */
  upgradeNote: string | null;
  /** A new device: the name it gets (the document's, or a free one when that is taken) and what to say about it. */
  rename: { proposed: string; taken: { id: string; revision: number } | null; error: string | null } | null;
  /** A new revision of a device: what it would do, judged by effect against the current revision. */
  effect: ReturnType<typeof revisionEffect> | null;
  /** The last step was sent without "I have read the effect" ticked: what to do, beside the box. */
  effectReadError: string | null;
  /** The device's pages (its trace page replays an effect row's witness); null for a new device. */
  devicePath: string | null;
  /** A new revision of a device can become a proposal instead: its title and window as typed (or the defaults), and their problems. */
  proposal: { values: { title: string; windowStart: string; windowEnd: string }; errors: Record<string, string>; timezone: string } | null;
  /**
   * A new revision is a direct save (docs/decisions/017): whether changes go through proposals
   * (then only an admin imports directly, break-glass), whether this member may override, and
   * the refusal of the last try — its lead, the gate's reasons, the override reason typed and its problem.
   */
  policy: { throughProposals: boolean; canOverride: boolean; gate: ShownReason[] } | null;
  guard: { message: string; reasons: ShownReason[]; overrideReason: string; overrideError: string | null } | null;
};
type ActionResult = { stage: "refused"; message: string; problems: Problem[]; target: string; siteName: string; errors: StepErrors } | Preview;

/** The value of the "Import as" choice that creates the device at a new site. */
const NEW_SITE_TARGET = "site:new";

function refuse(message: string, problems: Problem[], context: { target: string; siteName: string }, status = 400, errors: StepErrors = {}) {
  return data<ActionResult>({ stage: "refused", message, problems, errors, ...context }, { status });
}

const NO_FILE = "No file chosen: choose a model document (.json) to upload.";

async function readDocument(form: FormData): Promise<{ text: string; fileName: string } | { error: string }> {
  const upload = form.get("file");
  if (typeof upload === "string" || upload === null) {
    const text = form.get("documentText");
    if (typeof text === "string" && text.length > 0) return new TextEncoder().encode(text).length > MAX_MODEL_BYTES ? { error: `The document is larger than ${sizeWords(MAX_MODEL_BYTES)}.` } : { text, fileName: String(form.get("fileName") ?? "document.json").slice(0, 200) };
    return { error: NO_FILE };
  }
  // A browser sends a form with no file chosen as an empty part without a name.
  if (upload.size === 0 && upload.name === "") return { error: NO_FILE };
  if (upload.size === 0) return { error: "The chosen file is empty." };
  if (upload.size > MAX_MODEL_BYTES) return { error: `The file is ${sizeWords(upload.size)}; model documents may be at most ${sizeWords(MAX_MODEL_BYTES)}.` };
  return { text: await upload.text(), fileName: upload.name.slice(0, 200) };
}

export async function action({ request, context }: Route.ActionArgs) {
  const access = requireRole(context, PAGE_ROLES.importModel);
  const form = await readForm(request);
  const intent = form.get("intent");
  const target = String(form.get("target") ?? "");
  const siteName = String(form.get("siteName") ?? "").trim();
  const step = { target, siteName };
  if (intent !== "preview" && intent !== "import") throw data({ message: "Unknown action." }, { status: 400 });
  const read = await readDocument(form);
  if ("error" in read) return refuse(read.error, [], step, 400, { file: read.error });
  let parsed: unknown;
  try {
    parsed = JSON.parse(read.text);
  } catch (error) {
    return refuse(`This is not JSON: ${error instanceof Error ? error.message : "unreadable"}. Sallyport imports its own model documents (schemaVersion 2, or 1).`, [], step);
  }
  const validated = validateDocument(parsed, await loadSharedLibrary(access.organisation.id));
  if (!validated.ok) return refuse(`The document is not a valid Sallyport model: ${plural(validated.errors.length, { one: "problem", other: "problems" })}. Nothing was created.`, [...validated.errors], step, validated.tooLarge ? 413 : 400);

  const [kind, id] = target.split(":");
  // A device or site id that is not a UUID names nothing here (and must never reach PostgreSQL).
  if ((kind === "device" || (kind === "site" && target !== NEW_SITE_TARGET)) && !isUuid(id)) return refuse("No such device or site in this organisation.", [], step, 404, { target: "Choose where to import from the list." });
  if (kind !== "site" && kind !== "device") {
    const message = "Choose where to import: a new device at a site, or a new revision of a device.";
    return refuse(message, [], step, 400, { target: message });
  }
  const newSite = target === NEW_SITE_TARGET;
  if (newSite && !siteName) return refuse("Name the new site.", [], step, 400, { siteName: "Name the new site, e.g. the customer's office or plant." });
  if (newSite && siteName.length > 100) return refuse("Use at most 100 characters.", [], step, 400, { siteName: "Use at most 100 characters." });
  const existing = kind === "device" ? await findDevice(access.organisation.id, id ?? "") : null;
  if (kind === "device" && !existing) return refuse("No such device in this organisation.", [], step, 404);
  const actor = actorOf(access, clientAddressOf(context));
  const documentName = validated.document.device.name;

  const timezone = existing?.effective.device.timezone ?? "UTC";
  const typedProposal = { title: String(form.get("title") ?? ""), ...defaultWindowText(new Date(), timezone), ...(form.has("windowStart") ? { windowStart: String(form.get("windowStart")), windowEnd: String(form.get("windowEnd") ?? "") } : {}) };
  const preview = async (error: string | null = null, proposed?: string, effectReadError: string | null = null, proposalErrors: Record<string, string> = {}, guard: Preview["guard"] = null): Promise<Preview> => {
    const choice = existing ? null : await deviceNameChoice(access.organisation.id, documentName);
    // A new revision is judged by its effect on the current one (counts, findings, lockout guard).
    const effect = existing ? revisionEffect(existing, validated.effective) : null;
    // What the save's guard will say, known now: a blocked import is not offered as a direct save.
    const gate = existing && effect && effect.changes.length > 0 ? await directSaveGate(existing, validated.effective) : [];
    return {
      stage: "preview",
      documentText: JSON.stringify(validated.document),
      fileName: read.fileName,
      target,
      siteName,
      summary: effect ? effect.after : summariseDocument(validated.effective),
      deviceName: documentName,
      warnings: [...validated.warnings],
      baseRevision: existing?.revision.number ?? null,
      targetLabel: existing ? `a new revision of ${existing.device.name} (now r${existing.revision.number})` : newSite ? `a new device at the new site ${siteName}` : "a new device",
      upgradeNote: validated.upgradedFrom ? `Written in version ${validated.upgradedFrom} of the model document; read and saved as version ${MODEL_SCHEMA_VERSION} (${VERSION_1_UPGRADE_SUMMARY}). Nothing else changes.` : null,
      rename: choice ? { proposed: proposed ?? choice.free, taken: choice.taken, error } : null,
      effect,
      effectReadError,
      devicePath: existing ? `/o/${access.organisation.slug}/devices/${existing.device.id}` : null,
      proposal: existing ? { values: typedProposal, errors: proposalErrors, timezone } : null,
      policy: existing ? { throughProposals: access.organisation.changesThroughProposals, canOverride: hasAtLeastRole(access.role, "admin"), gate: gate.map((reason) => ({ ...reason, details: [...reason.details] })) } : null,
      guard,
    };
  };
  if (intent === "preview") return data<ActionResult>(await preview());
  // "Import as a proposal": the document becomes a proposal's draft on the device's current
  // revision, reviewed before it lands; nothing changes on the device now.
  if (form.get("as") === "proposal") {
    if (!existing) return refuse("Only a new revision of an existing device can be imported as a proposal.", [], step);
    if (diffDocuments(existing.effective, validated.effective).length === 0) return refuse(`This document matches revision r${existing.revision.number} of ${existing.device.name}: there is nothing to propose.`, [], step, 409);
    const asked = readProposalDetails({ title: typedProposal.title, windowStart: typedProposal.windowStart, windowEnd: typedProposal.windowEnd }, timezone);
    if (!asked.ok) return data<ActionResult>(await preview(null, undefined, null, asked.errors), { status: 400 });
    try {
      const proposal = await createProposal({ organisationId: access.organisation.id, deviceId: existing.device.id }, { ...asked.details, reason: `Imported from ${read.fileName}.` }, { kind: "document", document: validated.document }, actor);
      const path = `/o/${access.organisation.slug}/devices/${existing.device.id}/proposals/${proposal.id}`;
      throw redirect(path, { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message: `Proposal created from ${read.fileName} on r${proposal.baseRevisionNumber}: review its effect, then submit it for review.` }) } });
    } catch (error) {
      if (error instanceof Response) throw error;
      const refusal = isRefusal(error) ? error : null;
      if (refusal?.field) return data<ActionResult>(await preview(null, undefined, null, { [refusal.field]: refusal.message }), { status: refusal.status });
      return refusedWith(error, (found): ActionResult => ({ stage: "refused", message: found.message, problems: [...found.issues], errors: {}, ...step }));
    }
  }
  try {
    if (existing) {
      const baseText = String(form.get("baseRevision") ?? "");
      const baseRevision = /^\d{1,9}$/.test(baseText) ? Number(baseText) : Number.NaN;
      if (!Number.isSafeInteger(baseRevision) || baseRevision < 1) return refuse("The revision this import is based on is missing or not a whole number; preview the file again.", [], step, 400);
      // A change to the revision the preview showed lands only once its effect was read. (On a
      // stale base the save below refuses with what changed; an import that changes nothing
      // has no effect to read.)
      if (baseRevision === existing.revision.number && diffDocuments(existing.effective, validated.effective).length > 0) {
        const read = ImportEffectReadSchema.safeParse({ effectRead: form.get("effectRead") ?? "" });
        if (!read.success) return data<ActionResult>(await preview(null, undefined, read.error.issues[0]?.message ?? "Tick “I have read the effect” to import."), { status: 400 });
      }
      const document: ModelDocument = validated.document;
      // A direct save like the live editor's: the change policy and the gate judge it (directSaveGuard).
      const overrideReason = String(form.get("overrideReason") ?? "");
      try {
        const saved = await saveDirectEdit(
          { organisationId: access.organisation.id, deviceId: existing.device.id, deviceName: existing.device.name, slug: access.organisation.slug },
          { changesThroughProposals: access.organisation.changesThroughProposals },
          baseRevision,
          () => document,
          actor,
          `Imported ${read.fileName}`,
          { override: overrideReason.trim() ? { reason: overrideReason } : null },
          { appOrigin: appOrigin() },
        );
        const how = saved.note?.action === "device.break-glass-saved" ? " directly (break-glass); the reviewers were e-mailed" : saved.note ? " past the guard, with your reason" : "";
        throw redirect(`/o/${access.organisation.slug}/devices/${existing.device.id}/history`, { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message: saved.changes.length ? `Imported as revision r${saved.number}${how}.` : "The import matched the current revision; nothing changed." }) } });
      } catch (error) {
        // Refused by the policy or the gate: back to the preview, saying why, with the ways on.
        if (!isRefusal(error) || (error.reasons.length === 0 && error.field !== "overrideReason" && error.status !== 403)) throw error;
        const guard = { message: error.reasons.length && error.lead ? error.lead : error.message, reasons: error.reasons.map((reason) => ({ ...reason, details: [...reason.details] })), overrideReason, overrideError: error.field === "overrideReason" ? error.message : null };
        return data<ActionResult>(await preview(null, undefined, null, {}, guard), { status: error.status });
      }
    }
    // The preview's rename field; a request without it keeps the document's own name.
    const requested = form.get("deviceName");
    const name = typeof requested === "string" ? ElementNameSchema.safeParse(requested) : { success: true as const, data: documentName };
    if (!name.success) return data<ActionResult>(await preview(name.error.issues[0]?.message ?? "Enter a device name.", String(requested)), { status: 400 });
    const document: ModelDocument = { ...validated.document, device: { ...validated.document.device, name: name.data } };
    const site = newSite ? { newSite: { name: siteName, customer: "", location: "" }, field: "siteName" } : (id ?? "");
    const device = await createDevice(access.organisation.id, site, document, actor, `Imported ${read.fileName}`);
    throw redirect(`/o/${access.organisation.slug}/devices/${device.id}`, { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message: `Device ${device.name} imported.` }) } });
  } catch (error) {
    const renamed = String(form.get("deviceName") ?? documentName);
    // A name taken meanwhile: back to the preview, with the rename field saying so.
    const again = !existing && isRefusal(error) && error.field === "name" ? await preview(error.message, renamed) : null;
    return refusedWith(error, (refusal): ActionResult => {
      if (again) return again;
      const advice = refusal.field === "name" ? " Import it as a new revision of that device instead, or rename the device in the document." : "";
      return { stage: "refused", message: refusal.issues.length ? "The document is not a valid Sallyport model." : `${refusal.message}${advice}`, problems: [...refusal.issues], errors: refusal.field === "siteName" ? { siteName: refusal.message } : {}, ...step };
    });
  }
}

export default function ImportModel({ loaderData, actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const busy = navigation.state === "submitting";
  const { sites, devices } = loaderData;
  const [target, setTarget] = useState(actionData?.target ?? (sites.length === 0 ? NEW_SITE_TARGET : ""));
  // The choice follows the server's answer (the preview may switch to a new revision), as state adjusted during render.
  const [answeredTarget, setAnsweredTarget] = useState(actionData?.target);
  if (actionData && actionData.target !== answeredTarget) {
    setAnsweredTarget(actionData.target);
    setTarget(actionData.target);
  }
  const errors: StepErrors = actionData?.stage === "refused" ? actionData.errors : {};
  const fieldMessages = new Set(Object.values(errors));
  return (
    <>
      <PageHeader title="Import a model document" description={`Upload a Sallyport model document (JSON, schemaVersion 2 — version 1 is read too — at most ${sizeWords(MAX_MODEL_BYTES)}). You see what it contains before anything is created.`} />
      {/* A new revision's effect needs the page's width; the upload form then sits above it. */}
      <div className={cx("grid gap-6", actionData?.stage === "preview" && actionData.effect ? "" : "lg:grid-cols-2")}>
        <Card className="p-6">
          <Form method="post" encType="multipart/form-data" className="space-y-5" noValidate>
            <input type="hidden" name="intent" value="preview" />
            {actionData?.stage === "refused" && !fieldMessages.has(actionData.message) ? (
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
              <input
                id="model-file"
                type="file"
                name="file"
                accept=".json,application/json"
                aria-invalid={errors.file ? true : undefined}
                aria-describedby={errors.file ? "model-file-error" : undefined}
                className="block w-full text-sm file:mr-3 file:rounded-control file:border file:border-line-strong file:bg-surface file:px-3 file:py-1.5"
              />
              {errors.file ? (
                <p id="model-file-error" role="alert" className="text-sm text-danger">
                  {errors.file}
                </p>
              ) : null}
            </div>
            <SelectField label="Import as" name="target" value={target} onChange={(event) => setTarget(event.currentTarget.value)} error={errors.target}>
              <option value="" disabled>
                Choose…
              </option>
              <optgroup label="A new device at site">
                {sites.map((site) => (
                  <option key={site.id} value={`site:${site.id}`}>
                    New device at {site.name}
                  </option>
                ))}
                <option value={NEW_SITE_TARGET}>New device at a new site…</option>
              </optgroup>
              {devices.length > 0 ? (
                <optgroup label="A new revision of">
                  {devices.map((device) => (
                    <option key={device.id} value={`device:${device.id}`}>
                      {device.name} (now r{device.revision})
                    </option>
                  ))}
                </optgroup>
              ) : null}
            </SelectField>
            {target === NEW_SITE_TARGET ? (
              <TextField
                label="New site's name"
                name="siteName"
                required
                maxLength={100}
                defaultValue={actionData?.siteName}
                error={errors.siteName}
                hint={sites.length === 0 ? "This organisation has no sites yet: name the first one (a customer location, or your own office). It is created with the device." : "Created with the device; add its customer and location on the Sites page."}
              />
            ) : null}
            <Button type="submit" disabled={busy}>
              Check the document
            </Button>
          </Form>
        </Card>
        {actionData?.stage === "preview" ? <ImportPreview key={`${actionData.target}:${actionData.documentText.length}:${actionData.rename?.proposed ?? ""}`} preview={actionData} busy={busy} /> : null}
      </div>
    </>
  );
}

type PreviewData = Extract<Route.ComponentProps["actionData"], { stage: "preview" }>;

/** "interfaces 3 → 3 · inbound rules 7 → 6 …", the ones that change marked. */
function ElementCounts({ before, after }: { before: Record<string, number>; after: Record<string, number> }) {
  const kinds = [
    ["interfaces", "interfaces"],
    ["addressObjects", "address objects and groups"],
    ["inboundRules", "inbound rules"],
    ["accounts", "accounts"],
  ] as const;
  return (
    <ul className="space-y-0.5">
      {kinds.map(([kind, words]) => {
        const was = before[kind] ?? 0;
        const will = after[kind] ?? 0;
        return (
          <li key={kind} data-kind={kind} data-before={was} data-after={will}>
            {words} <span className="tabular">{formatNumber(was)}</span> → <span className={cx("tabular", was !== will && "font-semibold text-ink")}>{formatNumber(will)}</span>
          </li>
        );
      })}
    </ul>
  );
}

const capitalised = (text: string): string => text.charAt(0).toUpperCase() + text.slice(1);

/** The lockout guard in one sentence: which operator networks lose every login path. */
function lockoutWords(lockout: ReadonlyArray<{ operatorNetwork: string }>): string {
  const names = lockout.map((entry) => `“${entry.operatorNetwork}”`);
  const list = names.length === 1 ? names[0] : `${names.slice(0, -1).join(", ")} and ${names.at(-1)}`;
  return `operator ${names.length === 1 ? "network" : "networks"} ${list} would have no login path left on any interface, service or time.`;
}

function ImportPreview({ preview, busy }: { preview: PreviewData; busy: boolean }) {
  const { rename, effect, policy, guard } = preview;
  const changes = effect !== null && effect.changes.length > 0;
  // Under "changes go through proposals" a direct import is an admin's break-glass step; one the
  // gate blocks is offered only to an admin, with a written reason (docs/decisions/017).
  const throughProposals = changes && policy?.throughProposals === true;
  const gate = changes ? (policy?.gate ?? []) : [];
  const blocked = !throughProposals && (gate.length > 0 || (guard?.reasons.length ?? 0) > 0);
  const overrideAsked = changes && policy !== null && policy.canOverride && (throughProposals || blocked || guard !== null);
  const directOffered = (!throughProposals && !blocked) || policy?.canOverride === true;
  // The lockout shows in the effect and the warning above; only the other reasons are listed here, and a refusal's only when new.
  const listed = gate.filter((reason) => reason.kind === "expectation");
  const refusedOnly = guard ? unlistedReasons(guard.reasons, gate) : [];
  // A document that changes nothing has nothing to propose.
  const proposal = changes ? preview.proposal : null;
  const lockout = effect?.exposure.lockout ?? [];
  const carried = (
    <>
      <input type="hidden" name="fileName" value={preview.fileName} />
      <input type="hidden" name="documentText" value={preview.documentText} />
    </>
  );
  return (
    <Card className="p-6" aria-labelledby="preview-heading">
      <h2 id="preview-heading" className="text-lg font-semibold">
        Preview: {preview.deviceName}
      </h2>
      <p className="mt-1 text-sm text-ink-muted">
        From {preview.fileName}, as {preview.targetLabel}.
      </p>
      {preview.upgradeNote ? <p className="mt-2 rounded-control border border-info/40 bg-info-soft p-3 text-sm">{preview.upgradeNote}</p> : null}
      <dl className="mt-4 grid grid-cols-[minmax(6rem,10rem)_1fr] gap-2 text-sm">
        {effect ? (
          <>
            <dt className="text-ink-muted">Elements</dt>
            <dd data-testid="import-counts">
              <ElementCounts before={effect.counts.before} after={effect.counts.after} />
            </dd>
          </>
        ) : (
          <>
            <dt className="text-ink-muted">Will create</dt>
            <dd>
              {[
                plural(preview.summary.counts.interfaces, { one: "interface", other: "interfaces" }),
                plural(preview.summary.counts.addressObjects, { one: "address object or group", other: "address objects and groups" }),
                plural(preview.summary.counts.inboundRules, { one: "inbound rule", other: "inbound rules" }),
                plural(preview.summary.counts.accounts, { one: "account", other: "accounts" }),
              ].join(", ")}
            </dd>
          </>
        )}
        <dt className="text-ink-muted">{effect ? "Findings after" : "Findings"}</dt>
        <dd>
          <SeverityCounts counts={preview.summary.findingsBySeverity} />
        </dd>
        <dt className="text-ink-muted">{effect ? "Worst on wan after" : "Worst on wan"}</dt>
        <dd>{isOutcome(preview.summary.worstOutsideOutcome) ? <OutcomeChip outcome={preview.summary.worstOutsideOutcome} /> : "no wan interface"}</dd>
      </dl>
      {preview.warnings.length > 0 ? (
        <ul className="mt-4 rounded-control border border-warning/40 bg-warning-soft p-3 text-xs">
          {preview.warnings.map((warning, index) => (
            <li key={index}>
              <code>{warning.path}</code>: {warning.message}
            </li>
          ))}
        </ul>
      ) : null}
      {effect && preview.devicePath ? (
        <section aria-labelledby="import-effect-heading" className="mt-5 border-t border-line pt-4" data-testid="import-effect">
          <h3 id="import-effect-heading" className="font-semibold">
            Effect on {effect.deviceName}
            {changes ? `: r${effect.revision} → r${effect.revision + 1}` : ""}
          </h3>
          {changes ? (
            <DeviceEffectDetails effect={effect} devicePath={preview.devicePath} headingId="import-effect" foldRows />
          ) : (
            <p className="mt-1 text-sm text-ink-muted">This document matches revision r{effect.revision}: importing it changes nothing.</p>
          )}
        </section>
      ) : null}
      {/* Multipart, so the document travels as it is (URL-encoding could triple it past the limit). */}
      <Form method="post" encType="multipart/form-data" className="mt-6 space-y-4">
        <input type="hidden" name="intent" value="import" />
        <input type="hidden" name="target" value={preview.target} />
        <input type="hidden" name="siteName" value={preview.siteName} />
        <input type="hidden" name="baseRevision" value={preview.baseRevision ?? ""} />
        {carried}
        {rename ? (
          <TextField
            label="Name of the new device"
            name="deviceName"
            required
            maxLength={63}
            defaultValue={rename.proposed}
            error={rename.error ?? undefined}
            hint={
              rename.taken
                ? `A device named ${preview.deviceName} exists already, so this one is offered as ${rename.proposed}; change it as you like. Letters, digits, dot, underscore, dash.`
                : "The name in the document; change it to import under another name. Letters, digits, dot, underscore, dash."
            }
          />
        ) : null}
        {lockout.length > 0 ? (
          <p className="rounded-control border border-danger/40 bg-danger-soft px-3 py-2 text-sm text-danger" data-testid="import-lockout-warning">
            <span className="font-semibold">Importing this locks the team out:</span> {lockoutWords(lockout)} Keep a tested break-glass path before you restrict access, confirm on
            the device in a maintenance window, and follow your organisation's change policy.
          </p>
        ) : null}
        {guard ? (
          <div role="alert" className="space-y-3 rounded-control border border-danger/50 p-3" data-testid="import-refused">
            <p className="text-sm font-semibold text-danger">Not imported</p>
            <p className="text-sm">{guard.message}</p>
            {refusedOnly.length > 0 ? <GateReasons reasons={refusedOnly} /> : null}
          </div>
        ) : null}
        {blocked && gate.length > 0 ? (
          <div className="space-y-3 rounded-control border border-danger/40 bg-danger-soft px-3 py-2 text-sm" data-testid="import-blocked">
            <p className="text-danger">
              {capitalised(gateBlocks(gate))} importing this directly: import it as a proposal, for an admin or owner to decide{policy?.canOverride ? ", or — as an admin — import it anyway with a written reason" : ""}.
            </p>
            {listed.length > 0 ? <GateReasons reasons={listed} /> : null}
          </div>
        ) : null}
        {throughProposals ? (
          <p className="rounded-control border border-brass/50 bg-brass-soft px-3 py-2 text-sm" data-testid="import-policy">
            In this organisation changes go through proposals: import it as a proposal, reviewed before it lands.{" "}
            {policy?.canOverride ? "As an admin you may import it directly in an emergency (break-glass), with a written reason; the reviewers are e-mailed." : "An admin can import it directly in an emergency (break-glass)."}
          </p>
        ) : null}
        {changes && directOffered ? (
          <div className="space-y-1.5">
            <label className="flex items-start gap-2 text-sm font-medium">
              <input
                type="checkbox"
                name="effectRead"
                value="yes"
                aria-invalid={preview.effectReadError ? true : undefined}
                aria-describedby={preview.effectReadError ? "effect-read-error" : undefined}
                className="mt-0.5 size-4 accent-harbour"
              />
              <span>I have read the effect{lockout.length > 0 ? ", including the lockout warning" : ""}</span>
            </label>
            {preview.effectReadError ? (
              <p id="effect-read-error" role="alert" className="text-sm text-danger">
                {preview.effectReadError}
              </p>
            ) : null}
          </div>
        ) : null}
        {overrideAsked ? (
          <TextAreaField
            label={throughProposals ? "Why this cannot wait for a proposal (break-glass)" : "Why import it anyway"}
            name="overrideReason"
            rows={2}
            defaultValue={guard?.overrideReason}
            error={guard?.overrideError ?? undefined}
            hint={`At least ${WRITTEN_REASON_MIN} characters; recorded in the audit log${throughProposals ? ", and the reviewers are e-mailed" : ""}.`}
          />
        ) : null}
        {proposal ? (
          <fieldset className="space-y-3 rounded-control border border-line p-3" data-testid="import-as-proposal">
            <legend className="px-1 text-sm font-medium">{directOffered ? "Or import it as a proposal" : "Import it as a proposal"}</legend>
            <p className="text-sm text-ink-muted">
              The document becomes the draft of a proposal on r{preview.baseRevision}: nothing changes on the device until someone else approves it and it is applied in its change window. Change the
              reason and the rest on the proposal.
            </p>
            <TextField label="Proposal title" name="title" maxLength={200} defaultValue={proposal.values.title} error={proposal.errors.title} hint="Needed for a proposal only; it becomes the revision's message." />
            <div className="grid gap-3 sm:grid-cols-2">
              <TextField label="Change window starts" name="windowStart" type="datetime-local" defaultValue={proposal.values.windowStart} error={proposal.errors.windowStart} hint={`In the device's time zone, ${proposal.timezone}.`} />
              <TextField label="Change window ends" name="windowEnd" type="datetime-local" defaultValue={proposal.values.windowEnd} error={proposal.errors.windowEnd ?? proposal.errors.form} />
            </div>
          </fieldset>
        ) : null}
        <div className="flex flex-wrap items-center gap-3" data-testid="import-actions">
          {directOffered ? (
            <Button type="submit" variant={lockout.length > 0 || throughProposals || blocked ? "danger" : "primary"} disabled={busy}>
              {throughProposals ? `Import ${preview.deviceName} directly (break-glass)` : blocked ? `Import ${preview.deviceName} anyway` : `Import ${rename ? "as a new device" : preview.deviceName}`}
            </Button>
          ) : null}
          {proposal ? (
            <Button type="submit" name="as" value="proposal" variant={directOffered ? "secondary" : "primary"} disabled={busy}>
              Import as a proposal
            </Button>
          ) : null}
        </div>
      </Form>
      {rename?.taken ? (
        <Form method="post" className="mt-3 border-t border-line pt-3 text-sm">
          <input type="hidden" name="intent" value="preview" />
          <input type="hidden" name="target" value={`device:${rename.taken.id}`} />
          {carried}
          <span className="text-ink-muted">Or update the existing one: </span>
          <button type="submit" className="font-medium text-harbour underline underline-offset-4" disabled={busy}>
            check it as a new revision of {preview.deviceName} (now r{rename.taken.revision})
          </button>
        </Form>
      ) : null}
    </Card>
  );
}
