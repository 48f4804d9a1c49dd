import { data, redirect } from "react-router";
import type { Route } from "./+types/section";
import { serializeFlash } from "#server/auth/flash.server";
import { hasAtLeastRole, PAGE_ROLES } from "#server/auth/roles";
import { actorOf } from "#server/http/actor.server";
import { requireDevice, revisionNumberOf } from "#server/http/device-access.server";
import { formValuesWithLists, planDeviceEdit, PlannedAttempt, refusedDeviceEdit } from "#server/http/device-forms.server";
import { invalidForm, readForm, unknownIntent } from "#server/http/form.server";
import { refusedForm } from "#server/http/refusals.server";
import { deleteDevice, loadSharedLibrary } from "#server/services/devices.server";
import { saveDirectEdit } from "#server/services/proposals.server";
import { WRITTEN_REASON_MIN } from "#server/proposals/state";
import { appOrigin } from "#server/config.server";
import { GuardPanel } from "#app/components/proposals/guard-panel";
import { listSites } from "#server/services/sites.server";
import { SectionEditor } from "#app/components/device/section-editor";
import { isDeviceSection, type DeviceSection } from "#app/components/device/sections";
import { editorNamesOf } from "#app/components/device/name-groups";
import { clientAddressOf } from "#server/http/request-context.server";
import { readRuleView } from "#server/http/preferences.server";

function sectionOf(value: string | undefined): DeviceSection {
  if (!isDeviceSection(value)) throw data({ message: `This device has no section "${String(value).slice(0, 40)}".` }, { status: 404 });
  return value;
}

export const meta: Route.MetaFunction = ({ params }) => [{ title: `${params.section} · Sallyport` }];

export async function loader({ request, params, context }: Route.LoaderArgs) {
  const access = requireDevice(context);
  const section = sectionOf(params.section);
  const library = await loadSharedLibrary(access.organisation.id);
  const document = access.document;
  const names = editorNamesOf(document, library);
  const isAdmin = hasAtLeastRole(access.role, "admin");
  const { changesThroughProposals } = access.organisation;
  return {
    section,
    baseRevision: access.revision.number,
    // When changes go through proposals, the live editor is read-only but for an admin's break-glass save.
    canEdit: hasAtLeastRole(access.role, "engineer") && (!changesThroughProposals || isAdmin),
    policy: { changesThroughProposals, isAdmin },
    proposePath: hasAtLeastRole(access.role, PAGE_ROLES.proposeChange) ? `/o/${access.organisation.slug}/devices/${access.device.id}/proposals/new` : null,
    editing: new URL(request.url).searchParams.get("edit"),
    document,
    siteId: access.device.siteId,
    ruleView: section === "rules" ? await readRuleView(request) : "detailed",
    sites: section === "settings" ? (await listSites(access.organisation.id)).map((site) => ({ id: site.id, name: site.name })) : [],
    names,
  };
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const access = requireDevice(context, "engineer");
  const section = sectionOf(params.section);
  const values = formValuesWithLists(await readForm(request));
  if (section === "settings" && values.intent === "delete-device") {
    if (Number(values.baseRevision) !== access.revision.number) {
      return invalidForm({ form: `Not deleted: the device changed since you opened it (now revision r${access.revision.number}). Review it, then delete again.` }, values, 409);
    }
    if (values.confirmName !== access.device.name) return invalidForm({ confirmName: `Type the device name (${access.device.name}) to confirm.` }, values);
    try {
      // Under "changes go through proposals" only an admin's break-glass deletion, with a reason.
      await deleteDevice(access.organisation.id, access.device.id, actorOf(access, clientAddressOf(context)), { changesThroughProposals: access.organisation.changesThroughProposals, role: access.role, breakGlassReason: values.breakGlassReason });
    } catch (error) {
      return refusedForm(error, values);
    }
    throw redirect(`/o/${access.organisation.slug}/devices`, { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message: `Device ${access.device.name} and its revisions were deleted.` }) } });
  }
  const baseRevision = revisionNumberOf(values.baseRevision);
  const planned = planDeviceEdit(values.intent, values);
  if (!planned) return unknownIntent(values.intent);
  if (!planned.ok) return invalidForm(planned.errors, values);
  // The document the engine checked, kept so its problems can be put beside this form's fields.
  const attempt = new PlannedAttempt(planned.plan);
  const override = values.overrideReason?.trim() ? { reason: values.overrideReason } : null;
  try {
    // Under the organisation's change policy: the gate, and whether changes go through proposals.
    const saved = await saveDirectEdit(
      { organisationId: access.organisation.id, deviceId: access.device.id, deviceName: access.device.name, slug: access.organisation.slug },
      access.organisation,
      baseRevision,
      attempt.apply,
      actorOf(access, clientAddressOf(context)),
      planned.plan.message,
      { siteId: planned.plan.siteId, override },
      { appOrigin: appOrigin() },
    );
    const overridden = saved.note?.action === "device.break-glass-saved" ? " (break-glass: the reviewers were e-mailed)" : saved.note ? " (past the lockout guard, with your reason)" : "";
    const message = saved.changes.length === 0 && !planned.plan.siteId ? "Nothing changed; no new revision." : `${planned.plan.message}. Saved as revision r${saved.number}${overridden}.`;
    throw redirect(`/o/${access.organisation.slug}/devices/${access.device.id}/model/${section}`, { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message }) } });
  } catch (error) {
    return refusedDeviceEdit(error, values, attempt, () => loadSharedLibrary(access.organisation.id));
  }
}

export default function DeviceSection({ loaderData, actionData }: Route.ComponentProps) {
  const conflict = actionData?.conflict ? { ...actionData.conflict, changes: [...actionData.conflict.changes], message: actionData.errors.form ?? "" } : undefined;
  const { policy, proposePath } = loaderData;
  const errors = actionData?.errors ?? {};
  const reasons = actionData?.reasons ?? [];
  // Refused by the change policy or the lockout guard: the panel says why and offers the ways on.
  const guarded = reasons.length > 0 || "overrideReason" in errors;
  return (
    <>
      {policy.changesThroughProposals ? (
        <p role="note" className="mb-4 rounded-card border border-brass/40 bg-brass-soft px-4 py-3 text-sm">
          In this organisation changes go through proposals: {proposePath ? <a href={proposePath} className="font-medium text-harbour underline underline-offset-4">propose a change</a> : "engineers propose them"}, a reviewer approves it, and it is applied in its change window.
          {policy.isAdmin ? " As an admin you can still save here in an emergency (break-glass), with a written reason." : ""}
        </p>
      ) : null}
      {guarded && actionData ? (
        <GuardPanel
          message={errors.form ?? ""}
          reasons={reasons}
          values={actionData.values}
          overrideError={errors.overrideReason === errors.form ? undefined : errors.overrideReason}
          canOverride={policy.isAdmin}
          breakGlass={policy.changesThroughProposals}
          proposePath={proposePath}
          minimum={WRITTEN_REASON_MIN}
          effect={actionData.effect}
        />
      ) : null}
      <SectionEditor {...loaderData} errors={guarded ? {} : errors} values={actionData?.values ?? {}} conflict={conflict} deleteNeedsReason={policy.changesThroughProposals} />
    </>
  );
}
