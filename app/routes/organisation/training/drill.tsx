import { Form, Link, redirect, useNavigation } from "react-router";
import type { Route } from "./+types/drill";
import { formValues, readForm, unknownIntent } from "#server/http/form.server";
import { refusedForm, refusedPage } from "#server/http/refusals.server";
import { openAssignmentFor } from "#server/services/training-assignments.server";
import { attemptsOfDrill, findDrill, startDrillAttempt } from "#server/services/training-drills.server";
import { findScenario } from "#server/services/training-scenarios.server";
import { requireLearner } from "#server/training/access.server";
import { trainingIdOf, trainingPath } from "#server/training/routes.server";
import { PageErrorBoundary } from "#app/components/error-panel";
import { MarkdownText } from "#app/components/markdown";
import { Button, ButtonLink } from "#app/components/ui/button";
import { Badge, Card, PageHeader } from "#app/components/ui/card";
import { FormError } from "#app/components/ui/field";
import { Table, Td, Th } from "#app/components/ui/table";
import { Time } from "#app/components/ui/time";
import { DRILL_KIND_HINTS, DRILL_KIND_LABELS } from "#app/utils/drill-words";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data && "title" in data ? data.title : "Drill"} · Training · Sallyport` }];
export const ErrorBoundary = PageErrorBoundary;

export async function loader({ params, context }: Route.LoaderArgs) {
  const access = requireLearner(context);
  const drillId = trainingIdOf(params.drill, "drill");
  const ref = { organisationId: access.organisation.id, drillId };
  try {
    const drill = await findDrill(ref);
    const scenario = await findScenario({ organisationId: access.organisation.id, scenarioId: drill.scenarioId });
    const attempts = await attemptsOfDrill(ref, { userId: access.user.id, trainer: access.trainer });
    const base = trainingPath(access.organisation.slug);
    return {
      title: drill.title,
      kind: drill.kind,
      introduction: drill.introduction,
      scenario: { title: scenario.title, path: `${base}/scenarios/${scenario.id}` },
      drillPath: `${base}/drills/${drill.id}`,
      trainer: access.trainer,
      myName: access.user.name,
      attempts: attempts.map((attempt) => ({ ...attempt, path: `${base}/drills/attempts/${attempt.id}` })),
      now: new Date().toISOString(),
    };
  } catch (error) {
    return refusedPage(error);
  }
}

export async function action({ request, params, context }: Route.ActionArgs) {
  // Everyone may take a drill (docs/decisions/016).
  const access = requireLearner(context);
  const drillId = trainingIdOf(params.drill, "drill");
  const values = formValues(await readForm(request));
  if (values.intent !== "start") return unknownIntent(values.intent);
  try {
    // Begun from the drill's page, it counts for the member's open assignment of it.
    const assignmentId = await openAssignmentFor(access.organisation.id, access.user.id, { kind: "drill", id: drillId });
    const attempt = await startDrillAttempt({ organisationId: access.organisation.id, drillId }, access.user.id, { assignmentId });
    return redirect(trainingPath(access.organisation.slug, "drills", "attempts", attempt.id));
  } catch (error) {
    return refusedForm(error, values);
  }
}

export default function Drill({ loaderData, actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const open = loaderData.trainer ? undefined : loaderData.attempts.find((attempt) => attempt.finishedAt === null);
  return (
    <>
      <PageHeader
        title={loaderData.title}
        description={
          <>
            <Badge tone="harbour">{DRILL_KIND_LABELS[loaderData.kind]}</Badge> on the scenario{" "}
            <Link to={loaderData.scenario.path} className="text-harbour underline underline-offset-4">
              {loaderData.scenario.title}
            </Link>
            . {DRILL_KIND_HINTS[loaderData.kind]}
          </>
        }
        actions={
          loaderData.trainer ? (
            <ButtonLink variant="secondary" to={`${loaderData.drillPath}/edit`}>
              Edit drill
            </ButtonLink>
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
            <Button type="submit" disabled={navigation.state === "submitting"}>
              Begin the drill
            </Button>
          </Form>
          {open ? (
            <Link to={open.path} className="text-sm text-harbour underline underline-offset-4">
              Continue where you stopped
            </Link>
          ) : null}
        </div>
        <section aria-labelledby="attempts-heading">
          <h2 id="attempts-heading" className="mb-2 text-sm font-semibold">
            {loaderData.trainer ? "Results" : "Your attempts"}
          </h2>
          {loaderData.attempts.length === 0 ? (
            <p className="text-sm text-ink-muted">Nobody has taken it yet.</p>
          ) : (
            <Table>
              <caption className="sr-only">{loaderData.trainer ? "Every attempt at this drill" : "Your attempts at this drill"}</caption>
              <thead>
                <tr>
                  {loaderData.trainer ? <Th>Member</Th> : null}
                  <Th>Started</Th>
                  <Th>Score</Th>
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
