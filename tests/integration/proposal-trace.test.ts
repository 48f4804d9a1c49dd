// Tracing a probe on either side of a change proposal (server/http/trace-subject.server.ts): the
// effect's example probes link to the trace page "on base" and "on draft", and those traces give
// the group's 'before' and 'after' outcomes; the draft is read-only and read by the same roles as
// the proposal itself; another organisation's or device's proposal is a 404, bad input a 400. And
// the proposal page a refused submission lands on names each of the gate's reasons once.
// Semantics: PRODUCT.md §3 (trace), docs/decisions/010-change-proposals.md.

import { afterAll, describe, expect, test } from "vitest";
import { Site } from "#models/index";
import { getDatabase } from "#server/db/database.server";
import { createDevice } from "#server/services/devices.server";
import { createProposal } from "#server/services/proposals.server";
import { plain, wordsOf } from "../support/html";
import { attemptOf, details, EVERYONE, mailbox, makeTeam, MOLE, revisionCount, type Team } from "../support/proposal-team";

const sequelize = getDatabase();
afterAll(() => sequelize.close());

/** A proposal that moves the catch-all deny r4 first: the NOC (10.20.30.0/24) loses its logins on inside. */
async function lockoutProposal(team: Team): Promise<string> {
  const { environment } = mailbox();
  const proposal = await createProposal({ organisationId: team.organisationId, deviceId: team.deviceId }, details("Deny first"), { kind: "edit", attempt: attemptOf({ kind: "rule.move", ruleId: "r4", to: 1 }), message: "Moved inbound rule r4" }, team.members.author.actor, environment);
  return proposal.id;
}

type TraceJson = { outcome: string; ruleId: string | null };

