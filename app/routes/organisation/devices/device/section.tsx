import { data, redirect } from "react-router";
import type { Route } from "./+types/section";
import { serializeFlash } from "#server/auth/flash.server";
import { hasAtLeastRole } from "#server/auth/roles";
import { BUILTIN_SERVICES } from "#server/engine/index";
import { actorOf } from "#server/http/actor.server";
import { requireDevice, revisionNumberOf } from "#server/http/device-access.server";
import { formValuesWithLists, planDeviceEdit, PlannedAttempt, refusedDeviceEdit } from "#server/http/device-forms.server";
import { invalidForm, readForm, unknownIntent } from "#server/http/form.server";
import { deleteDevice, loadSharedLibrary, saveEdit } from "#server/services/devices.server";
import { listSites } from "#server/services/sites.server";
import { SectionEditor } from "#app/components/device/section-editor";
import type { ListedService } from "#app/components/device/listener-toggles";
import { isDeviceSection, type DeviceSection } from "#app/components/device/sections";
import type { EditorNames } from "#app/components/device/name-groups";
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
  const serviceCatalogue: ListedService[] = [
    ...BUILTIN_SERVICES.map((service) => ({ name: service.name, kind: service.kind, protocol: service.protocol, port: service.port, builtin: true })),
    ...document.services.map((service) => ({ name: service.name, kind: service.kind, protocol: service.protocol, port: service.port, builtin: false })),
  ];
  // A device object of the same name takes precedence over a shared one.
  const ownAddressNames = new Set([...document.addresses, ...document.addressGroups].map((object) => object.name));
  const notShadowed = (objects: Array<{ name: string }>) => objects.map((object) => object.name).filter((name) => !ownAddressNames.has(name));
  const names: EditorNames & { services: ListedService[] } = {
    interfaces: document.interfaces.map((entry) => entry.name),
    services: serviceCatalogue,
    serviceGroups: document.serviceGroups.map((group) => group.name),
    addressObjects: document.addresses.map((object) => object.name),
    addressGroups: document.addressGroups.map((group) => group.name),
    sharedAddressObjects: notShadowed(library.addresses),
    sharedAddressGroups: notShadowed(library.addressGroups),
    schedules: document.schedules.map((schedule) => schedule.name),
  };
  return {
    section,
    baseRevision: access.revision.number,
    canEdit: hasAtLeastRole(access.role, "engineer"),
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
    await deleteDevice(access.organisation.id, access.device.id, actorOf(access, clientAddressOf(context)));
    throw redirect(`/o/${access.organisation.slug}/devices`, { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message: `Device ${access.device.name} and its revisions were deleted.` }) } });
  }
  const baseRevision = revisionNumberOf(values.baseRevision);
  const planned = planDeviceEdit(values.intent, values);
  if (!planned) return unknownIntent(values.intent);
  if (!planned.ok) return invalidForm(planned.errors, values);
  // The document the engine checked, kept so its problems can be put beside this form's fields.
  const attempt = new PlannedAttempt(planned.plan);
  try {
    const saved = await saveEdit(access.organisation.id, access.device.id, baseRevision, attempt.apply, actorOf(access, clientAddressOf(context)), planned.plan.message, { siteId: planned.plan.siteId });
    const message = saved.changes.length === 0 && !planned.plan.siteId ? "Nothing changed; no new revision." : `${planned.plan.message}. Saved as revision r${saved.number}.`;
    throw redirect(`/o/${access.organisation.slug}/devices/${access.device.id}/model/${section}`, { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message }) } });
  } catch (error) {
    return refusedDeviceEdit(error, values, attempt, () => loadSharedLibrary(access.organisation.id));
  }
}

export default function DeviceSection({ loaderData, actionData }: Route.ComponentProps) {
  const conflict = actionData?.conflict ? { ...actionData.conflict, changes: [...actionData.conflict.changes], message: actionData.errors.form ?? "" } : undefined;
  return <SectionEditor {...loaderData} errors={actionData?.errors ?? {}} values={actionData?.values ?? {}} conflict={conflict} />;
}
