import { afterAll, describe, expect, test } from "vitest";
import { AuditEvent, Membership } from "#models/index";
import { getDatabase } from "#server/db/database.server";
import { makeTeam } from "../support/proposal-team";

// Who trains (docs/decisions/016): a flag on the membership, set by an admin or owner.

const sequelize = getDatabase();
afterAll(() => sequelize.close());

describe("The trainer capability", () => {
  test("An admin makes an engineer a trainer on the Members page, audited; the flag comes off the same way", async () => {
    const team = await makeTeam("trainer-flag");
    const admin = await team.members.admin.client();
    const membership = await Membership.findOne({ where: { organisationId: team.organisationId, userId: team.members.engineer.userId } });
    expect(membership?.trainer).toBe(false);
    const given = await admin.post(`/o/${team.slug}/settings/members`, { intent: "set-trainer", membershipId: membership!.id, trainer: "on" });
    expect(given.status).toBe(302);
    await membership!.reload();
    expect(membership!.trainer).toBe(true);
    const page = await admin.get(`/o/${team.slug}/settings/members`);
    expect(page.text).toContain(`Stop ${team.members.engineer.name} training`);
    const events = await AuditEvent.findAll({ where: { organisationId: team.organisationId, action: "member.trainer-changed" } });
    expect(events).toHaveLength(1);
    expect(events[0].targetId).toBe(membership!.id);

    expect((await admin.post(`/o/${team.slug}/settings/members`, { intent: "set-trainer", membershipId: membership!.id, trainer: "off" })).status).toBe(302);
    await membership!.reload();
    expect(membership!.trainer).toBe(false);
  });

  test("A reviewer cannot give the capability (403), and a bad value or id is a 4xx that changes nothing", async () => {
    const team = await makeTeam("trainer-flag-refused");
    const membership = await Membership.findOne({ where: { organisationId: team.organisationId, userId: team.members.trainee.userId } });
    const reviewer = await team.members.reviewer.client();
    expect((await reviewer.post(`/o/${team.slug}/settings/members`, { intent: "set-trainer", membershipId: membership!.id, trainer: "on" })).status).toBe(403);
    const admin = await team.members.admin.client();
    expect((await admin.post(`/o/${team.slug}/settings/members`, { intent: "set-trainer", membershipId: membership!.id, trainer: "maybe" })).status).toBe(400);
    expect((await admin.post(`/o/${team.slug}/settings/members`, { intent: "set-trainer", membershipId: "not-a-uuid", trainer: "on" })).status).toBe(400);
    expect((await admin.post(`/o/${team.slug}/settings/members`, { intent: "set-trainer", membershipId: "00000000-0000-4000-8000-000000000000", trainer: "on" })).status).toBe(404);
    await membership!.reload();
    expect(membership!.trainer).toBe(false);
  });
});
