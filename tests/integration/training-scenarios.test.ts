import { afterAll, describe, expect, test } from "vitest";
import { AuditEvent, DeviceRevision, TrainingScenario } from "#models/index";
import { getDatabase } from "#server/db/database.server";
import { parseEntry } from "#server/engine/addresses";
import { TRAINING_EXAMPLES } from "#server/training/examples";
import { visibleText } from "../support/html";
import { MOLE } from "../support/proposal-team";
import { createdId, makeTrainingTeam } from "../support/training-team";

// Teaching scenarios (issue 12, docs/decisions/016): made by trainers, read by everyone, apart from the fleet.

const sequelize = getDatabase();
afterAll(() => sequelize.close());

/** RFC 5737 §3 and RFC 3849, and private space (RFC 1918 §3, RFC 4193 §3.1). */
const DOCUMENTATION = ["192.0.2.0/24", "198.51.100.0/24", "203.0.113.0/24", "2001:db8::/32"].map((text) => parseEntry(text).range);
const PRIVATE = ["10.0.0.0/8", "172.16.0.0/12", "192.168.0.0/16", "fc00::/7"].map((text) => parseEntry(text).range);
const within = (text: string, blocks: typeof DOCUMENTATION) => {
  const range = parseEntry(text.split("/")[0]).range;
  return blocks.some((block) => block.family === range.family && block.first <= range.first && range.last <= block.last);
};

