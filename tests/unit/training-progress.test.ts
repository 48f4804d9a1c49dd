import { describe, expect, test } from "vitest";
import { parseCsv, toCsv } from "#server/formats/csv";
import { assignmentStatus, AssignmentFormSchema, dueInstant, isLate, progressCsvRows, PROGRESS_CSV_HEADER, scoresOverTime, timeSpentWords, traineeProgress, type AttemptFacts, type Person } from "#server/training/progress";
import { sortedProgress } from "#app/utils/training-progress";

// Assignments and progress (issue 12 point 5, docs/decisions/016): late marking, where an
// assignment stands, each trainee's progress summed up, the table's sort and the CSV export.

const DUE = new Date("2026-12-09T17:00:00Z");
const at = (text: string) => new Date(`2026-12-${text}Z`);
let serial = 0;
function attempt(facts: Partial<AttemptFacts> & Pick<AttemptFacts, "userId">): AttemptFacts {
  serial += 1;
  return { id: `attempt-${serial}`, kind: "lesson", title: "Login sources", assignmentId: null, startedAt: at("08T09:00:00"), finishedAt: null, lastActivityAt: at("08T09:10:00"), points: 0, possible: 0, ...facts };
}

const ADA: Person = { userId: "ada", name: "Ada Quist", email: "ada@trainees.example" };
const BEN: Person = { userId: "ben", name: "Ben Okafor", email: "ben@trainees.example" };
const CY: Person = { userId: "cy", name: "Cy Marr", email: "cy@trainees.example" };

describe("Late marking", () => {
  test("An answer finished after the due date is late; at or before it, or not finished, is not", () => {
    expect(isLate(new Date(DUE.getTime() + 1), DUE)).toBe(true);
    expect(isLate(DUE, DUE)).toBe(false); // finished_at > due_at: the due instant itself is on time
    expect(isLate(new Date(DUE.getTime() - 60_000), DUE)).toBe(false);
    expect(isLate(null, DUE)).toBe(false);
  });

  test("An assignment stands not started, in progress (overdue past its date), done or done late, scored by its first finished attempt", () => {
    const before = at("08T12:00:00");
    const after = at("10T12:00:00");
    expect(assignmentStatus(DUE, [], before)).toMatchObject({ state: "not-started", overdue: false, attemptId: null, points: null });
    expect(assignmentStatus(DUE, [], after)).toMatchObject({ state: "not-started", overdue: true });
    const open = attempt({ userId: "ada", points: 3, possible: 4 });
    expect(assignmentStatus(DUE, [open], after)).toMatchObject({ state: "in-progress", overdue: true, attemptId: open.id, points: 3, possible: 4 });
    const onTime = attempt({ userId: "ada", finishedAt: at("09T16:59:00"), points: 12, possible: 13 });
    const again = attempt({ userId: "ada", finishedAt: at("10T08:00:00"), points: 13, possible: 13 });
    expect(assignmentStatus(DUE, [again, onTime, open], after)).toMatchObject({ state: "done", overdue: false, attemptId: onTime.id, points: 12, possible: 13 });
    const late = attempt({ userId: "ada", finishedAt: at("09T17:01:00"), points: 9, possible: 13 });
    expect(assignmentStatus(DUE, [late], after)).toMatchObject({ state: "done-late", overdue: false, attemptId: late.id, points: 9 });
  });
});

