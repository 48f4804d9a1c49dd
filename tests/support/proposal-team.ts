// The proposals' integration tests' world: an organisation with one member per role (two
// engineers: the author and another), the MOLE device, and the service calls that set a
// proposal up quickly. Semantics: docs/decisions/010-change-proposals.md.
import { randomUUID } from "node:crypto";
import { expect } from "vitest";
import { DeviceRevision, Membership, Organisation, Site, User } from "#models/index";
import type { Role } from "#server/auth/roles";
import { hashPassword } from "#server/auth/password.server";
import type { OutgoingMail } from "#server/mail/mailer.server";
import { createDevice } from "#server/services/devices.server";
import { createProposal, submitProposal, type ProposalActor, type ProposalEnvironment } from "#server/services/proposals.server";
import { applyElementEdit, resolveElementEdit, type ElementEdit, type ModelDocument } from "#server/workspace/index";
import { TestClient, type FetchResult } from "./client";

/**
 * Invented scenario: a harbour mole's edge device. The NOC (an operator network) works from
 * 10.20.30.0/24 (RFC 1918); the internet side is RFC 5737. Rule r4 is the catch-all deny.
 */
export const MOLE = {
  schemaVersion: 2,
  device: { name: "mole-edge", timezone: "Europe/Oslo" },
  interfaces: [
    { name: "outside", role: "wan", addresses: ["203.0.113.2/24"], listeners: ["https", "ping"] },
    { name: "inside", role: "lan", addresses: ["10.20.0.1/16"], listeners: ["https", "ssh"] },
  ],
  addresses: [
    { name: "noc-net", entries: ["10.20.30.0/24"] },
    { name: "partner-hq", entries: ["198.51.100.0/26"] },
  ],
  inboundRules: [
    { id: "r1", interface: "inside", sources: ["noc-net"], destinations: ["any"], services: ["ssh", "https"], action: "allow" },
    { id: "r2", interface: "outside", sources: ["partner-hq"], destinations: ["any"], services: ["https"], action: "allow" },
    { id: "r3", interface: "outside", sources: ["any"], destinations: ["any"], services: ["ping"], action: "deny" },
    { id: "r4", interface: "any", sources: ["any"], destinations: ["any"], services: ["any"], action: "deny", note: "final drop" },
  ],
  accounts: [{ name: "ops-lena", loginSources: ["noc-net"], secondFactor: "totp" }],
  operatorNetworks: ["noc-net"],
};
export const TIMEZONE = MOLE.device.timezone;

export const PASSWORD = "harbour lights at low tide 9";
let passwordHash: Promise<string> | null = null;

export type Who = "owner" | "admin" | "author" | "engineer" | "reviewer" | "trainee";
export const ROLE_OF: Record<Who, Role> = { owner: "owner", admin: "admin", author: "engineer", engineer: "engineer", reviewer: "reviewer", trainee: "trainee" };
export const EVERYONE: Who[] = ["trainee", "reviewer", "author", "engineer", "admin", "owner"];

export type Member = { who: Who; email: string; userId: string; name: string; actor: ProposalActor; client: () => Promise<TestClient> };
export type Team = { organisationId: string; slug: string; deviceId: string; path: string; members: Record<Who, Member> };

/** An organisation with one member per role (two engineers: the author and another) and the MOLE device. */
export async function makeTeam(label: string): Promise<Team> {
  const suffix = randomUUID().slice(0, 8);
  const organisation = await Organisation.create({ slug: `proposals-${label}-${suffix}`, name: `Proposals ${label}` });
  const site = await Site.create({ organisationId: organisation.id, name: "Mole office", customer: "", location: "" });
  const members = {} as Record<Who, Member>;
  for (const who of EVERYONE) {
    const email = `${who}-${label}-${suffix}@test.example`;
    const name = `${who[0].toUpperCase()}${who.slice(1)} ${label}`;
    const user = await User.create({ email, name, passwordHash: await (passwordHash ??= hashPassword(PASSWORD)) });
    await Membership.create({ organisationId: organisation.id, userId: user.id, role: ROLE_OF[who] });
    let signedIn: TestClient | null = null;
    members[who] = {
      who,
      email,
      userId: user.id,
      name,
      actor: { userId: user.id, email, name, role: ROLE_OF[who], clientAddress: "192.0.2.10" },
      client: async () => {
        if (signedIn) return signedIn;
        const client = new TestClient();
        const response = await client.signIn(email, PASSWORD);
        expect(response.status, `sign-in of ${who}`).toBe(302);
        signedIn = client;
        return client;
      },
    };
  }
  const device = await createDevice(organisation.id, site.id, MOLE, members.owner.actor, "created");
  return { organisationId: organisation.id, slug: organisation.slug, deviceId: device.id, path: `/o/${organisation.slug}/devices/${device.id}`, members };
}

/** Mail sent by service calls made in this process, instead of over SMTP. */
export function mailbox(now?: Date): { environment: ProposalEnvironment; sent: OutgoingMail[] } {
  const sent: OutgoingMail[] = [];
  return { sent, environment: { now, appOrigin: "http://sallyport.test", send: async (mail) => void sent.push(mail) } };
}

export const HOUR = 3_600_000;
/** A window open from an hour ago to two hours from `now`. */
export const openWindow = (now = new Date()) => ({ start: new Date(now.getTime() - HOUR), end: new Date(now.getTime() + 2 * HOUR) });

export function details(title: string, window = openWindow(), workFrom = "") {
  return { title, reason: "Invented test change.", ticket: "", window, workFrom };
}

/** An element edit applied through the same path the draft editor uses. */
export function attemptOf(edit: ElementEdit): { apply(document: ModelDocument): ModelDocument; resolved: ElementEdit } {
  const attempt = {
    resolved: edit,
    apply(document: ModelDocument) {
      attempt.resolved = resolveElementEdit(document, edit);
      return applyElementEdit(document, attempt.resolved);
    },
  };
  return attempt;
}

export const NOTE_R2: Extract<ElementEdit, { kind: "rule.update" }> = { kind: "rule.update", ruleId: "r2", rule: { id: "r2", interface: "outside", sources: ["partner-hq"], destinations: ["any"], services: ["https"], schedule: "all-week", action: "allow", enabled: true, note: "partner console" } };

/** A proposal made, drafted and submitted through the service (fast set-up for tests about later steps). */
export async function submittedProposal(team: Team, title = "Note the partner rule", edit: ElementEdit = NOTE_R2, window = openWindow()): Promise<string> {
  const { environment } = mailbox();
  const proposal = await createProposal({ organisationId: team.organisationId, deviceId: team.deviceId }, details(title, window), { kind: "edit", attempt: attemptOf(edit), message: "Changed inbound rule r2" }, team.members.author.actor, environment);
  await submitProposal(ref(team, proposal.id), {}, team.members.author.actor, environment);
  return proposal.id;
}

export const ref = (team: Team, proposalId: string) => ({ organisationId: team.organisationId, deviceId: team.deviceId, proposalId });

export async function postJson(client: TestClient, path: string, body: unknown): Promise<FetchResult & { json: Record<string, unknown> }> {
  const response = await client.request(path, { method: "POST", body: typeof body === "string" ? body : JSON.stringify(body), headers: { "Content-Type": "application/json" } });
  let json: Record<string, unknown> = {};
  try {
    json = JSON.parse(response.text) as Record<string, unknown>;
  } catch {
    // Not JSON: the status says what happened.
  }
  return { ...response, json };
}

export async function revisionCount(deviceId: string): Promise<number> {
  return DeviceRevision.count({ where: { deviceId } });
}

