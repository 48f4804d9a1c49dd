import { data, redirect } from "react-router";
import type { Route } from "./+types/drill-answer-section";
import { serializeFlash } from "#server/auth/flash.server";
import { actorOf } from "#server/http/actor.server";
import { formValuesWithLists, planDeviceEdit, PlannedAttempt, refusedDeviceEdit } from "#server/http/device-forms.server";
import { invalidForm, readForm, unknownIntent } from "#server/http/form.server";
import { refusedPage } from "#server/http/refusals.server";
import { clientAddressOf } from "#server/http/request-context.server";
import { readRuleView } from "#server/http/preferences.server";
import { editFixAnswer, findDrill, fixAnswerOf } from "#server/services/training-drills.server";
import { findScenario } from "#server/services/training-scenarios.server";
import { requireTrainer } from "#server/training/access.server";
import { trainingIdOf, trainingPath } from "#server/training/routes.server";
import { EMPTY_LIBRARY } from "#server/workspace/index";
import { editorNamesOf } from "#app/components/device/name-groups";
import { SectionEditor } from "#app/components/device/section-editor";
import { isDeviceSection, type DeviceSection } from "#app/components/device/sections";
import { ScenarioNav } from "#app/components/training/scenario-nav";
import { PageErrorBoundary } from "#app/components/error-panel";

// A repair drill's answer model (trainers): the scenario edited to the right fix, in the device
// editor's own sections and checks, saved to the drill (audited as a drill change).
const NO_SITE = "00000000-0000-0000-0000-000000000000";

export const ErrorBoundary = PageErrorBoundary;
export const meta: Route.MetaFunction = ({ params }) => [{ title: `Answer model · ${params.section} · Training · Sallyport` }];

function sectionOf(value: string | undefined): DeviceSection {
  if (!isDeviceSection(value)) throw data({ message: `A model has no section "${String(value).slice(0, 40)}".` }, { status: 404 });
  return value;
}

export async function loader({ request, params, context }: Route.LoaderArgs) {
  const access = requireTrainer(context);
  const section = sectionOf(params.section);
  const drillId = trainingIdOf(params.drill, "drill");
  try {
    const drill = await findDrill({ organisationId: access.organisation.id, drillId });
    if (drill.kind !== "fix") throw data({ message: "Only a repair drill has an answer model." }, { status: 404 });
    const scenario = await findScenario({ organisationId: access.organisation.id, scenarioId: drill.scenarioId });
    const document = fixAnswerOf(drill, scenario.document);
    const drillPath = trainingPath(access.organisation.slug, "drills", drill.id);
    return {
      section,
      title: drill.title,
      drillPath,
      baseRevision: drill.version,
      canEdit: true,
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
  const access = requireTrainer(context);
  const section = sectionOf(params.section);
  const drillId = trainingIdOf(params.drill, "drill");
  const values = formValuesWithLists(await readForm(request));
  if (values.intent === "delete-device") return unknownIntent(values.intent);
  const planned = planDeviceEdit(values.intent, values);
  if (!planned) return unknownIntent(values.intent);
  if (!planned.ok) return invalidForm(planned.errors, values);
  const attempt = new PlannedAttempt(planned.plan);
  try {
    const changed = await editFixAnswer({ organisationId: access.organisation.id, drillId }, Number(values.baseRevision), attempt.apply, planned.plan.message, actorOf(access, clientAddressOf(context)));
    const message = changed ? `${planned.plan.message} in the answer model.` : "Nothing changed in the answer model.";
    throw redirect(`${trainingPath(access.organisation.slug, "drills", drillId)}/answer/model/${section}`, { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message }) } });
  } catch (error) {
    return refusedDeviceEdit(error, values, attempt, async () => EMPTY_LIBRARY);
  }
}

export default function DrillAnswerSection({ loaderData, actionData }: Route.ComponentProps) {
  return (
    <>
      <div role="note" className="mb-4 rounded-card border-2 border-dashed border-harbour/50 bg-harbour-soft p-4">
        <p className="font-semibold text-harbour">{`Answer model of “${loaderData.title}”`}</p>
        <p className="mt-1 text-sm">The scenario as you would fix it. Trainees never see it: their models are compared with it by effect.</p>
      </div>
      <ScenarioNav scenarioPath={`${loaderData.drillPath}/answer`} overview={{ path: `${loaderData.drillPath}/edit`, label: "Drill editor" }} label="Answer model sections" />
      <SectionEditor {...loaderData} draft errors={actionData?.errors ?? {}} values={actionData?.values ?? {}} />
    </>
  );
}
