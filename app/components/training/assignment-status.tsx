import { Link } from "react-router";
import { ASSIGNMENT_STATE_LABELS, type AssignmentState } from "#server/training/progress";
import { Badge } from "#app/components/ui/card";
import { Td } from "#app/components/ui/table";
import { Time } from "#app/components/ui/time";

// Where an assignment stands, in words (never colour alone): done, done late, in progress or not
// started, and "overdue" beside an unfinished one past its due date.
const TONES: Record<AssignmentState, "success" | "brass" | "harbour" | "neutral"> = { done: "success", "done-late": "brass", "in-progress": "harbour", "not-started": "neutral" };

export function AssignmentStatusBadge({ status }: { status: { state: AssignmentState; overdue: boolean; points: number | null; possible: number | null } }) {
  return (
    <span className="inline-flex flex-wrap items-center gap-1">
      <Badge tone={TONES[status.state]}>{ASSIGNMENT_STATE_LABELS[status.state]}</Badge>
      {status.overdue ? <Badge tone="danger">Overdue</Badge> : null}
    </span>
  );
}

/** "12 of 13", "4 of 5 so far", or "—" before any answer. */
export function scoreWords(status: { state: AssignmentState; points: number | null; possible: number | null }): string {
  if (status.points === null || status.possible === null || status.possible === 0) return "—";
  return `${status.points} of ${status.possible}${status.state === "in-progress" ? " so far" : ""}`;
}

/** An assignment's cells in a table row: what (linked to the assignment), due, status, score. */
export function AssignmentCells({ assignment, now }: { assignment: { path: string; title: string; kind: string; dueAt: string; status: Parameters<typeof AssignmentStatusBadge>[0]["status"] }; now: string }) {
  return (
    <>
      <Td>
        <Link to={assignment.path} className="font-medium text-harbour underline underline-offset-4">
          {assignment.title}
        </Link>{" "}
        <span className="text-xs text-ink-muted">({assignment.kind})</span>
      </Td>
      <Td className="text-ink-muted">
        <Time at={assignment.dueAt} now={now} />
      </Td>
      <Td>
        <AssignmentStatusBadge status={assignment.status} />
      </Td>
      <Td className="tabular">{scoreWords(assignment.status)}</Td>
    </>
  );
}
