import { data } from "react-router";
import type { Route } from "./+types/drill-answer-section";
import { actorOf } from "#server/http/actor.server";
import { refusedPage } from "#server/http/refusals.server";
import { clientAddressOf } from "#server/http/request-context.server";
import { editFixAnswer, findDrill, fixAnswerOf } from "#server/services/training-drills.server";
import { findScenario } from "#server/services/training-scenarios.server";
import { requireTrainer } from "#server/training/access.server";
import { trainingIdOf, trainingPath } from "#server/training/routes.server";
import { SectionEditor } from "#app/components/device/section-editor";
import { ScenarioNav } from "#app/components/training/scenario-nav";
import { PageErrorBoundary } from "#app/components/error-panel";
import { editModelSection, sectionEditorData, sectionOf } from "./model-section.server";

// A repair drill's answer model (trainers): the scenario edited to the right fix, in the device
// editor's own sections and checks, saved to the drill (audited as a drill change).

export const ErrorBoundary = PageErrorBoundary;
export const meta: Route.MetaFunction = ({ params }) => [{ title: `Answer model · ${params.section} · Training · Sallyport` }];

export async function loader({ request, params, context }: Route.LoaderArgs) {
  const access = requireTrainer(context);
  const section = sectionOf(params.section, "A model");
  const drillId = trainingIdOf(params.drill, "drill");
  try {
    const drill = await findDrill({ organisationId: access.organisation.id, drillId });
    if (drill.kind !== "fix") throw data({ message: "Only a repair drill has an answer model." }, { status: 404 });
    const scenario = await findScenario({ organisationId: access.organisation.id, scenarioId: drill.scenarioId });
    return { ...(await sectionEditorData(request, section, fixAnswerOf(drill, scenario.document), drill.version, true)), title: drill.title, drillPath: trainingPath(access.organisation.slug, "drills", drill.id) };
  } catch (error) {
    return refusedPage(error);
  }
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const access = requireTrainer(context);
  const section = sectionOf(params.section, "A model");
  const drillId = trainingIdOf(params.drill, "drill");
  return editModelSection(
    request,
    async (apply, message, values) => {
      const changed = await editFixAnswer({ organisationId: access.organisation.id, drillId }, Number(values.baseRevision), apply, message, actorOf(access, clientAddressOf(context)));
      return changed ? `${message} in the answer model.` : "Nothing changed in the answer model.";
    },
    `${trainingPath(access.organisation.slug, "drills", drillId)}/answer/model/${section}`,
  );
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
