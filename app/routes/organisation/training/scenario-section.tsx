import { data, redirect } from "react-router";
import type { Route } from "./+types/scenario-section";
import { serializeFlash } from "#server/auth/flash.server";
import { actorOf } from "#server/http/actor.server";
import { formValuesWithLists, planDeviceEdit, PlannedAttempt, refusedDeviceEdit } from "#server/http/device-forms.server";
import { invalidForm, readForm, unknownIntent } from "#server/http/form.server";
import { refusedPage } from "#server/http/refusals.server";
import { clientAddressOf } from "#server/http/request-context.server";
import { readRuleView } from "#server/http/preferences.server";
import { editScenarioModel, findScenario } from "#server/services/training-scenarios.server";
import { requireLearner, requireTrainer } from "#server/training/access.server";
import { trainingIdOf, trainingPath } from "#server/training/routes.server";
import { EMPTY_LIBRARY } from "#server/workspace/index";
import { editorNamesOf } from "#app/components/device/name-groups";
import { SectionEditor } from "#app/components/device/section-editor";
import { isDeviceSection, type DeviceSection } from "#app/components/device/sections";
import { ScenarioBanner, ScenarioNav } from "#app/components/training/scenario-nav";
import { PageErrorBoundary } from "#app/components/error-panel";

// A teaching scenario's model in the device editor's own sections (docs/decisions/016): the same
// forms, plans and checks as a device, saved to the scenario (a version, no revisions). A
// scenario has no site: the settings form's site field carries this placeholder, ignored.
const NO_SITE = "00000000-0000-0000-0000-000000000000";

export const ErrorBoundary = PageErrorBoundary;

function sectionOf(value: string | undefined): DeviceSection {
  if (!isDeviceSection(value)) throw data({ message: `A scenario has no section "${String(value).slice(0, 40)}".` }, { status: 404 });
  return value;
}

export const meta: Route.MetaFunction = ({ params }) => [{ title: `Scenario · ${params.section} · Sallyport` }];

export async function loader({ request, params, context }: Route.LoaderArgs) {
  const access = requireLearner(context);
  const section = sectionOf(params.section);
  const scenarioId = trainingIdOf(params.scenario, "scenario");
  try {
    const scenario = await findScenario({ organisationId: access.organisation.id, scenarioId });
    const document = scenario.document;
    return {
      section,
      title: scenario.title,
      trainingPath: trainingPath(access.organisation.slug),
      scenarioPath: trainingPath(access.organisation.slug, "scenarios", scenario.id),
      baseRevision: scenario.version,
      canEdit: access.trainer,
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
  const scenarioId = trainingIdOf(params.scenario, "scenario");
  const values = formValuesWithLists(await readForm(request));
  if (values.intent === "delete-device") return unknownIntent(values.intent);
  const planned = planDeviceEdit(values.intent, values);
  if (!planned) return unknownIntent(values.intent);
  if (!planned.ok) return invalidForm(planned.errors, values);
  const attempt = new PlannedAttempt(planned.plan);
  try {
    const saved = await editScenarioModel({ organisationId: access.organisation.id, scenarioId }, Number(values.baseRevision), attempt.apply, planned.plan.message, actorOf(access, clientAddressOf(context)));
    const message = saved.changed ? `${planned.plan.message} in the scenario (version ${saved.version}).` : "Nothing changed in the scenario.";
    throw redirect(`${trainingPath(access.organisation.slug, "scenarios", scenarioId)}/model/${section}`, { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message }) } });
  } catch (error) {
    return refusedDeviceEdit(error, values, attempt, async () => EMPTY_LIBRARY);
  }
}

export default function ScenarioSection({ loaderData, actionData }: Route.ComponentProps) {
  return (
    <>
      <ScenarioBanner title={loaderData.title} deviceName={loaderData.document.device.name} trainingPath={loaderData.trainingPath} />
      <ScenarioNav scenarioPath={loaderData.scenarioPath} />
      <SectionEditor {...loaderData} draft errors={actionData?.errors ?? {}} values={actionData?.values ?? {}} />
    </>
  );
}
