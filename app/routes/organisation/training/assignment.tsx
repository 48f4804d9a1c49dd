import { Form, Link, redirect, useNavigation } from "react-router";
import type { Route } from "./+types/assignment";
import { formValues, readForm, unknownIntent } from "#server/http/form.server";
import { refusedForm, refusedPage } from "#server/http/refusals.server";
import { assignmentRow, assignmentView, startAssignedLesson } from "#server/services/training-assignments.server";
import { requireLearner } from "#server/training/access.server";
import { trainingIdOf, trainingPath } from "#server/training/routes.server";
import { PageErrorBoundary } from "#app/components/error-panel";
import { AssignmentStatusBadge, scoreWords } from "#app/components/training/assignment-status";
import { Button, ButtonLink } from "#app/components/ui/button";
import { Card, PageHeader } from "#app/components/ui/card";
import { FormError } from "#app/components/ui/field";
import { Time } from "#app/components/ui/time";

// One assignment: what the e-mailed link opens. Its assignee begins it here (the attempt records
// the assignment); a trainer reads it and may withdraw it (through the list's action); anyone else gets 404, exactly as for
// one that does not exist (docs/decisions/016, "Assignments and progress").

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data && "assignment" in data ? data.assignment.title : "Assignment"} · Training · Sallyport` }];
export const ErrorBoundary = PageErrorBoundary;

export async function loader({ params, context }: Route.LoaderArgs) {
  const access = requireLearner(context);
  const assignmentId = trainingIdOf(params.assignment, "assignment");
  const base = trainingPath(access.organisation.slug);
  try {
    const row = await assignmentRow({ organisationId: access.organisation.id, assignmentId }, { userId: access.user.id, trainer: access.trainer });
    return { assignment: assignmentView(row, base), mine: row.assignee.userId === access.user.id, trainer: access.trainer, base, now: new Date().toISOString() };
  } catch (error) {
    return refusedPage(error);
  }
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const access = requireLearner(context);
  const values = formValues(await readForm(request));
  const assignmentId = trainingIdOf(params.assignment, "assignment");
  if (values.intent !== "start") return unknownIntent(values.intent);
  try {
    const attempt = await startAssignedLesson({ organisationId: access.organisation.id, assignmentId }, { userId: access.user.id, trainer: access.trainer });
    return redirect(trainingPath(access.organisation.slug, "attempts", attempt.id));
  } catch (error) {
    return refusedForm(error, values);
  }
}

export default function Assignment({ loaderData, actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const { assignment, mine, trainer, now } = loaderData;
  const finished = assignment.status.state === "done" || assignment.status.state === "done-late";
  return (
    <>
      <PageHeader
        title={assignment.title}
        description={
          <>
            A {assignment.kind} assigned to {mine ? "you" : assignment.assignee.name} by {assignment.assignedBy}, due <Time at={assignment.dueAt} />.
          </>
        }
        actions={
          <ButtonLink variant="secondary" to={mine ? `${loaderData.base}/mine` : `${loaderData.base}/assignments`}>
            {mine ? "My training" : "All assignments"}
          </ButtonLink>
        }
      />
      <div className="max-w-3xl space-y-5">
        <FormError message={actionData?.errors.form} />
        <Card className="space-y-3 p-5">
          <dl className="grid grid-cols-[auto_1fr] gap-x-4 gap-y-2 text-sm">
            <dt className="text-ink-muted">Status</dt>
            <dd>
              <AssignmentStatusBadge status={assignment.status} />
            </dd>
            <dt className="text-ink-muted">Due</dt>
            <dd>
              <Time at={assignment.dueAt} now={now} />
            </dd>
            <dt className="text-ink-muted">Score</dt>
            <dd className="tabular">{scoreWords(assignment.status)}</dd>
            {assignment.status.finishedAt ? (
              <>
                <dt className="text-ink-muted">Finished</dt>
                <dd>
                  <Time at={assignment.status.finishedAt} />
                  {assignment.status.state === "done-late" ? " — after the due date, marked late" : ""}
                </dd>
              </>
            ) : null}
          </dl>
          {assignment.note ? (
            <div>
              <h2 className="text-sm font-semibold">Note from the trainer</h2>
              <p className="mt-1 whitespace-pre-line break-words text-sm">{assignment.note}</p>
            </div>
          ) : null}
        </Card>
        <div className="flex flex-wrap items-center gap-3">
          {mine && assignment.kind === "lesson" && !finished ? (
            <Form method="post">
              <input type="hidden" name="intent" value="start" />
              <Button type="submit" disabled={navigation.state === "submitting"}>
                {assignment.status.state === "in-progress" ? "Begin again" : "Begin the lesson"}
              </Button>
            </Form>
          ) : null}
          {mine && assignment.kind === "drill" && !finished ? <ButtonLink to={assignment.targetPath}>Open the drill</ButtonLink> : null}
          {assignment.status.attemptPath ? (
            <Link to={assignment.status.attemptPath} className="text-sm text-harbour underline underline-offset-4">
              {!mine ? "Open the attempt" : finished ? "Open the answered attempt" : "Continue where you stopped"}
            </Link>
          ) : null}
          <Link to={assignment.targetPath} className="text-sm text-harbour underline underline-offset-4">
            The {assignment.kind}'s page
          </Link>
          {trainer ? (
            // Withdrawn by the assignment list's action, which says so there.
            <Form method="post" action={`${loaderData.base}/assignments`} className="ml-auto">
              <input type="hidden" name="intent" value="withdraw" />
              <input type="hidden" name="assignmentId" value={assignment.id} />
              <Button type="submit" variant="ghost-danger" disabled={navigation.state === "submitting"}>
                Withdraw the assignment
              </Button>
            </Form>
          ) : null}
        </div>
      </div>
    </>
  );
}
