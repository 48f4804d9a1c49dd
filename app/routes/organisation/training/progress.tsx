import { Link } from "react-router";
import type { Route } from "./+types/progress";
import { trainingProgress } from "#server/services/training-assignments.server";
import { requireTrainer } from "#server/training/access.server";
import { scorePercent, timeSpentWords } from "#server/training/progress";
import { trainingPath } from "#server/training/routes.server";
import { PageErrorBoundary } from "#app/components/error-panel";
import { ScoreChart } from "#app/components/training/score-chart";
import { buttonClasses, ButtonLink } from "#app/components/ui/button";
import { Card, PageHeader } from "#app/components/ui/card";
import { EmptyState } from "#app/components/ui/empty-state";
import { SortHeader } from "#app/components/ui/sort-header";
import { Table, Td, Th } from "#app/components/ui/table";
import { Time } from "#app/components/ui/time";
import { sortedProgress, type ProgressColumn } from "#app/utils/training-progress";

// The trainer's progress page (docs/decisions/016, "Assignments and progress"): one row per
// trainee — attempts, score, time spent, last activity, the layers they got wrong — sorted by the
// URL (?sort=…&dir=…, so it works without JavaScript), a CSV export of the same rows, and the
// scores over time as a chart with a table of the same points. Trainers only: a trainee gets 403
// here (the page's existence is no secret; other members' results are).

export const meta: Route.MetaFunction = () => [{ title: "Progress · Training · Sallyport" }];
export const ErrorBoundary = PageErrorBoundary;

export async function loader({ request, context }: Route.LoaderArgs) {
  const access = requireTrainer(context);
  const url = new URL(request.url);
  const base = trainingPath(access.organisation.slug);
  const { rows, scores } = await trainingProgress(access.organisation.id);
  const { sort, descending, rows: sorted } = sortedProgress(rows, url.searchParams);
  return {
    base,
    sort,
    descending,
    rows: sorted,
    scores: scores.map((point) => ({ ...point, path: `${base}/attempts/${point.attemptId}` })),
    csvPath: `${base}/progress.csv?${new URLSearchParams({ sort, dir: descending ? "desc" : "asc" }).toString()}`,
    now: new Date().toISOString(),
  };
}

export default function Progress({ loaderData }: Route.ComponentProps) {
  const { base, sort, descending, rows, scores, now } = loaderData;
  const header = (column: ProgressColumn, label: string) => <SortHeader column={column} label={label} sort={sort} descending={descending} />;
  return (
    <>
      <PageHeader
        title="Progress"
        description="Each trainee's attempts at lessons and drills: the score over every answered question, the time from starting to the last answer, and the layers they predicted wrong."
        actions={
          <>
            <ButtonLink variant="secondary" to={`${base}/assignments`}>
              Assignments
            </ButtonLink>
            <a href={loaderData.csvPath} download className={buttonClasses("secondary")}>
              Download CSV
            </a>
          </>
        }
      />
      <div className="space-y-8">
        {rows.length === 0 ? (
          <EmptyState title="No trainees yet">Members with the trainee role, and anyone who takes a lesson or a drill, appear here.</EmptyState>
        ) : (
          <Table>
            <caption className="sr-only">Progress per trainee, sorted by {sort} {descending ? "descending" : "ascending"}</caption>
            <thead>
              <tr>
                {header("name", "Trainee")}
                {header("attempts", "Attempts")}
                {header("score", "Score")}
                {header("time", "Time spent")}
                {header("last", "Last activity")}
                {header("wrong", "Wrong layers")}
              </tr>
            </thead>
            <tbody>
              {rows.map((row) => (
                <tr key={row.userId}>
                  <Td className="font-medium">
                    {row.name}
                    <span className="block text-xs font-normal text-ink-muted">{row.email}</span>
                  </Td>
                  <Td className="tabular">
                    {row.attempts}
                    {row.attempts > row.finished ? <span className="block text-xs text-ink-muted">{row.attempts - row.finished} unfinished</span> : null}
                    {row.late > 0 ? <span className="block text-xs text-brass">{row.late} late</span> : null}
                  </Td>
                  <Td className="tabular">
                    {row.possible > 0 ? (
                      <>
                        {`${scorePercent(row.points, row.possible)}%`}<span className="block text-xs text-ink-muted">{row.points} of {row.possible}</span>
                      </>
                    ) : (
                      "—"
                    )}
                  </Td>
                  <Td>{timeSpentWords(row.timeSpentMs)}</Td>
                  <Td className="text-ink-muted">{row.lastActivity ? <Time at={row.lastActivity} now={now} /> : "never"}</Td>
                  <Td className="text-sm max-sm:min-w-44!">{row.wrongLayers.length ? row.wrongLayers.map((entry) => (entry.count > 1 ? `${entry.label} ×${entry.count}` : entry.label)).join(", ") : "none"}</Td>
                </tr>
              ))}
            </tbody>
          </Table>
        )}

        <section aria-labelledby="scores-heading" className="space-y-3">
          <h2 id="scores-heading" className="text-sm font-semibold">
            Scores over time
          </h2>
          {scores.length === 0 ? (
            <p className="text-sm text-ink-muted">No finished attempts yet.</p>
          ) : (
            <>
              <Card className="p-4">
                <figure>
                  <ScoreChart points={scores} />
                  <figcaption className="mt-2 text-xs text-ink-muted">Each finished attempt's score, per trainee. The same points are listed in the table below.</figcaption>
                </figure>
              </Card>
              <Table>
                <caption className="sr-only">Scores over time: each finished attempt, oldest first</caption>
                <thead>
                  <tr>
                    <Th>Finished</Th>
                    <Th>Trainee</Th>
                    <Th>Lesson or drill</Th>
                    <Th>Score</Th>
                  </tr>
                </thead>
                <tbody>
                  {scores.map((point) => (
                    <tr key={point.attemptId}>
                      <Td className="text-ink-muted">
                        <Time at={point.at} />
                      </Td>
                      <Td>{point.name}</Td>
                      <Td>
                        <Link to={point.path} className="text-harbour underline underline-offset-4">
                          {point.title}
                        </Link>
                      </Td>
                      <Td className="tabular">
                        {`${point.percent}%${point.late ? " (late)" : ""}`}
                      </Td>
                    </tr>
                  ))}
                </tbody>
              </Table>
            </>
          )}
        </section>
      </div>
    </>
  );
}
