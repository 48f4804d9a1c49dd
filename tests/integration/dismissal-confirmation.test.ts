// Dismissing a high or critical finding takes two people (issue 11, item 8): the engineer who
// asks, with a reason of at least 20 characters, and a reviewer or above who is not the one who
// asked. Until confirmed the dismissal is "awaiting confirmation" and the finding still counts.
// A lockout is never dismissed, only fixed. Medium and below keep the earlier rule (one person,
// 3 characters; tests/integration/findings.test.ts). Every step is audited.
// The two-person rule is common practice for accepting risk (separation of duties, NIST SP
// 800-53 Rev. 5 AC-5); the thresholds are Sallyport's own.
//
// One organisation of the test's own with a member of every role (invited through the local
// outbox), and an invented device; the demo organisation is never changed.

import { afterAll, beforeAll, describe, expect, inject, test } from "vitest";
import { FindingDismissal, Organisation } from "#models/index";
import { getDatabase } from "#server/db/database.server";
import { ROLES, roleRank, type Role } from "#server/auth/roles";
import { GOOD_PASSWORD, signUpNewOrganisation, TestClient, uniqueEmail, type FetchResult } from "../support/client";
import { plain, UUID } from "../support/html";
import { waitForLink } from "../support/outbox";

const outboxDir = inject("outboxDir");
const INVITATION_LINK = /https?:\/\/\S+\/invitations\/[A-Za-z0-9_-]+/;
// The models are bound to the test database when it is first opened (the database checks below).
const sequelize = getDatabase();
afterAll(() => sequelize.close());

// An invented gateway (RFC 5737, RFC 1918): a factory-default account without a second factor
// (two high findings), cleartext http on the management interface (medium), and an operator
// network with no login path at all (a critical lockout).
const BREAKWATER = {
  schemaVersion: 2,
  device: { name: "breakwater-gw", timezone: "UTC" },
  interfaces: [
    { name: "outside", role: "wan", addresses: ["192.0.2.20/24"], listeners: [] },
    { name: "mgmt", role: "management", addresses: ["10.78.0.1/24"], listeners: ["https", "ssh", "http"] },
  ],
  addresses: [
    { name: "ops-lan", entries: ["10.78.0.0/24"] },
    { name: "far-office", entries: ["198.51.100.0/28"] },
  ],
  inboundRules: [
    { id: "ops-in", interface: "mgmt", sources: ["ops-lan"], destinations: ["any"], services: ["https", "ssh"], action: "allow" },
    { id: "drop-rest", interface: "any", sources: ["any"], destinations: ["any"], services: ["any"], action: "deny" },
  ],
  accounts: [{ name: "administrator", loginSources: ["ops-lan"] }],
  operatorNetworks: ["ops-lan", "far-office"],
};

const DEFAULT_NAME = { key: "default-account-name account:administrator", title: 'Account "administrator" has a factory-default name' };
const NO_SECOND_FACTOR = { key: "no-second-factor account:administrator", title: 'Account "administrator" has no second factor' };
const LOCKOUT = { key: "lockout operator-network:far-office", title: 'Operator network "far-office" has no login path' };
const REASON = "Account renamed on the device in change 5120; model follows.";

type Team = { slug: string; organisationId: string; deviceId: string; overview: string; members: Record<Role, TestClient> };
let team: Team;

/** A new organisation with one member per role and the invented device, made through the app's own pages. */
async function createTeam(label: string): Promise<Team> {
  const { client: owner, slug } = await signUpNewOrganisation(label);
  const form = new FormData();
  for (const [name, value] of Object.entries({ intent: "import", target: "site:new", siteName: "Breakwater office", fileName: "breakwater.json", documentText: JSON.stringify(BREAKWATER) })) form.append(name, value);
  const imported = await owner.request(`/o/${slug}/devices/import`, { method: "POST", body: form });
  const deviceId = imported.location?.match(new RegExp(`/devices/(${UUID})$`))?.[1];
  if (!deviceId) throw new Error(`import failed: ${imported.status} ${imported.text.slice(0, 300)}`);
  const members = { owner } as Record<Role, TestClient>;
  for (const role of ROLES.filter((candidate) => candidate !== "owner")) {
    const email = uniqueEmail(`dc-${role}`);
    expect((await owner.post(`/o/${slug}/settings/members`, { intent: "invite", email, role })).status).toBe(302);
    const path = new URL(await waitForLink(outboxDir, email, INVITATION_LINK)).pathname;
    const member = new TestClient();
    expect((await member.post(path, { name: `Member ${role}`, password: GOOD_PASSWORD })).status).toBe(302);
    members[role] = member;
  }
  const organisation = await Organisation.findOne({ where: { slug } });
  return { slug, organisationId: organisation?.id ?? "", deviceId, overview: `/o/${slug}/devices/${deviceId}`, members };
}