describe("Teaching scenarios", () => {
  test("A trainer who is a reviewer starts a scenario from each shipped example; every member reads them; the training page lists them", async () => {
    const team = await makeTrainingTeam("examples");
    const trainer = await team.members.reviewer.client();
    const ids: string[] = [];
    for (const example of TRAINING_EXAMPLES) {
      const response = await trainer.post(`${team.training}/scenarios/new`, { intent: "create", title: example.title, summary: "", source: "example", example: example.key });
      ids.push(createdId(response, "scenarios"));
    }
    const stored = await TrainingScenario.findAll({ where: { organisationId: team.organisationId } });
    expect(stored.map((scenario) => scenario.exampleKey).sort()).toEqual(TRAINING_EXAMPLES.map((example) => example.key).sort());
    // Left empty, the summary is the example's own.
    expect(stored.find((scenario) => scenario.exampleKey === "rule-order")?.summary).toBe(TRAINING_EXAMPLES.find((example) => example.key === "rule-order")!.summary);
    expect(await AuditEvent.count({ where: { organisationId: team.organisationId, action: "training.scenario-created" } })).toBe(TRAINING_EXAMPLES.length);

    const trainee = await team.members.trainee.client();
    const home = visibleText((await trainee.get(team.training)).text);
    for (const example of TRAINING_EXAMPLES) expect(home).toContain(example.title);
    const page = await trainee.get(`${team.training}/scenarios/${ids[1]}`);
    expect(page.status).toBe(200);
    expect(visibleText(page.text)).toContain("Teaching scenario — not a fleet device");
    const rules = await trainee.get(`${team.training}/scenarios/${ids[1]}/model/rules`);
    expect(rules.status).toBe(200);
    expect(rules.text).toContain("drop-internet");
  });

  test("A trainee cannot make or edit scenarios (403), and nothing changes", async () => {
    const team = await makeTrainingTeam("refusals");
    const trainer = await team.members.reviewer.client();
    const id = createdId(await trainer.post(`${team.training}/scenarios/new`, { intent: "create", title: "Rule order", summary: "", source: "example", example: "rule-order" }), "scenarios");
    const trainee = await team.members.trainee.client();
    expect((await trainee.get(`${team.training}/scenarios/new`)).status).toBe(403);
    expect((await trainee.post(`${team.training}/scenarios/new`, { intent: "create", title: "Mine", source: "blank" })).status).toBe(403);
    expect((await trainee.post(`${team.training}/scenarios/${id}`, { intent: "save-details", title: "Renamed", summary: "" })).status).toBe(403);
    expect((await trainee.post(`${team.training}/scenarios/${id}`, { intent: "delete" })).status).toBe(403);
    expect((await trainee.post(`${team.training}/scenarios/${id}/model/rules`, { intent: "delete-rule", ruleId: "drop-internet", baseRevision: "1" })).status).toBe(403);
    // An engineer without the flag is no trainer either: fleet rights are not training rights.
    const engineer = await team.members.author.client();
    expect((await engineer.post(`${team.training}/scenarios/${id}/model/rules`, { intent: "delete-rule", ruleId: "drop-internet", baseRevision: "1" })).status).toBe(403);
    const scenario = await TrainingScenario.findByPk(id, { rejectOnEmpty: true });
    expect(scenario.title).toBe("Rule order");
    expect(scenario.version).toBe(1);
    expect(scenario.document.inboundRules.map((rule) => rule.id)).toContain("drop-internet");
    // The trainee's pages offer no editing.
    expect((await trainee.get(`${team.training}/scenarios/${id}/model/rules`)).text).not.toContain('name="intent" value="delete-rule"');
  });

  test("A trainer edits a scenario's model in the device editor's sections: a bad edit is said beside its field and saves nothing, a stale one is refused", async () => {
    const team = await makeTrainingTeam("editing");
    const trainer = await team.members.reviewer.client();
    const id = createdId(await trainer.post(`${team.training}/scenarios/new`, { intent: "create", title: "Order fixed", summary: "", source: "example", example: "rule-order" }), "scenarios");
    const rules = `${team.training}/scenarios/${id}/model/rules`;
    const moved = await trainer.post(rules, { intent: "move-rule", ruleId: "drop-internet", to: "2", baseRevision: "1" });
    expect(moved.status).toBe(302);
    let scenario = await TrainingScenario.findByPk(id, { rejectOnEmpty: true });
    expect(scenario.version).toBe(2);
    expect(scenario.document.inboundRules.map((rule) => rule.id).slice(0, 2)).toEqual(["allow-ops-centre", "drop-internet"]);

    const bad = await trainer.post(rules, { intent: "save-rule", id: "allow-partner", interface: "outside", sources: "partner-office", destinations: "any", services: "https", schedule: "all-week", action: "allow", enabled: "on", note: "", baseRevision: "2" });
    expect(bad.status).toBe(400);
    expect(visibleText(bad.text)).toContain("partner-office");
    expect(bad.text).toContain('value="allow-partner"');
    scenario = await TrainingScenario.findByPk(id, { rejectOnEmpty: true });
    expect(scenario.version).toBe(2);

    const stale = await trainer.post(rules, { intent: "delete-rule", ruleId: "drop-inside", baseRevision: "1" });
    expect(stale.status).toBe(409);
    expect((await TrainingScenario.findByPk(id, { rejectOnEmpty: true })).document.inboundRules).toHaveLength(4);
  });

  test("Copying a fleet device, anonymised, never changes the device; the copy names none of the customer's objects and moves public addresses into the documentation ranges", async () => {
    const team = await makeTrainingTeam("copy");
    const trainer = await team.members.reviewer.client();
    const revisionsBefore = await DeviceRevision.findAll({ where: { deviceId: team.deviceId }, order: [["number", "ASC"]] });
    const id = createdId(await trainer.post(`${team.training}/scenarios/new`, { intent: "create", title: "The mole, anonymised", summary: "", source: "copy", deviceId: team.deviceId, anonymise: "on" }), "scenarios");
    const plainCopy = createdId(await trainer.post(`${team.training}/scenarios/new`, { intent: "create", title: "The mole, as it is", summary: "", source: "copy", deviceId: team.deviceId }), "scenarios");
    const revisionsAfter = await DeviceRevision.findAll({ where: { deviceId: team.deviceId }, order: [["number", "ASC"]] });
    expect(revisionsAfter.map((revision) => [revision.number, JSON.stringify(revision.document)])).toEqual(revisionsBefore.map((revision) => [revision.number, JSON.stringify(revision.document)]));

    const copy = await TrainingScenario.findByPk(id, { rejectOnEmpty: true });
    expect(copy.anonymised).toBe(true);
    expect(copy.sourceDeviceId).toBe(team.deviceId);
    const text = JSON.stringify(copy.document);
    for (const name of [MOLE.device.name, "noc-net", "partner-hq", "ops-lena", "outside", "inside", "final drop"]) expect(text).not.toContain(name);
    for (const entry of [...copy.document.interfaces.flatMap((entry) => entry.addresses), ...copy.document.addresses.flatMap((object) => object.entries)]) {
      expect(within(entry, DOCUMENTATION) || within(entry, PRIVATE), entry).toBe(true);
    }
    const asIs = await TrainingScenario.findByPk(plainCopy, { rejectOnEmpty: true });
    expect(asIs.anonymised).toBe(false);
    expect(asIs.document.addresses.map((object) => object.name)).toEqual(["noc-net", "partner-hq"]);

    // The trainer sees where it came from; a trainee does not.
    expect(visibleText((await trainer.get(`${team.training}/scenarios/${id}`)).text)).toContain(MOLE.device.name);
    expect(visibleText((await (await team.members.trainee.client()).get(`${team.training}/scenarios/${id}`)).text)).not.toContain(MOLE.device.name);
  });

  test("Scenarios are never in the fleet: not in its device count, its findings or its changes", async () => {
    const team = await makeTrainingTeam("apart");
    const engineer = await team.members.engineer.client();
    const words = (html: string) => visibleText(html).replace(/\s+/g, " ");
    const fleetBefore = words((await engineer.get(`/o/${team.slug}/devices`)).text);
    const findingCount = (text: string) => / of (\d+) findings?\b/.exec(text)?.[1];
    const findingsBefore = words((await engineer.get(`/o/${team.slug}/findings`)).text);
    expect(findingCount(findingsBefore)).toBeDefined();
    expect(fleetBefore).toMatch(/\b1 of 1 device\b/);
    const trainer = await team.members.reviewer.client();
    // The second-factor example has a password-only account (a no-second-factor finding, were it a device).
    createdId(await trainer.post(`${team.training}/scenarios/new`, { intent: "create", title: "Second factor", summary: "", source: "example", example: "second-factor" }), "scenarios");
    createdId(await trainer.post(`${team.training}/scenarios/new`, { intent: "create", title: "Copy", summary: "", source: "copy", deviceId: team.deviceId, anonymise: "on" }), "scenarios");
    const fleet = words((await engineer.get(`/o/${team.slug}/devices`)).text);
    expect(fleet).toMatch(/\b1 of 1 device\b/);
    expect(fleet).not.toContain("tessaly-gw");
    const findings = words((await engineer.get(`/o/${team.slug}/findings`)).text);
    expect(findings).not.toContain("tessaly-gw");
    expect(findings).not.toContain("vendor-support");
    expect(findingCount(findings)).toBe(findingCount(findingsBefore));
    expect(visibleText((await engineer.get(`/o/${team.slug}/changes`)).text)).not.toContain("tessaly-gw");
  });

  test("Bad input: an unknown example or device is said beside its field; another organisation's scenario is a 404; a malformed id a 400", async () => {
    const team = await makeTrainingTeam("bad-input");
    const other = await makeTrainingTeam("bad-input-other");
    const trainer = await team.members.reviewer.client();
    const unknown = await trainer.post(`${team.training}/scenarios/new`, { intent: "create", title: "Unknown", source: "example", example: "no-such-example" });
    expect(unknown.status).toBe(400);
    expect(visibleText(unknown.text)).toContain("Choose one of the examples listed.");
    expect(unknown.text).toContain('value="Unknown"');
    const foreign = await trainer.post(`${team.training}/scenarios/new`, { intent: "create", title: "Foreign", source: "copy", deviceId: other.deviceId, anonymise: "on" });
    expect(foreign.status).toBe(404);
    const control = await trainer.post(`${team.training}/scenarios/new`, { intent: "create", title: "Bell\u0007", source: "blank" });
    expect(control.status).toBe(400);
    const noSource = await trainer.post(`${team.training}/scenarios/new`, { intent: "create", title: "No source" });
    expect(noSource.status).toBe(400);
    const otherTrainer = await other.members.reviewer.client();
    const theirs = createdId(await otherTrainer.post(`${other.training}/scenarios/new`, { intent: "create", title: "Theirs", source: "blank" }), "scenarios");
    expect((await trainer.get(`${team.training}/scenarios/${theirs}`)).status).toBe(404);
    expect((await trainer.post(`${team.training}/scenarios/${theirs}/model/rules`, { intent: "delete-rule", ruleId: "x", baseRevision: "1" })).status).toBe(404);
    expect((await trainer.get(`${team.training}/scenarios/not-a-uuid`)).status).toBe(400);
    const taken = await trainer.post(`${team.training}/scenarios/new`, { intent: "create", title: "Unknown", source: "blank" });
    expect(taken.status).toBe(302);
    const again = await trainer.post(`${team.training}/scenarios/new`, { intent: "create", title: "Unknown", source: "blank" });
    expect(again.status).toBe(409);
  });
});