describe("Progress per trainee", () => {
  const assignment = "assignment-ada";
  const attempts = [
    attempt({ userId: "ada", assignmentId: assignment, startedAt: at("09T09:00:00"), lastActivityAt: at("09T09:20:00"), finishedAt: at("09T18:00:00"), points: 12, possible: 13 }),
    attempt({ userId: "ada", startedAt: at("10T09:00:00"), lastActivityAt: at("10T09:05:00"), points: 2, possible: 4 }),
    attempt({ userId: "ben", kind: "drill", startedAt: at("09T10:00:00"), lastActivityAt: at("09T10:30:00"), finishedAt: at("09T10:30:00"), points: 8, possible: 10 }),
    attempt({ userId: "someone-else", points: 1, possible: 1 }),
  ];
  const [adaAssigned, adaOpen, benDrill] = attempts;
  const misses = [
    { attemptId: adaAssigned.id, layer: "inbound-rules" },
    { attemptId: adaOpen.id, layer: "inbound-rules" },
    { attemptId: adaOpen.id, layer: "listener" },
    // A drill's misses are not a layer at a time: not counted as wrong layers.
    { attemptId: benDrill.id, layer: "arrival" },
  ];
  const rows = traineeProgress([ADA, BEN, CY], attempts, misses, new Map([[assignment, DUE]]));
  const row = (userId: string) => rows.find((entry) => entry.userId === userId)!;

  test("Attempts, score over every answered question, time from start to last answer, last activity, late count and wrong layers add up per trainee", () => {
    expect(rows.map((entry) => entry.userId)).toEqual(["ada", "ben", "cy"]); // only the people given
    expect(row("ada")).toMatchObject({ attempts: 2, finished: 1, points: 14, possible: 17, timeSpentMs: 25 * 60_000, late: 1 });
    expect(row("ada").score).toBeCloseTo(14 / 17);
    expect(row("ada").lastActivity).toEqual(at("10T09:05:00"));
    // Most often first: Inbound rules twice, then Listener.
    expect(row("ada").wrongLayers).toEqual([
      { layer: "inbound-rules", count: 2 },
      { layer: "listener", count: 1 },
    ]);
    expect(row("ben")).toMatchObject({ attempts: 1, points: 8, possible: 10, wrongLayers: [], late: 0 });
    expect(row("cy")).toMatchObject({ attempts: 0, score: null, lastActivity: null, timeSpentMs: 0 });
  });

  test("The table sorts by each column through the URL, both ways, ties by name; no score and never active sort below everything", () => {
    const order = (query: string) => sortedProgress(rows, new URLSearchParams(query)).rows.map((entry) => entry.name);
    expect(order("")).toEqual(["Ada Quist", "Ben Okafor", "Cy Marr"]);
    expect(order("sort=name&dir=desc")).toEqual(["Cy Marr", "Ben Okafor", "Ada Quist"]);
    expect(order("sort=score&dir=desc")).toEqual(["Ada Quist", "Ben Okafor", "Cy Marr"]); // 82 % > 80 % > none
    expect(order("sort=score")).toEqual(["Cy Marr", "Ben Okafor", "Ada Quist"]);
    expect(order("sort=attempts&dir=desc")).toEqual(["Ada Quist", "Ben Okafor", "Cy Marr"]);
    expect(order("sort=time&dir=desc")).toEqual(["Ben Okafor", "Ada Quist", "Cy Marr"]); // 30 min > 25 min > 0
    expect(order("sort=last")).toEqual(["Cy Marr", "Ben Okafor", "Ada Quist"]);
    expect(order("sort=wrong&dir=desc")).toEqual(["Ada Quist", "Cy Marr", "Ben Okafor"]); // ties by name, in the same direction
    // An unknown column falls back to the name, as every sortable list does (table-rows).
    expect(order("sort=password")).toEqual(["Ada Quist", "Ben Okafor", "Cy Marr"]);
    expect(sortedProgress(rows, new URLSearchParams("sort=wrong")).rows[2].wrongLayers.map((entry) => entry.label)).toEqual(["Inbound rules", "Listener"]);
  });

  test("Scores over time list each finished attempt of the people shown, oldest first, with late ones marked", () => {
    const points = scoresOverTime([ADA, BEN, CY], attempts, new Map([[assignment, DUE]]));
    expect(points.map((point) => [point.name, point.percent, point.late])).toEqual([
      ["Ben Okafor", 80, false],
      ["Ada Quist", 92, true], // 12 of 13, finished after the due date
    ]);
  });

  test("Time spent reads in words", () => {
    expect(timeSpentWords(0)).toBe("none");
    expect(timeSpentWords(20_000)).toBe("under a minute");
    expect(timeSpentWords(25 * 60_000)).toBe("25 minutes");
    expect(timeSpentWords(90 * 60_000)).toBe("1.5 hours");
  });
});

