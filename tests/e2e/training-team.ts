import type { APIRequest, APIResponse } from "@playwright/test";
import { ROLES, type Role } from "#models/roles";
import type { Team } from "./team";

// A teaching scenario and a lesson of a test team's own, made over HTTP by its owner (who trains
// always, docs/decisions/016), one attempt per member, and the lesson assigned to every member:
// what the page sweep visits.

export type DrillPages = {
  /** A repair drill (goals and an answer model) on the rule-order example, and the trainer's pages of it. */
  fix: string;
  order: string;
  /** Each member's attempt at each kind of drill. */
  attempts: Record<Role, { predict: string; spot: string; fix: string; order: string }>;
};
export type TrainingPages = { scenario: string; lesson: string; attempts: Record<Role, string>; assignments: Record<Role, string>; drills: DrillPages };

const ASSIGNMENT_LINK = /href="(\/o\/[^"]+\/training\/assignments\/[0-9a-f-]{36})"/;

function locationOf(response: APIResponse, what: string): string {
  const location = response.headers()["location"];
  if (response.status() !== 302 || !location) throw new Error(`${what}: expected a redirect, got ${response.status()}`);
  return location.split("?")[0].split("#")[0];
}

export async function createTrainingPages(request: APIRequest, baseURL: string, team: Team): Promise<TrainingPages> {
  const training = `/o/${team.slug}/training`;
  const contextOf = (role: Role) => request.newContext({ baseURL, extraHTTPHeaders: { Origin: baseURL }, storageState: team.members[role].storageState });
  const owner = await contextOf("owner");
  const scenario = locationOf(await owner.post(`${training}/scenarios/new`, { form: { intent: "create", title: "Who may log in", summary: "", source: "example", example: "login-sources" }, maxRedirects: 0 }), "new scenario");
  const lessonEdit = locationOf(await owner.post(`${training}/lessons/new`, { form: { title: "Login sources, layer by layer", introduction: "Predict **each** layer.", scenarioId: scenario.split("/").at(-1) ?? "", withExampleProbes: "on" }, maxRedirects: 0 }), "new lesson");
  await owner.dispose();
  const lesson = lessonEdit.replace(/\/edit$/, "");
  const attempts = {} as Record<Role, string>;
  for (const role of ROLES) {
    const member = await contextOf(role);
    attempts[role] = locationOf(await member.post(lesson, { form: { intent: "start" }, maxRedirects: 0 }), `begin as ${role}`);
    await member.dispose();
  }
  // The lesson assigned to everyone, a week ahead: each member's assignment page.
  const assigner = await contextOf("owner");
  const form = await (await assigner.get(`${training}/assignments/new`)).text();
  const memberIds = [...form.matchAll(/name="assignees" value="([0-9a-f-]{36})"/g)].map((match) => match[1]);
  const fields = new URLSearchParams([["target", `lesson:${lesson.split("/").at(-1) ?? ""}`], ...memberIds.map((id) => ["assignees", id]), ["dueAt", new Date(Date.now() + 7 * 86_400_000).toISOString().slice(0, 16)], ["note", "For the sweep."]]);
  locationOf(await assigner.post(`${training}/assignments/new`, { data: fields.toString(), headers: { "Content-Type": "application/x-www-form-urlencoded" }, maxRedirects: 0 }), "assign");
  await assigner.dispose();
  const assignments = {} as Record<Role, string>;
  for (const role of ROLES) {
    const member = await contextOf(role);
    const mine = await (await member.get(`${training}/mine`)).text();
    const link = ASSIGNMENT_LINK.exec(mine)?.[1];
    if (!link) throw new Error(`no assignment on the My training page of the ${role}`);
    assignments[role] = link;
    await member.dispose();
  }
  return { scenario, lesson, attempts, assignments, drills: await createDrillPages(request, baseURL, team, scenario) };
}


/** A drill of each kind (two scenarios: the lesson's, and the rule-order example), and each member's attempt at each. */
async function createDrillPages(request: APIRequest, baseURL: string, team: Team, loginScenario: string): Promise<DrillPages> {
  const training = `/o/${team.slug}/training`;
  const contextOf = (role: Role) => request.newContext({ baseURL, extraHTTPHeaders: { Origin: baseURL }, storageState: team.members[role].storageState });
  const owner = await contextOf("owner");
  const ruleOrder = locationOf(await owner.post(`${training}/scenarios/new`, { form: { intent: "create", title: "First match wins", summary: "", source: "example", example: "rule-order" }, maxRedirects: 0 }), "new scenario").split("/").at(-1) ?? "";
  const newDrill = async (kind: string, title: string, scenarioId: string) => locationOf(await owner.post(`${training}/drills/new`, { form: { title, introduction: "Graded by the **engine**.", scenarioId, kind, seed: "4", count: "3" }, maxRedirects: 0 }), `new ${kind} drill`).replace(/\/edit$/, "");
  const predict = await newDrill("predict", "Call three probes", loginScenario.split("/").at(-1) ?? "");
  const spot = await newDrill("spot", "What causes it", ruleOrder);
  const fix = await newDrill("fix", "Let the operations centre in", ruleOrder);
  const order = await newDrill("order", "Order the outside rules", ruleOrder);
  for (const drill of [fix, order]) {
    const goal = { intent: "add-goal", interface: "outside", service: "https", to: "", when: "all-week" };
    locationOf(await owner.post(`${drill}/edit`, { form: { ...goal, version: "1", from: "192.0.2.70", expect: "login-mfa" }, maxRedirects: 0 }), "first goal");
    locationOf(await owner.post(`${drill}/edit`, { form: { ...goal, version: "2", from: "203.0.113.9", expect: "silent" }, maxRedirects: 0 }), "second goal");
  }
  locationOf(await owner.post(`${fix}/answer/model/rules`, { form: { intent: "move-rule", ruleId: "drop-internet", to: "2", baseRevision: "3" }, maxRedirects: 0 }), "answer model");
  locationOf(await owner.post(`${order}/edit`, { form: { intent: "move-answer", ruleId: "drop-internet", direction: "down", version: "3" }, maxRedirects: 0 }), "answer order");
  await owner.dispose();
  const attempts = {} as DrillPages["attempts"];
  for (const role of ROLES) {
    const member = await contextOf(role);
    const begin = async (drill: string) => locationOf(await member.post(drill, { form: { intent: "start" }, maxRedirects: 0 }), `begin ${drill} as ${role}`);
    attempts[role] = { predict: await begin(predict), spot: await begin(spot), fix: await begin(fix), order: await begin(order) };
    await member.dispose();
  }
  return { fix, order, attempts };
}
