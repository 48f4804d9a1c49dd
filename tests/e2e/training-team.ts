import type { APIRequest, APIResponse } from "@playwright/test";
import { ROLES, type Role } from "#models/roles";
import type { Team } from "./team";

// A teaching scenario and a lesson of a test team's own, made over HTTP by its owner (who trains
// always, docs/decisions/016), and one attempt per member: what the page sweep visits.

export type TrainingPages = { scenario: string; lesson: string; attempts: Record<Role, string> };

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
  return { scenario, lesson, attempts };
}
