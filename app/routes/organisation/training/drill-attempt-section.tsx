import { data } from "react-router";
import type { Route } from "./+types/drill-attempt-section";
import { refusedPage } from "#server/http/refusals.server";
import { drillScriptOfAttempt, editSandbox, findDrillAttempt } from "#server/services/training-drills.server";
import { requireLearner } from "#server/training/access.server";
import { trainingIdOf, trainingPath } from "#server/training/routes.server";
import { SectionEditor } from "#app/components/device/section-editor";
import { ScenarioNav } from "#app/components/training/scenario-nav";
import { PageErrorBoundary } from "#app/components/error-panel";
import { editModelSection, sectionEditorData, sectionOf } from "./model-section.server";

// A repair drill's sandbox: the attempt's own copy of the scenario's model, edited in the device
// editor's sections with every check of the device editor. An edit that makes the model invalid
// is said beside its field and nothing is saved; the scenario itself is never touched.

export const ErrorBoundary = PageErrorBoundary;
export const meta: Route.MetaFunction = ({ params }) => [{ title: `Sandbox · ${params.section} · Training · Sallyport` }];

export async function loader({ request, params, context }: Route.LoaderArgs) {
  const access = requireLearner(context);
  const section = sectionOf(params.section, "A model");
  const attemptId = trainingIdOf(params.attempt, "attempt");
  try {
    const attempt = await findDrillAttempt({ organisationId: access.organisation.id, attemptId }, { userId: access.user.id, trainer: access.trainer });
    const script = drillScriptOfAttempt(attempt);
    if (script.kind !== "fix") throw data({ message: "Only a repair drill has a sandbox." }, { status: 404 });
    // Only the member taking it edits, and only until it passes; the sandbox has no versions (one taker).
    const canEdit = attempt.userId === access.user.id && attempt.finishedAt === null;
    return { ...(await sectionEditorData(request, section, script.sandbox, 1, canEdit)), title: attempt.title, attemptPath: trainingPath(access.organisation.slug, "drills", "attempts", attempt.id) };
  } catch (error) {
    return refusedPage(error);
  }
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const access = requireLearner(context);
  const section = sectionOf(params.section, "A model");
  const attemptId = trainingIdOf(params.attempt, "attempt");
  return editModelSection(
    request,
    async (apply, message) => {
      const changed = await editSandbox({ organisationId: access.organisation.id, attemptId }, { userId: access.user.id, trainer: access.trainer }, apply);
      return changed ? `${message} in your sandbox copy. Check your fix when you are ready.` : "Nothing changed in your sandbox copy.";
    },
    `${trainingPath(access.organisation.slug, "drills", "attempts", attemptId)}/model/${section}`,
  );
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
