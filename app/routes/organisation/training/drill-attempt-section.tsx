import { data, redirect } from "react-router";
import type { Route } from "./+types/drill-attempt-section";
import { serializeFlash } from "#server/auth/flash.server";
import { formValuesWithLists, planDeviceEdit, PlannedAttempt, refusedDeviceEdit } from "#server/http/device-forms.server";
import { invalidForm, readForm, unknownIntent } from "#server/http/form.server";
import { refusedPage } from "#server/http/refusals.server";
import { readRuleView } from "#server/http/preferences.server";
import { drillScriptOfAttempt, editSandbox, findDrillAttempt } from "#server/services/training-drills.server";
import { requireLearner } from "#server/training/access.server";
import { trainingIdOf, trainingPath } from "#server/training/routes.server";
import { EMPTY_LIBRARY } from "#server/workspace/index";
import { editorNamesOf } from "#app/components/device/name-groups";
import { SectionEditor } from "#app/components/device/section-editor";
import { isDeviceSection, type DeviceSection } from "#app/components/device/sections";
import { ScenarioNav } from "#app/components/training/scenario-nav";
import { PageErrorBoundary } from "#app/components/error-panel";

// A repair drill's sandbox: the attempt's own copy of the scenario's model, edited in the device
// editor's sections with every check of the device editor. An edit that makes the model invalid
// is said beside its field and nothing is saved; the scenario itself is never touched.
const NO_SITE = "00000000-0000-0000-0000-000000000000";

export const ErrorBoundary = PageErrorBoundary;
export const meta: Route.MetaFunction = ({ params }) => [{ title: `Sandbox · ${params.section} · Training · Sallyport` }];

function sectionOf(value: string | undefined): DeviceSection {
  if (!isDeviceSection(value)) throw data({ message: `A model has no section "${String(value).slice(0, 40)}".` }, { status: 404 });
  return value;
}

export async function loader({ request, params, context }: Route.LoaderArgs) {
  const access = requireLearner(context);
  const section = sectionOf(params.section);
  const attemptId = trainingIdOf(params.attempt, "attempt");
  try {
    const attempt = await findDrillAttempt({ organisationId: access.organisation.id, attemptId }, { userId: access.user.id, trainer: access.trainer });
    const script = drillScriptOfAttempt(attempt);
    if (script.kind !== "fix") throw data({ message: "Only a repair drill has a sandbox." }, { status: 404 });
    const document = script.sandbox;
    return {
      section,
      title: attempt.title,
      attemptPath: trainingPath(access.organisation.slug, "drills", "attempts", attempt.id),
      baseRevision: 1,
      // Only the member taking it, and only until it passes.
      canEdit: attempt.userId === access.user.id && attempt.finishedAt === null,
      editing: new URL(request.url).searchParams.get("edit"),
      document,
      siteId: NO_SITE,
      ruleView: section === "rules" ? await readRuleView(request) : ("detailed" as const),
      sites: [],
      names: editorNamesOf(document, EMPTY_LIBRARY),
    };
  } catch (error) {
    return refusedPage(error);
  }
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const access = requireLearner(context);
  const section = sectionOf(params.section);
  const attemptId = trainingIdOf(params.attempt, "attempt");
  const values = formValuesWithLists(await readForm(request));
  if (values.intent === "delete-device") return unknownIntent(values.intent);
  const planned = planDeviceEdit(values.intent, values);
  if (!planned) return unknownIntent(values.intent);
  if (!planned.ok) return invalidForm(planned.errors, values);
  const attempt = new PlannedAttempt(planned.plan);
  try {
    const changed = await editSandbox({ organisationId: access.organisation.id, attemptId }, { userId: access.user.id, trainer: access.trainer }, attempt.apply);
    const message = changed ? `${planned.plan.message} in your sandbox copy. Check your fix when you are ready.` : "Nothing changed in your sandbox copy.";
    throw redirect(`${trainingPath(access.organisation.slug, "drills", "attempts", attemptId)}/model/${section}`, { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message }) } });
  } catch (error) {
    return refusedDeviceEdit(error, values, attempt, async () => EMPTY_LIBRARY);
  }
}

export default function DrillAttemptSection({ loaderData, actionData }: Route.ComponentProps) {
  return (
    <>
      <div role="note" className="mb-4 rounded-card border-2 border-dashed border-harbour/50 bg-harbour-soft p-4">
        <p className="font-semibold text-harbour">{`Sandbox copy for “${loaderData.title}”`}</p>
        <p className="mt-1 text-sm">Your own copy of the scenario's model: edit it, then check your fix on the drill page. Nothing here changes the scenario or any device.</p>
      </div>
      <ScenarioNav scenarioPath={loaderData.attemptPath} overview={{ path: loaderData.attemptPath, label: "The drill and its goals" }} label="Sandbox sections" />
      <SectionEditor {...loaderData} draft errors={actionData?.errors ?? {}} values={actionData?.values ?? {}} />
    </>
  );
}