describe("The effect's example probes open the trace on the base and on the draft", () => {
  test("Every 'Trace on base' and 'Trace on draft' link of the effect traces to the outcomes its group says, before and after; the device is untouched", async () => {
    const team = await makeTeam("trace-sides");
    const proposalId = await lockoutProposal(team);
    const reader = await team.members.trainee.client();
    const page = await reader.get(`${team.path}/proposals/${proposalId}`);
    expect(page.status).toBe(200);
    const html = plain(page.text);
    // Each group: its chips' outcomes, then its example probe's two links.
    const groups = [...html.matchAll(/data-testid="effect-group" data-key="([a-z-]+)>([a-z-]+)"[\s\S]*?data-testid="trace-links"><a [^>]*href="([^"]+)"[^>]*>Trace on base r1<\/a><a [^>]*href="([^"]+)"[^>]*>Trace on draft<\/a>/g)];
    expect(groups.length).toBeGreaterThan(0);
    for (const [, before, after, baseLink, draftLink] of groups) {
      expect(baseLink).toContain(`proposal=${proposalId}&side=base&`);
      expect(draftLink).toContain(`proposal=${proposalId}&side=draft&`);
      const api = (link: string) => link.replace(`${team.path}/analysis?`, `${team.path}/api/trace?`);
      const onBase = await reader.get(api(baseLink));
      const onDraft = await reader.get(api(draftLink));
      expect(onBase.status).toBe(200);
      expect((JSON.parse(onBase.text) as TraceJson).outcome, baseLink).toBe(before);
      expect((JSON.parse(onDraft.text) as TraceJson).outcome, draftLink).toBe(after);
      expect(onBase.headers.get("X-Sallyport-Revision")).toBe("1");
      expect(onDraft.headers.get("X-Sallyport-Revision")).toBeNull();
    }
    // The NOC's ssh on inside: a login with a second factor on the base, no answer on the draft (r4 decides), a login still on the live device.
    const probe = new URLSearchParams({ from: "10.20.30.5", interface: "inside", service: "ssh" }).toString();
    const trace = async (query: string) => JSON.parse((await reader.get(`${team.path}/api/trace?${query}`)).text) as TraceJson;
    expect(await trace(`${probe}&proposal=${proposalId}&side=base`)).toMatchObject({ outcome: "login-mfa", ruleId: "r1" });
    expect(await trace(`${probe}&proposal=${proposalId}`)).toMatchObject({ outcome: "silent", ruleId: "r4" });
    expect(await trace(probe)).toMatchObject({ outcome: "login-mfa", ruleId: "r1" });
    expect(await revisionCount(team.deviceId)).toBe(1);

    // The trace page itself says what it traces, read-only, and traces the probe on it (the whole trace: a plain link opens the walkthrough at its first step).
    const tracePage = wordsOf((await reader.get(`${team.path}/analysis?${probe}&proposal=${proposalId}&side=draft&reveal=all`)).text);
    expect(tracePage).toContain("Tracing a draft — not live");
    expect(tracePage).toMatch(/the draft of “ ?Deny first ?” \(version \d+, made on r ?1\)/);
    expect(tracePage).toContain("No answer: dropped by inbound rule r4");
    const basePage = wordsOf((await reader.get(`${team.path}/analysis?${probe}&proposal=${proposalId}&side=base`)).text);
    expect(basePage).toContain("Tracing the base of a proposal: r1");
  });

  test("Whoever may read the proposal may trace on its draft, nobody else; bad input is a 400, another device's or organisation's proposal a 404", async () => {
    const team = await makeTeam("trace-roles");
    const proposalId = await lockoutProposal(team);
    const probe = new URLSearchParams({ from: "10.20.30.5", interface: "inside", service: "ssh" }).toString();
    for (const who of EVERYONE) {
      const client = await team.members[who].client();
      const proposalPage = await client.get(`${team.path}/proposals/${proposalId}`);
      const draftTrace = await client.get(`${team.path}/api/trace?${probe}&proposal=${proposalId}`);
      // The same guard (PROPOSAL_READ_ROLE) decides both.
      expect(draftTrace.status, who).toBe(proposalPage.status);
    }
    const reader = await team.members.trainee.client();
    const status = async (query: string) => (await reader.get(`${team.path}/api/trace?${probe}&${query}`)).status;
    expect(await status("proposal=not-a-proposal")).toBe(400);
    expect(await status(`proposal=${proposalId}&side=middle`)).toBe(400);
    expect(await status("side=draft")).toBe(400);
    expect(await status("proposal=00000000-0000-4000-8000-000000000000")).toBe(404);
    expect((await reader.get(`${team.path}/analysis?${probe}&proposal=not-a-proposal`)).status).toBe(400);

    // The same proposal asked for on another device of the organisation: 404, as if it did not exist.
    const site = await Site.findOne({ where: { organisationId: team.organisationId } });
    const other = await createDevice(team.organisationId, site!.id, { ...MOLE, device: { ...MOLE.device, name: "mole-edge-2" } }, team.members.owner.actor, "created");
    expect((await reader.get(`/o/${team.slug}/devices/${other.id}/api/trace?${probe}&proposal=${proposalId}`)).status).toBe(404);

    // Another organisation's member: the device itself is a 404.
    const outsiders = await makeTeam("trace-outsider");
    const outsider = await outsiders.members.owner.client();
    expect((await outsider.get(`${team.path}/api/trace?${probe}&proposal=${proposalId}`)).status).toBe(404);
  });
});

describe("A refused submission names each reason once", () => {
  test("After the lockout guard refuses the submission, the page says each operator network's loss once, and the form points to it", async () => {
    const team = await makeTeam("reasons-once");
    const proposalId = await lockoutProposal(team);
    const author = await team.members.author.client();
    const refused = await author.post(`${team.path}/proposals/${proposalId}`, { intent: "submit", acknowledgement: "" });
    expect(refused.status).toBe(409);
    const text = wordsOf(refused.text);
    const count = (needle: string) => text.split(needle).length - 1;
    expect(count("Not submitted: the lockout guard blocks this change.")).toBeGreaterThan(0);
    // The gate's reason, once on the page (not in the form's message, not beside the field, not again in the effect).
    expect(count("Operator network “noc-net” would lose every login path")).toBe(1);
    expect(count("no login any more from 10.20.30.0/24")).toBe(1);
    expect(count("loses every login path")).toBe(0);
    expect(text).toContain("Why: Lockout guard and expectations, above.");
  });
});
