import { afterAll, inject, describe, expect, test } from "vitest";
import { Membership, Organisation } from "#models/index";
import { getDatabase } from "#server/db/database.server";
import { waitForLink } from "../support/outbox";
import { DEMO_PASSWORDS, GOOD_PASSWORD, signUpNewOrganisation, TestClient, uniqueEmail } from "../support/client";
import { plain } from "../support/html";

const outboxDir = inject("outboxDir");
const LINK = /https?:\/\/\S+\/invitations\/[A-Za-z0-9_-]+/;
// The models are bound to the test database when it is first opened.
const sequelize = getDatabase();
afterAll(() => sequelize.close());

/** The membership id of the one member of a new organisation (the page offers no controls on one's own row). */
async function onlyMembershipId(slug: string): Promise<string | undefined> {
  const organisation = await Organisation.findOne({ where: { slug } });
  const memberships = await Membership.findAll({ where: { organisationId: organisation?.id ?? "" } });
  return memberships.length === 1 ? memberships[0].id : undefined;
}

describe("Invitations", () => {
  test("An owner invites a new person, who joins through the e-mailed link with the invited role", async () => {
    const { client: owner, slug } = await signUpNewOrganisation("inviter");
    const invitee = uniqueEmail("invitee");
    const sent = await owner.post(`/o/${slug}/settings/members`, { intent: "invite", email: invitee, role: "reviewer" });
    expect(sent.status).toBe(302);

    const path = new URL(await waitForLink(outboxDir, invitee, LINK)).pathname;
    const guest = new TestClient();
    const page = await guest.get(path);
    expect(page.status).toBe(200);
    expect(page.text).toContain("reviewer");

    const joined = await guest.post(path, { name: "Rhea Invitee", password: GOOD_PASSWORD });
    expect(joined.status).toBe(302);
    expect(joined.location).toBe(`/o/${slug}`);
    const members = await guest.get(`/o/${slug}/settings/members`);
    expect(members.status).toBe(200);
    expect(members.text).toContain("Rhea Invitee");

    // The new member is a reviewer: reading is allowed, inviting is not.
    expect((await guest.post(`/o/${slug}/settings/members`, { intent: "invite", email: uniqueEmail("x"), role: "trainee" })).status).toBe(403);
    // The link is spent.
    expect((await new TestClient().get(path)).status).toBe(404);
  });

  test("An existing user accepts after signing in", async () => {
    const { client: owner, slug } = await signUpNewOrganisation("inviter2");
    const { email: existingEmail, client: existing } = await signUpNewOrganisation("existing");
    await owner.post(`/o/${slug}/settings/members`, { intent: "invite", email: existingEmail, role: "engineer" });
    const path = new URL(await waitForLink(outboxDir, existingEmail, LINK)).pathname;
    const accepted = await existing.post(path, {});
    expect(accepted.status).toBe(302);
    expect((await existing.get(`/o/${slug}/sites`)).status).toBe(200);
  });

  test("An admin may not hand out the owner role", async () => {
    const admin = new TestClient();
    await admin.signIn(...DEMO_PASSWORDS.admin);
    const response = await admin.post("/o/lanternfield/settings/members", { intent: "invite", email: uniqueEmail("would-be-owner"), role: "owner" });
    expect(response.status).toBe(403);
    expect(response.text).toContain("Only an owner can make someone an owner.");
  });

  test("The last owner can be neither removed nor demoted", async () => {
    const { client: owner, slug } = await signUpNewOrganisation("last-owner");
    const membershipId = await onlyMembershipId(slug);
    expect(membershipId).toBeDefined();
    const demote = await owner.post(`/o/${slug}/settings/members`, { intent: "change-role", membershipId: membershipId!, role: "admin" });
    expect(demote.status).toBe(409);
    expect(demote.text).toContain("last owner");
    const remove = await owner.post(`/o/${slug}/settings/members`, { intent: "remove", membershipId: membershipId! });
    expect(remove.status).toBe(409);
  });

  test("Members are offered role changes and removal for others, never for their own row", async () => {
    const { client: owner, slug } = await signUpNewOrganisation("own-row");
    const invitee = uniqueEmail("own-row-admin");
    await owner.post(`/o/${slug}/settings/members`, { intent: "invite", email: invitee, role: "admin" });
    const path = new URL(await waitForLink(outboxDir, invitee, LINK)).pathname;
    const admin = new TestClient();
    await admin.post(path, { name: "Row Admin", password: GOOD_PASSWORD });
    const page = await admin.get(`/o/${slug}/settings/members`);
    expect(page.status).toBe(200);
    // The admin sees the owner's row read-only (only an owner changes an owner) and their own row read-only too.
    expect(plain(page.text)).not.toContain("Role of Row Admin");
    expect(page.text).not.toContain('aria-label="Remove Row Admin"');
    expect(page.text).not.toMatch(/name="membershipId" value="[0-9a-f-]{36}"/);
    const ownerPage = plain((await owner.get(`/o/${slug}/settings/members`)).text);
    expect(ownerPage).toContain("Role of Row Admin");
    expect(ownerPage).toContain('aria-label="Remove Row Admin"');
    expect(ownerPage).not.toContain("Role of Test own-row");
  });

  test("Role changes and removals go to the audit log", async () => {
    const { client: owner, slug } = await signUpNewOrganisation("audited");
    const invitee = uniqueEmail("audited-invitee");
    await owner.post(`/o/${slug}/settings/members`, { intent: "invite", email: invitee, role: "trainee" });
    const path = new URL(await waitForLink(outboxDir, invitee, LINK)).pathname;
    await new TestClient().post(path, { name: "Audit Subject", password: GOOD_PASSWORD });
    const page = await owner.get(`/o/${slug}/settings/members`);
    const rows = [...page.text.matchAll(/name="membershipId" value="([0-9a-f-]{36})"/g)].map((match) => match[1]);
    const subjectId = rows.find((id) => page.text.indexOf(id) > page.text.indexOf("Audit Subject"));
    expect(subjectId).toBeDefined();
    expect((await owner.post(`/o/${slug}/settings/members`, { intent: "change-role", membershipId: subjectId!, role: "engineer" })).status).toBe(302);
    expect((await owner.post(`/o/${slug}/settings/members`, { intent: "remove", membershipId: subjectId! })).status).toBe(302);
    const audit = await owner.get(`/o/${slug}/settings/audit`);
    for (const action of ["invitation.sent", "invitation.accepted", "member.role-changed", "member.removed"]) expect(audit.text).toContain(`<tr data-action="${action}"`);
  });
});