beforeAll(async () => {
  team = await createTeam("dismissal-2p");
}, 60_000);

function post(role: Role, fields: Record<string, string>): Promise<FetchResult> {
  return team.members[role].post(`${team.overview}/dismissals`, fields);
}

/** The action's refusal body: the messages by field (JSON, as the page's fetcher reads it). */
function refusal(result: FetchResult): { errors: Record<string, string>; values: { reason: string } } {
  return JSON.parse(result.text) as { errors: Record<string, string>; values: { reason: string } };
}

/** The counts in the overview's "Active findings" card, by severity. */
function activeCounts(html: string): Record<string, number> {
  const card = plain(html).match(/Active findings<\/h2>([\s\S]*?)<\/div>/)?.[1] ?? "";
  return Object.fromEntries([...card.matchAll(/(\d+) (critical|high|medium|low|info)/g)].map((match) => [match[2], Number(match[1])]));
}

/** The findings page's "N active high" figures. */
function fleetActive(html: string): Record<string, number> {
  return Object.fromEntries([...plain(html).matchAll(/aria-label="(\d+) active (critical|high|medium|low|info);/g)].map((match) => [match[2], Number(match[1])]));
}

/** Whether the page offers a submit button with this intent (React writes its attributes in either order). */
function offers(html: string, intent: string): boolean {
  return [...html.matchAll(/<button[^>]*>/g)].some(([tag]) => tag.includes('name="intent"') && tag.includes(`value="${intent}"`));
}

/** The standing dismissal row of a finding on the team's device, straight from the database. */
async function standing(key: string): Promise<FindingDismissal | null> {
  return FindingDismissal.findOne({ where: { deviceId: team.deviceId, findingKey: key, restoredAt: null } });
}

/** Ends whatever dismissal stands on the finding, so the next step starts clean. */
async function clear(key: string): Promise<void> {
  if (await standing(key)) expect((await post("owner", { intent: "restore", key })).status).toBe(302);
}

describe("A high or critical finding's dismissal takes a second person", () => {
  test("Role matrix: engineers and above may ask; reviewers and above may confirm or decline someone else's request; trainees neither", async () => {
    for (const role of ROLES) {
      const asked = await post(role, { intent: "dismiss", key: DEFAULT_NAME.key, reason: REASON });
      if (roleRank(role) >= roleRank("engineer")) {
        expect(asked.status, `${role} asks`).toBe(302);
        expect((await standing(DEFAULT_NAME.key))?.needsConfirmation, role).toBe(true);
        // Withdrawing is for engineers and above too.
        expect((await post(role, { intent: "restore", key: DEFAULT_NAME.key })).status, `${role} withdraws`).toBe(302);
      } else {
        expect(asked.status, `${role} asks`).toBe(403);
      }
      expect(await standing(DEFAULT_NAME.key), role).toBeNull();
    }
    for (const role of ROLES.filter((candidate) => candidate !== "owner")) {
      expect((await post("owner", { intent: "dismiss", key: DEFAULT_NAME.key, reason: REASON })).status).toBe(302);
      const confirmed = await post(role, { intent: "confirm", key: DEFAULT_NAME.key });
      if (roleRank(role) >= roleRank("reviewer")) {
        expect(confirmed.status, `${role} confirms`).toBe(302);
        const row = await standing(DEFAULT_NAME.key);
        expect(row?.confirmedAt, role).not.toBeNull();
        expect(row?.confirmedByEmail, role).not.toBe(row?.dismissedByEmail);
      } else {
        expect(confirmed.status, `${role} confirms`).toBe(403);
        expect((await post(role, { intent: "decline", key: DEFAULT_NAME.key })).status, `${role} declines`).toBe(403);
        expect((await standing(DEFAULT_NAME.key))?.confirmedAt, role).toBeNull();
      }
      await clear(DEFAULT_NAME.key);
    }
    // A reviewer declines: the request ends and the finding stays active.
    expect((await post("engineer", { intent: "dismiss", key: DEFAULT_NAME.key, reason: REASON })).status).toBe(302);
    expect((await post("reviewer", { intent: "decline", key: DEFAULT_NAME.key })).status).toBe(302);
    expect(await standing(DEFAULT_NAME.key)).toBeNull();
    // Nothing awaits now: confirming or declining finds nothing (404), as does confirming twice.
    expect((await post("reviewer", { intent: "confirm", key: DEFAULT_NAME.key })).status).toBe(404);
  });

  test("The one who asked cannot confirm or decline their own request, whatever their role (403 with the reason)", async () => {
    for (const role of ["engineer", "owner"] as const) {
      expect((await post(role, { intent: "dismiss", key: NO_SECOND_FACTOR.key, reason: REASON })).status).toBe(302);
      const own = await post(role, { intent: "confirm", key: NO_SECOND_FACTOR.key });
      expect(own.status).toBe(403);
      expect(refusal(own).errors.form).toBe("You asked for this dismissal, so you cannot confirm it: a second person (a reviewer or above) checks the reason and confirms it.");
      const declined = await post(role, { intent: "decline", key: NO_SECOND_FACTOR.key });
      expect(declined.status).toBe(403);
      expect(refusal(declined).errors.form).toContain("withdraw it instead");
      // Still waiting, unconfirmed; the page says so to its author without offering Confirm.
      expect((await standing(NO_SECOND_FACTOR.key))?.confirmedAt).toBeNull();
      const page = plain((await team.members[role].get(team.overview)).text);
      expect(page).toContain("Dismissal awaiting confirmation");
      expect(offers(page, "confirm")).toBe(false);
      expect(offers(page, "restore")).toBe(true);
      await clear(NO_SECOND_FACTOR.key);
    }
  });

  test("A reason of 19 characters is refused beside its field (400, the text kept); 20 characters are enough", async () => {
    const nineteen = "Accepted by the CSO"; // 19 characters
    expect(nineteen).toHaveLength(19);
    const short = await post("engineer", { intent: "dismiss", key: DEFAULT_NAME.key, reason: nineteen });
    expect(short.status).toBe(400);
    expect(refusal(short).errors.reason).toBe("A high or critical finding needs a reason of at least 20 characters (this one has 19), so the reviewer who confirms it can judge the risk.");
    expect(refusal(short).values.reason).toBe(nineteen);
    // Spaces around the reason do not count.
    expect((await post("engineer", { intent: "dismiss", key: DEFAULT_NAME.key, reason: `  ${nineteen}   ` })).status).toBe(400);
    expect(await standing(DEFAULT_NAME.key)).toBeNull();
    expect((await post("engineer", { intent: "dismiss", key: DEFAULT_NAME.key, reason: `${nineteen}.` })).status).toBe(302);
    expect((await standing(DEFAULT_NAME.key))?.reason).toBe(`${nineteen}.`);
    await clear(DEFAULT_NAME.key);
  });

  test("A lockout finding cannot be dismissed: refused in words (403), no control offered, and the database refuses it too", async () => {
    const refused = await post("owner", { intent: "dismiss", key: LOCKOUT.key, reason: "The far office closes next month anyway." });
    expect(refused.status).toBe(403);
    expect(refusal(refused).errors.form).toMatch(/^A lockout cannot be dismissed, only fixed: give the operator network a login path again/);
    expect(await standing(LOCKOUT.key)).toBeNull();
    const page = plain((await team.members.owner.get(team.overview)).text);
    expect(page).toContain(LOCKOUT.title);
    expect(page).toContain("A lockout cannot be dismissed, only fixed");
    expect(page).not.toContain(`name="intent" value="dismiss"/><input type="hidden" name="key" value="${LOCKOUT.key}"`);
    // The other findings keep their control.
    expect(page).toContain(`name="intent" value="dismiss"/><input type="hidden" name="key" value="${DEFAULT_NAME.key}"`);
    // Written past the service, a standing lockout dismissal breaks a database check.
    await expect(
      FindingDismissal.create({
        organisationId: team.organisationId,
        deviceId: team.deviceId,
        findingKey: LOCKOUT.key,
        code: "lockout",
        elements: ["operator-network:far-office"],
        severity: "critical",
        title: LOCKOUT.title,
        revisionNumber: 1,
        reason: "Written past the service on purpose.",
        dismissedByUserId: null,
        dismissedByEmail: "someone@test.example",
        needsConfirmation: true,
        restoredAt: null,
        restoredByUserId: null,
        restoredByEmail: null,
      }),
    ).rejects.toThrow(/finding_dismissals_no_lockout/);
  });

  test("The database refuses a confirmation by the one who asked and a short reason on a two-person dismissal", async () => {
    expect((await post("engineer", { intent: "dismiss", key: DEFAULT_NAME.key, reason: REASON })).status).toBe(302);
    const row = await standing(DEFAULT_NAME.key);
    await expect(row!.update({ confirmedAt: new Date(), confirmedByUserId: row!.dismissedByUserId, confirmedByEmail: row!.dismissedByEmail })).rejects.toThrow(/finding_dismissals_second_person/);
    await expect(row!.update({ reason: "too short" })).rejects.toThrow(/finding_dismissals_confirmation_reason/);
    await clear(DEFAULT_NAME.key);
  });

  test("An unconfirmed dismissal leaves the finding in every count; once confirmed it leaves them; every step is audited", async () => {
    const owner = team.members.owner;
    const findingsPage = `/o/${team.slug}/findings`;
    const before = await owner.get(team.overview);
    const countsBefore = activeCounts(before.text);
    expect(countsBefore).toMatchObject({ critical: 1, high: 2, medium: 1 });
    expect(fleetActive((await owner.get(findingsPage)).text)).toMatchObject({ critical: 1, high: 2, medium: 1 });

    expect((await post("engineer", { intent: "dismiss", key: DEFAULT_NAME.key, reason: REASON })).status).toBe(302);
    // Awaiting confirmation: still active, still counted, on the overview and on the findings page.
    const waiting = await owner.get(team.overview);
    expect(activeCounts(waiting.text)).toEqual(countsBefore);
    expect(plain(waiting.text)).toContain("1 dismissal awaits confirmation; counted until confirmed.");
    expect(plain(waiting.text)).not.toContain("Dismissed (");
    const fleetWaiting = plain((await owner.get(findingsPage)).text);
    expect(fleetActive(fleetWaiting)).toMatchObject({ high: 2 });
    expect(fleetWaiting).toContain(DEFAULT_NAME.title);
    expect(fleetWaiting).toContain("Dismissal awaiting confirmation");

    // "Awaiting my confirmation": the reviewer sees it with Confirm; the engineer who asked does not.
    const mine = plain((await team.members.reviewer.get(`${findingsPage}?awaiting=mine`)).text);
    expect(mine).toContain(DEFAULT_NAME.title);
    expect(mine).toContain(REASON);
    expect(offers(mine, "confirm")).toBe(true);
    expect(mine).not.toContain(NO_SECOND_FACTOR.title);
    // The counts keep their scope: the filter narrows the list, not the figures.
    expect(fleetActive(mine)).toMatchObject({ critical: 1, high: 2, medium: 1 });
    const asker = plain((await team.members.engineer.get(`${findingsPage}?awaiting=mine`)).text);
    expect(asker).toContain("Nothing awaits your confirmation");
    // A trainee is offered no such filter.
    expect(plain((await team.members.trainee.get(findingsPage)).text)).not.toContain('name="awaiting"');

    // Confirmed from the findings page, the reviewer comes back to the same view.
    const back = `${findingsPage}?awaiting=mine`;
    const confirmed = await post("reviewer", { intent: "confirm", key: DEFAULT_NAME.key, returnTo: back });
    expect(confirmed.status).toBe(302);
    expect(confirmed.location).toBe(back);
    expect(plain((await team.members.reviewer.get(back)).text)).toContain("Nothing awaits your confirmation");
    // A return address outside the organisation is not followed: the overview instead.
    expect((await post("engineer", { intent: "dismiss", key: NO_SECOND_FACTOR.key, reason: REASON })).status).toBe(302);
    const declined = await post("admin", { intent: "decline", key: NO_SECOND_FACTOR.key, returnTo: "//evil.example/o/x" });
    expect(declined.status).toBe(302);
    expect(declined.location).toBe(team.overview);

    const after = await owner.get(team.overview);
    expect(activeCounts(after.text)).toEqual({ ...countsBefore, high: countsBefore.high - 1 });
    expect(plain(after.text)).toContain("Dismissed (1)");
    expect(plain(after.text)).toMatch(/confirmed by [^ ]+@test\.example/);
    expect(fleetActive((await owner.get(findingsPage)).text)).toMatchObject({ critical: 1, high: 1, medium: 1 });
    expect(plain((await owner.get(findingsPage)).text)).not.toContain(DEFAULT_NAME.title);

    // Restored, it counts again. The audit log has every step, in words.
    expect((await post("admin", { intent: "restore", key: DEFAULT_NAME.key })).status).toBe(302);
    expect(activeCounts((await owner.get(team.overview)).text)).toEqual(countsBefore);
    expect((await post("engineer", { intent: "dismiss", key: NO_SECOND_FACTOR.key, reason: REASON })).status).toBe(302);
    expect((await post("engineer", { intent: "restore", key: NO_SECOND_FACTOR.key })).status).toBe(302);
    const audit = plain((await owner.get(`/o/${team.slug}/settings/audit`)).text);
    for (const action of ["finding.dismissal-requested", "finding.dismissal-confirmed", "finding.dismissal-declined", "finding.dismissal-withdrawn", "finding.restored"]) {
      expect(audit, action).toContain(`<tr data-action="${action}"`);
    }
    expect(audit).toContain("awaiting a second person's confirmation");
  });
});
