import { Form, redirect, useNavigation } from "react-router";
import type { Route } from "./+types/assignments";
import { serializeFlash } from "#server/auth/flash.server";
import { actorOf } from "#server/http/actor.server";
import { formValues, readForm, unknownIntent } from "#server/http/form.server";
import { refusedForm } from "#server/http/refusals.server";
import { clientAddressOf } from "#server/http/request-context.server";
import { assignmentView, listAssignments, withdrawAssignment } from "#server/services/training-assignments.server";
import { requireTrainer } from "#server/training/access.server";
import { trainingIdOf, trainingPath } from "#server/training/routes.server";
import { PageErrorBoundary } from "#app/components/error-panel";
import { AssignmentCells } from "#app/components/training/assignment-status";
import { Button, ButtonLink } from "#app/components/ui/button";
import { PageHeader } from "#app/components/ui/card";
import { EmptyState } from "#app/components/ui/empty-state";
import { FormError } from "#app/components/ui/field";
import { Table, Td, Th } from "#app/components/ui/table";

// Every assignment of the organisation, for trainers: who has what, by when, where it stands;
// withdrawing one (docs/decisions/016, "Assignments and progress").

export const meta: Route.MetaFunction = () => [{ title: "Assignments · Training · Sallyport" }];
export const ErrorBoundary = PageErrorBoundary;

export async function loader({ context }: Route.LoaderArgs) {
  const access = requireTrainer(context);
  const base = trainingPath(access.organisation.slug);
  const rows = await listAssignments(access.organisation.id);
  return { base, assignments: rows.map((row) => assignmentView(row, base)), now: new Date().toISOString() };
}

export async function action({ request, context }: Route.ActionArgs) {
  const access = requireTrainer(context);
  const values = formValues(await readForm(request));
  if (values.intent !== "withdraw") return unknownIntent(values.intent);
  const assignmentId = trainingIdOf(values.assignmentId, "assignment");
  let title: string;
  try {
    title = await withdrawAssignment({ organisationId: access.organisation.id, assignmentId }, actorOf(access, clientAddressOf(context)));
  } catch (error) {
    return refusedForm(error, values);
  }
  throw redirect(trainingPath(access.organisation.slug, "assignments"), { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message: `Assignment of “${title}” withdrawn; attempts already made stay.` }) } });
}

export default function Assignments({ loaderData, actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const { base, assignments, now } = loaderData;
  return (
    <>
      <PageHeader
        title="Assignments"
        description="Lessons and drills given to members, soonest due first. Answers after the due date are accepted and marked late."
        actions={
          <>
            <ButtonLink variant="secondary" to={`${base}/progress`}>
              Progress
            </ButtonLink>
            <ButtonLink to={`${base}/assignments/new`}>Assign training</ButtonLink>
          </>
        }
      />
      <FormError message={actionData?.errors.form} />
      {assignments.length === 0 ? (
        <EmptyState title="Nothing assigned yet">Assign a lesson or a drill to members; each is e-mailed a link.</EmptyState>
      ) : (
        <Table>
          <caption className="sr-only">Every assignment, soonest due first</caption>
          <thead>
            <tr>
              <Th>Member</Th>
              <Th>Lesson or drill</Th>
              <Th>Due</Th>
              <Th>Status</Th>
              <Th>Score</Th>
              <Th className="text-right">Withdraw</Th>
            </tr>
          </thead>
          <tbody>
            {assignments.map((assignment) => (
              <tr key={assignment.id}>
                <Td className="font-medium">{assignment.assignee.name}</Td>
                <AssignmentCells assignment={assignment} now={now} />
                <Td className="text-right">
                  <Form method="post">
                    <input type="hidden" name="intent" value="withdraw" />
                    <input type="hidden" name="assignmentId" value={assignment.id} />
                    <Button type="submit" variant="secondary" size="sm" disabled={navigation.state === "submitting"} aria-label={`Withdraw “${assignment.title}” from ${assignment.assignee.name}`}>
                      Withdraw
                    </Button>
                  </Form>
                </Td>
              </tr>
            ))}
          </tbody>
        </Table>
      )}
    </>
  );
}
