import type { Route } from "./+types/scenario-section";
import { actorOf } from "#server/http/actor.server";
import { refusedPage } from "#server/http/refusals.server";
import { clientAddressOf } from "#server/http/request-context.server";
import { editScenarioModel, findScenario } from "#server/services/training-scenarios.server";
import { requireLearner, requireTrainer } from "#server/training/access.server";
import { trainingIdOf, trainingPath } from "#server/training/routes.server";
import { SectionEditor } from "#app/components/device/section-editor";
import { ScenarioBanner, ScenarioNav } from "#app/components/training/scenario-nav";
import { PageErrorBoundary } from "#app/components/error-panel";
import { editModelSection, sectionEditorData, sectionOf } from "./model-section.server";

// A teaching scenario's model in the device editor's own sections (docs/decisions/016): the same
// forms, plans and checks as a device, saved to the scenario (a version, no revisions).

export const ErrorBoundary = PageErrorBoundary;

export const meta: Route.MetaFunction = ({ params }) => [{ title: `Scenario · ${params.section} · Sallyport` }];

export async function loader({ request, params, context }: Route.LoaderArgs) {
  const access = requireLearner(context);
  const section = sectionOf(params.section, "A scenario");
  const scenarioId = trainingIdOf(params.scenario, "scenario");
  try {
    const scenario = await findScenario({ organisationId: access.organisation.id, scenarioId });
    return {
      ...(await sectionEditorData(request, section, scenario.document, scenario.version, access.trainer)),
      title: scenario.title,
      trainingPath: trainingPath(access.organisation.slug),
      scenarioPath: trainingPath(access.organisation.slug, "scenarios", scenario.id),
    };
  } catch (error) {
    return refusedPage(error);
  }
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const access = requireTrainer(context);
  const section = sectionOf(params.section, "A scenario");
  const scenarioId = trainingIdOf(params.scenario, "scenario");
  return editModelSection(
    request,
    async (apply, message, values) => {
      const saved = await editScenarioModel({ organisationId: access.organisation.id, scenarioId }, Number(values.baseRevision), apply, message, actorOf(access, clientAddressOf(context)));
      return saved.changed ? `${message} in the scenario (version ${saved.version}).` : "Nothing changed in the scenario.";
    },
    `${trainingPath(access.organisation.slug, "scenarios", scenarioId)}/model/${section}`,
  );
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
