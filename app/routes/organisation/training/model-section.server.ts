// What the training area's model editors share (a scenario's model, a repair drill's answer
// model, a trainee's sandbox copy): the device editor's sections, forms, plans and checks, each
// saved by its own service. A model outside the fleet has no site: the settings form's site
// field carries NO_SITE, ignored.
import { data, redirect } from "react-router";
import { serializeFlash } from "#server/auth/flash.server";
import { formValuesWithLists, planDeviceEdit, PlannedAttempt, refusedDeviceEdit } from "#server/http/device-forms.server";
import { invalidForm, readForm, unknownIntent } from "#server/http/form.server";
import { readRuleView } from "#server/http/preferences.server";
import type { DeviceModel } from "#server/engine/index";
import { EMPTY_LIBRARY, type ModelDocument } from "#server/workspace/index";
import { editorNamesOf } from "#app/components/device/name-groups";
import { isDeviceSection, type DeviceSection } from "#app/components/device/sections";

export const NO_SITE = "00000000-0000-0000-0000-000000000000";

/** The section named in the URL, else 404 ("A scenario has no section …"). */
export function sectionOf(value: string | undefined, what: string): DeviceSection {
  if (!isDeviceSection(value)) throw data({ message: `${what} has no section "${String(value).slice(0, 40)}".` }, { status: 404 });
  return value;
}

/** The section editor's data for a model outside the fleet. */
export async function sectionEditorData(request: Request, section: DeviceSection, document: DeviceModel, baseRevision: number, canEdit: boolean) {
  return {
    section,
    baseRevision,
    canEdit,
    editing: new URL(request.url).searchParams.get("edit"),
    document,
    siteId: NO_SITE,
    ruleView: section === "rules" ? await readRuleView(request) : ("detailed" as const),
    sites: [],
    names: editorNamesOf(document, EMPTY_LIBRARY),
  };
}

/**
 * One posted edit of a section: planned from the form, applied by `save` (which validates and
 * stores it, or throws), then back to `to` with the toast `save` returns. A bad edit answers the
 * form with its messages beside the fields, and nothing is saved.
 */
export async function editModelSection(request: Request, save: (apply: (document: ModelDocument) => ModelDocument, message: string, values: Record<string, string>) => Promise<string>, to: string) {
  const values = formValuesWithLists(await readForm(request));
  if (values.intent === "delete-device") return unknownIntent(values.intent);
  const planned = planDeviceEdit(values.intent, values);
  if (!planned) return unknownIntent(values.intent);
  if (!planned.ok) return invalidForm(planned.errors, values);
  const attempt = new PlannedAttempt(planned.plan);
  try {
    const message = await save(attempt.apply, planned.plan.message, values);
    throw redirect(to, { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message }) } });
  } catch (error) {
    return refusedDeviceEdit(error, values, attempt, async () => EMPTY_LIBRARY);
  }
}
