import { readFileSync } from "node:fs";
import path from "node:path";
import type { APIRequest, APIRequestContext, BrowserContextOptions } from "@playwright/test";
import type { Role } from "#models/roles";
import { waitForLink } from "../support/outbox";

// A fresh organisation of the tests' own, made through the app's own pages over HTTP (sign-up,
// import, invitations from the local outbox), so browser tests never change the demo's data.

export type StorageState = Exclude<BrowserContextOptions["storageState"], string | undefined>;
export type TeamMember = { role: Role; name: string; email: string; password: string; storageState: StorageState };
export type Team = { slug: string; name: string; members: Record<Role, TeamMember>; device: { id: string; name: string; path: string } };

export const TEAM_PASSWORD = "slow tide under the pier 7";
const INVITATION_LINK = /https?:\/\/\S+\/invitations\/[A-Za-z0-9_-]+/;
/** An invented harbour office's edge device (RFC 5737 / RFC 3849 outside, RFC 1918 / RFC 4193 inside). */
const MODEL_FILE = path.resolve("tests/fixtures/models/harbourline-edge.json");
const PEOPLE: Record<Role, string> = { owner: "Ada Pierce", admin: "Bram Okafor", engineer: "Chen Lindahl", reviewer: "Dagny Mwangi", trainee: "Emil Sato" };

export function outboxDirectory(): string {
  const directory = process.env.E2E_OUTBOX_DIR;
  if (!directory) throw new Error("E2E_OUTBOX_DIR is not set; run the browser tests through playwright.config.ts");
  return directory;
}

async function client(request: APIRequest, baseURL: string): Promise<APIRequestContext> {
  // Posts carry the site's own Origin, as a browser's would (the same-origin guard asks for it).
  return request.newContext({ baseURL, extraHTTPHeaders: { Origin: baseURL } });
}

async function expectRedirect(response: Awaited<ReturnType<APIRequestContext["post"]>>, what: string): Promise<string> {
  const location = response.headers()["location"];
  if (response.status() !== 302 || !location) throw new Error(`${what}: expected a redirect, got ${response.status()} ${(await response.text()).slice(0, 300)}`);
  return location;
}

/** A new organisation with one member of every role and one imported device. */
export async function createTeam(request: APIRequest, baseURL: string, label: string): Promise<Team> {
  const stamp = `${label}-${Date.now().toString(36)}`;
  const emailOf = (role: Role) => `${role}.${stamp}@test.example`;
  const name = `Pierhead ${label} ${Date.now().toString(36)}`;
  const owner = await client(request, baseURL);
  const home = await expectRedirect(
    await owner.post("/signup", { form: { name: PEOPLE.owner, email: emailOf("owner"), organisationName: name, password: TEAM_PASSWORD }, maxRedirects: 0 }),
    "sign-up",
  );
  const slug = home.replace(/^\/o\//, "");
  const imported = await expectRedirect(
    await owner.post(`/o/${slug}/devices/import`, {
      multipart: { intent: "import", target: "site:new", siteName: "Pier office", fileName: "harbourline-edge.json", documentText: readFileSync(MODEL_FILE, "utf8") },
      maxRedirects: 0,
    }),
    "import",
  );
  const deviceId = imported.split("/").at(-1) ?? "";
  const invite = async (role: Exclude<Role, "owner">): Promise<TeamMember> => {
    const email = emailOf(role);
    await expectRedirect(await owner.post(`/o/${slug}/settings/members`, { form: { intent: "invite", email, role }, maxRedirects: 0 }), `invite ${role}`);
    const link = new URL(await waitForLink(outboxDirectory(), email, INVITATION_LINK));
    const invited = await client(request, baseURL);
    await expectRedirect(await invited.post(link.pathname, { form: { name: PEOPLE[role], password: TEAM_PASSWORD }, maxRedirects: 0 }), `join as ${role}`);
    const member = { role, name: PEOPLE[role], email, password: TEAM_PASSWORD, storageState: await invited.storageState() };
    await invited.dispose();
    return member;
  };
  const members: Record<Role, TeamMember> = {
    owner: { role: "owner", name: PEOPLE.owner, email: emailOf("owner"), password: TEAM_PASSWORD, storageState: await owner.storageState() },
    admin: await invite("admin"),
    engineer: await invite("engineer"),
    reviewer: await invite("reviewer"),
    trainee: await invite("trainee"),
  };
  await owner.dispose();
  return { slug, name, members, device: { id: deviceId, name: "hl-edge-1", path: `/o/${slug}/devices/${deviceId}` } };
}

/**
 * A proposal by the team's engineer on its device, with one draft edit (the ping deny above
 * the rest), submitted for review; returns the proposal's path.
 */
export async function createProposal(request: APIRequest, baseURL: string, team: Team): Promise<string> {
  const engineer = await request.newContext({ baseURL, extraHTTPHeaders: { Origin: baseURL }, storageState: team.members.engineer.storageState });
  const day = 86_400_000;
  // Wall-clock times in the device's zone, as a datetime-local field sends them: tomorrow at
  // 18:00–20:00 (never in the hour the clocks skip, which is at night).
  const local = (at: Date) => at.toISOString().slice(0, 16);
  const start = new Date(Date.now() + day);
  start.setUTCHours(18, 0, 0, 0);
  const path = await expectRedirect(
    await engineer.post(`${team.device.path}/proposals/new`, {
      form: { intent: "create", title: "Pause the scanner block for the audit", reason: "The auditors scan from the blocklisted range this week.", ticket: "CHG-1042", windowStart: local(start), windowEnd: local(new Date(start.getTime() + 2 * 3_600_000)), workFrom: "" },
      maxRedirects: 0,
    }),
    "propose a change",
  );
  const rules = await engineer.get(`${path}/draft/rules`);
  const firstRule = /name="ruleId" value="([^"]+)"/.exec(await rules.text())?.[1];
  if (!firstRule) throw new Error("the draft's rules page lists no rule");
  await expectRedirect(await engineer.post(`${path}/draft/rules`, { form: { intent: "disable-rule", ruleId: firstRule, baseRevision: "1" }, maxRedirects: 0 }), "draft edit");
  const submitted = await engineer.post(`${path}/submit`, { data: {} });
  if (submitted.status() !== 200) throw new Error(`submit: ${submitted.status()} ${(await submitted.text()).slice(0, 300)}`);
  await engineer.dispose();
  return path;
}
