import { Form, Link, redirect, useNavigation } from "react-router";
import type { Route } from "./+types/lesson";
import { readForm, formValues, unknownIntent } from "#server/http/form.server";
import { refusedForm, refusedPage } from "#server/http/refusals.server";
import { attemptsOfLesson, findLesson, startAttempt, stepsOf } from "#server/services/training-lessons.server";
import { findScenario } from "#server/services/training-scenarios.server";
import { openAssignmentFor } from "#server/services/training-assignments.server";
import { requireLearner } from "#server/training/access.server";
import { trainingIdOf, trainingPath } from "#server/training/routes.server";
import { isLayer, LAYER_LABELS } from "#server/engine/vocabulary";
import { PageErrorBoundary } from "#app/components/error-panel";
import { MarkdownText } from "#app/components/markdown";
import { Button, ButtonLink } from "#app/components/ui/button";
import { Card, PageHeader } from "#app/components/ui/card";
import { FormError } from "#app/components/ui/field";
import { Table, Td, Th } from "#app/components/ui/table";
import { Time } from "#app/components/ui/time";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data && "title" in data ? data.title : "Lesson"} · Training · Sallyport` }];
export const ErrorBoundary = PageErrorBoundary;

export async function loader({ params, context }: Route.LoaderArgs) {
  const access = requireLearner(context);
  const lessonId = trainingIdOf(params.lesson, "lesson");
  const ref = { organisationId: access.organisation.id, lessonId };
  try {
    const lesson = await findLesson(ref);
    const scenario = await findScenario({ organisationId: access.organisation.id, scenarioId: lesson.scenarioId });
    const attempts = await attemptsOfLesson(ref, { userId: access.user.id, trainer: access.trainer });
    const base = trainingPath(access.organisation.slug);
    return {
      title: lesson.title,
      introduction: lesson.introduction,
      probes: stepsOf(lesson).length,
      scenario: { title: scenario.title, path: `${base}/scenarios/${scenario.id}` },
      lessonPath: `${base}/lessons/${lesson.id}`,
      lessonId: lesson.id,
      assignPath: `${base}/assignments/new`,
      trainer: access.trainer,
      myUserId: access.user.id,
      attempts: attempts.map((attempt) => ({ ...attempt, path: `${base}/attempts/${attempt.id}`, misses: attempt.misses.map((miss) => ({ probe: miss.probe, layer: isLayer(miss.layer) ? LAYER_LABELS[miss.layer] : miss.layer })) })),
      now: new Date().toISOString(),
    };
  } catch (error) {
    return refusedPage(error);
  }
}

export async function action({ request, params, context }: Route.ActionArgs) {
  // Everyone may take a lesson (docs/decisions/016).
  const access = requireLearner(context);
  const lessonId = trainingIdOf(params.lesson, "lesson");
  const values = formValues(await readForm(request));
  if (values.intent !== "start") return unknownIntent(values.intent);
  try {
    // Begun from the lesson's own page, it still counts for the member's open assignment of it.
    const assignmentId = await openAssignmentFor(access.organisation.id, access.user.id, { kind: "lesson", id: lessonId });
    const attempt = await startAttempt({ organisationId: access.organisation.id, lessonId }, access.user.id, { assignmentId });
    // The attempt opens at its first probe, nothing revealed.
    return redirect(trainingPath(access.organisation.slug, "attempts", attempt.id));
  } catch (error) {
    return refusedForm(error, values);
  }
}

export default function Lesson({ loaderData, actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const mine = loaderData.attempts.filter((attempt) => attempt.userId === loaderData.myUserId);
  const open = mine.find((attempt) => attempt.finishedAt === null);
  return (
    <>
      <PageHeader
        title={loaderData.title}
        description={
          <>
            {loaderData.probes} {loaderData.probes === 1 ? "probe" : "probes"} on the scenario{" "}
            <Link to={loaderData.scenario.path} className="text-harbour underline underline-offset-4">
              {loaderData.scenario.title}
            </Link>
            . Predict what each layer does before it is revealed; every prediction is scored.
          </>
        }
        actions={
          loaderData.trainer ? (
            <>
              <ButtonLink variant="secondary" to={`${loaderData.lessonPath}/edit`}>
                Edit lesson
              </ButtonLink>
              <ButtonLink variant="secondary" to={`${loaderData.lessonPath}/present`}>
                Present
              </ButtonLink>
              <ButtonLink variant="secondary" to={`${loaderData.assignPath}?target=lesson:${loaderData.lessonId}`}>
                Assign
              </ButtonLink>
            </>
          ) : null
        }
      />
      <div className="space-y-6">
        {loaderData.introduction ? (
          <Card className="max-w-3xl p-5">
            <MarkdownText className="text-sm">{loaderData.introduction}</MarkdownText>
          </Card>
        ) : null}
        <div className="flex flex-wrap items-center gap-3">
          <FormError message={actionData?.errors.form} />
          <Form method="post">
            <input type="hidden" name="intent" value="start" />
            <Button type="submit" disabled={navigation.state === "submitting" || loaderData.probes === 0}>
              {mine.length > 0 ? "Begin again" : "Begin the lesson"}
            </Button>
          </Form>
          {open ? (
            <Link to={open.path} className="text-sm text-harbour underline underline-offset-4">
              Continue where you stopped
            </Link>
          ) : null}
          {loaderData.probes === 0 ? <p className="text-sm text-ink-muted">No probes yet: a trainer adds them.</p> : null}
        </div>
        <section aria-labelledby="attempts-heading">
          <h2 id="attempts-heading" className="mb-2 text-sm font-semibold">
            {loaderData.trainer ? "Results" : "Your attempts"}
          </h2>
          {loaderData.attempts.length === 0 ? (
            <p className="text-sm text-ink-muted">Nobody has taken it yet.</p>
          ) : (
            <Table>
              <caption className="sr-only">{loaderData.trainer ? "Every attempt at this lesson" : "Your attempts at this lesson"}</caption>
              <thead>
                <tr>
                  {loaderData.trainer ? <Th>Member</Th> : null}
                  <Th>Started</Th>
                  <Th>Score</Th>
                  <Th>Wrong predictions</Th>
                  <Th className="text-right">Attempt</Th>
                </tr>
              </thead>
              <tbody>
                {loaderData.attempts.map((attempt) => (
                  <tr key={attempt.id}>
                    {loaderData.trainer ? <Td className="font-medium">{attempt.name}</Td> : null}
                    <Td className="text-ink-muted">
                      <Time at={attempt.startedAt} now={loaderData.now} />
                    </Td>
                    <Td className="tabular">
                      {attempt.points} of {attempt.possible}
                      {attempt.finishedAt ? "" : " so far"}
                    </Td>
                    <Td className="text-sm">{attempt.misses.length ? attempt.misses.map((miss) => `probe ${miss.probe}: ${miss.layer}`).join("; ") : "none"}</Td>
                    <Td className="text-right">
                      <Link to={attempt.path} className="text-sm text-harbour underline underline-offset-4" aria-label={`Open the attempt of ${attempt.name}, started ${attempt.startedAt}`}>
                        Open
                      </Link>
                    </Td>
                  </tr>
                ))}
              </tbody>
            </Table>
          )}
        </section>
      </div>
    </>
  );
}