describe("The CSV export", () => {
  test("Cells that a spreadsheet would run as a formula start with an apostrophe; the rest read back as written (RFC 4180; OWASP CSV injection)", () => {
    const people: Person[] = [
      { userId: "a", name: "=HYPERLINK(\"http://attacker.example\",\"x\")", email: "a@trainees.example" },
      { userId: "b", name: "+1 Trainee", email: "b@trainees.example" },
      { userId: "c", name: "-minus", email: "c@trainees.example" },
      { userId: "d", name: "@at, with a comma", email: "d@trainees.example" },
      { userId: "e", name: "Dana \"Quote\" Lee", email: "e@trainees.example" },
    ];
    const finished = attempt({ userId: "e", finishedAt: at("09T10:00:00"), lastActivityAt: at("09T10:00:00"), startedAt: at("09T09:30:00"), points: 3, possible: 4 });
    const rows = traineeProgress(people, [finished], [{ attemptId: finished.id, layer: "second-factor" }], new Map());
    const read = parseCsv(toCsv(progressCsvRows(rows)));
    expect(read[0]).toEqual([...PROGRESS_CSV_HEADER]);
    expect(read.slice(1).map((record) => record[0])).toEqual(["'=HYPERLINK(\"http://attacker.example\",\"x\")", "'+1 Trainee", "'-minus", "'@at, with a comma", "Dana \"Quote\" Lee"]);
    const dana = read[5];
    expect(dana.slice(2)).toEqual(["1", "1", "3", "4", "75", "30", "2026-12-09T10:00:00.000Z", "0", "second-factor:1", "Second factor"]);
  });
});

describe("The assignment form", () => {
  const good = { target: "lesson:6f1c1a9e-2f0b-4c7a-9d1e-0b2c3d4e5f60", assignees: "0b1c1a9e-2f0b-4c7a-9d1e-0b2c3d4e5f61\n0b1c1a9e-2f0b-4c7a-9d1e-0b2c3d4e5f61", dueAt: "2026-12-09T17:00", note: "  Take it before Friday's session.\r\n" };

  test("A good form reads as the lesson, the assignees once each, the due instant in UTC and the trimmed note", () => {
    const parsed = AssignmentFormSchema.parse(good);
    expect(parsed).toEqual({ target: { kind: "lesson", id: "6f1c1a9e-2f0b-4c7a-9d1e-0b2c3d4e5f60" }, assignees: ["0b1c1a9e-2f0b-4c7a-9d1e-0b2c3d4e5f61"], dueAt: DUE, note: "Take it before Friday's session." });
  });

  test("Each bad field gets its own message", () => {
    const problems = (input: Record<string, string>) => {
      const result = AssignmentFormSchema.safeParse(input);
      return result.success ? {} : Object.fromEntries(result.error.issues.map((issue) => [String(issue.path[0]), issue.message]));
    };
    expect(problems({ ...good, target: "scenario:6f1c1a9e-2f0b-4c7a-9d1e-0b2c3d4e5f60" })).toEqual({ target: "Choose a lesson or a drill." });
    expect(problems({ ...good, target: "lesson:1 OR 1=1" })).toEqual({ target: "Choose a lesson or a drill." });
    expect(problems({ ...good, assignees: "" })).toEqual({ assignees: "Choose at least one member." });
    expect(problems({ ...good, assignees: "not-an-id" })).toEqual({ assignees: "That identifier is not valid." });
    expect(problems({ ...good, dueAt: "next friday" }).dueAt).toMatch(/^Enter the due date/);
    expect(problems({ ...good, note: "bell\u0007" })).toEqual({ note: "Remove the control characters from this text." });
  });

  test("A datetime-local value is read as UTC, and an impossible date is refused, not rolled over", () => {
    expect(dueInstant("2026-12-09T17:00")).toEqual(DUE);
    expect(dueInstant("2026-02-31T10:00")).toBeNull();
    expect(dueInstant("2026-12-09T24:00")).toBeNull();
    expect(dueInstant("2026-12-09 17:00")).toBeNull();
  });
});
