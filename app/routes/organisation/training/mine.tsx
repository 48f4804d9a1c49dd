import { Link } from "react-router";
import type { Route } from "./+types/mine";
import { assignmentView, myTraining } from "#server/services/training-assignments.server";
import { requireLearner } from "#server/training/access.server";
import { trainingPath } from "#server/training/routes.server";
import { PageErrorBoundary } from "#app/components/error-panel";
import { AssignmentCells } from "#app/components/training/assignment-status";
import { ButtonLink } from "#app/components/ui/button";
import { PageHeader } from "#app/components/ui/card";
import { EmptyState } from "#app/components/ui/empty-state";
import { Table, Td, Th } from "#app/components/ui/table";
import { Time } from "#app/components/ui/time";

// "My training": what a member was assigned (due, late, done, score) and their other attempts
// (docs/decisions/016, "Assignments and progress"). Every member has one; it shows only their own.

export const meta: Route.MetaFunction = () => [{ title: "My training · Sallyport" }];
export const ErrorBoundary = PageErrorBoundary;

export async function loader({ context }: Route.LoaderArgs) {
  const access = requireLearner(context);
  const base = trainingPath(access.organisation.slug);
  const { assigned, attempts } = await myTraining(access.organisation.id, access.user.id);
  return {
    base,
    assigned: assigned.map((row) => assignmentView(row, base)),
    attempts: attempts.map((attempt) => ({
      id: attempt.id,
      kind: attempt.kind,
      title: attempt.title,
      startedAt: attempt.startedAt.toISOString(),
      finished: attempt.finishedAt !== null,
      points: attempt.points,
      possible: attempt.possible,
      path: `${base}/attempts/${attempt.id}`,
    })),
    now: new Date().toISOString(),
  };
}

export default function MyTraining({ loaderData }: Route.ComponentProps) {
  const { base, assigned, attempts, now } = loaderData;
  return (
    <>
      <PageHeader title="My training" description="What a trainer assigned you, soonest due first, and your other attempts. Only you and your organisation's trainers see your results." actions={<ButtonLink variant="secondary" to={base}>All lessons</ButtonLink>} />
      <div className="space-y-8">
        <section aria-labelledby="assigned-heading">
          <h2 id="assigned-heading" className="mb-2 text-sm font-semibold">
            Assigned to you
          </h2>
          {assigned.length === 0 ? (
            <EmptyState title="Nothing assigned">When a trainer assigns you a lesson or a drill, it appears here and you get an e-mail.</EmptyState>
          ) : (
            <Table>
              <caption className="sr-only">Assigned to you, soonest due first</caption>
              <thead>
                <tr>
                  <Th>Lesson or drill</Th>
                  <Th>Due</Th>
                  <Th>Status</Th>
                  <Th>Score</Th>
                </tr>
              </thead>
              <tbody>
                {assigned.map((assignment) => (
                  <tr key={assignment.id}>
                    <AssignmentCells assignment={assignment} now={now} />
                  </tr>
                ))}
              </tbody>
            </Table>
          )}
        </section>
        <section aria-labelledby="attempts-heading">
          <h2 id="attempts-heading" className="mb-2 text-sm font-semibold">
            Other attempts
          </h2>
          {attempts.length === 0 ? (
            <p className="text-sm text-ink-muted">None yet: any lesson on the Training page is yours to take.</p>
          ) : (
            <Table>
              <caption className="sr-only">Your attempts not made for an assignment, newest first</caption>
              <thead>
                <tr>
                  <Th>Lesson or drill</Th>
                  <Th>Started</Th>
                  <Th>Score</Th>
                </tr>
              </thead>
              <tbody>
                {attempts.map((attempt) => (
                  <tr key={attempt.id}>
                    <Td>
                      <Link to={attempt.path} className="text-harbour underline underline-offset-4">
                        {attempt.title}
                      </Link>{" "}
                      <span className="text-xs text-ink-muted">({attempt.kind})</span>
                    </Td>
                    <Td className="text-ink-muted">
                      <Time at={attempt.startedAt} now={now} />
                    </Td>
                    <Td className="tabular">
                      {attempt.possible > 0 ? `${attempt.points} of ${attempt.possible}${attempt.finished ? "" : " so far"}` : "—"}
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
