import { randomUUID } from "node:crypto";
import { afterAll, beforeAll, describe, expect, test } from "vitest";
import { Device, DeviceRevision, Organisation, RevisionAnalysisRecord, Site } from "#models/index";
import { getDatabase } from "#server/db/database.server";
import { withQueryTally } from "#server/db/query-log.server";
import { DeviceRevisions, deviceRevisions, elementCount } from "#server/devices/index";
import { compileModel, exposure, findingKey, findings, trace, type VersionOneModel } from "#server/engine/index";
import { revisionAnalysisQueue } from "#server/jobs/revision-analysis.server";
import { stopJobQueue } from "#server/jobs/job-queue.server";
import { createDevice, saveEdit } from "#server/services/devices.server";
import type { AuditActor } from "#server/services/audit.server";

// The device-revision repository against the real test database: one home for "this
// organisation's device at this revision", with caches it owns and bounds it keeps.

const sequelize = getDatabase();
afterAll(async () => {
  await stopJobQueue();
  await sequelize.close();
});

const actor: AuditActor = { userId: null, email: "repository-test@test.example", clientAddress: "192.0.2.10" };
let organisationId = "";
let otherOrganisationId = "";
const deviceIds: string[] = [];

/** An invented device with a documentation-range (RFC 5737) outside address. */
function documentNamed(name: string, outside = "203.0.113.9/24") {
  return {
    schemaVersion: 2,
    device: { name },
    interfaces: [{ name: "outside", role: "wan", addresses: [outside], listeners: ["https", "ssh"] }],
    inboundRules: [{ id: "r1", interface: "any", sources: ["any"], destinations: ["any"], services: ["ssh"], action: "deny" }],
    accounts: [{ name: "harbour-ops", secondFactor: "totp" }],
  };
}

beforeAll(async () => {
  const suffix = randomUUID().slice(0, 8);
  const organisation = await Organisation.create({ slug: `repository-${suffix}`, name: "Repository test" });
  const other = await Organisation.create({ slug: `repository-other-${suffix}`, name: "Repository test (other)" });
  organisationId = organisation.id;
  otherOrganisationId = other.id;
  const site = await Site.create({ organisationId, name: "Pier office", customer: "", location: "" });
  for (const name of ["pier-a", "pier-b", "pier-c"]) deviceIds.push((await createDevice(organisationId, site.id, documentNamed(name), actor, "created")).id);
});

describe("The device-revision repository", () => {
  test("A device is found only in its own organisation, only by a UUID, and only at a revision it has", async () => {
    const repository = new DeviceRevisions();
    expect((await repository.find(organisationId, deviceIds[0]))?.device.name).toBe("pier-a");
    expect(await repository.find(otherOrganisationId, deviceIds[0])).toBeNull();
    expect(await repository.find(organisationId, "not-a-uuid")).toBeNull();
    expect(await repository.find(organisationId, deviceIds[0], { revisionNumber: 2 })).toBeNull();
  });

  test("A warm read is one query, a cold one two, and both give the same typed document", async () => {
    const repository = new DeviceRevisions();
    const cold = await withQueryTally(() => repository.find(organisationId, deviceIds[1]));
    const warm = await withQueryTally(() => repository.find(organisationId, deviceIds[1]));
    expect(cold.tally.count).toBe(2);
    expect(warm.tally.count).toBe(1);
    expect(warm.result?.document).toEqual(cold.result?.document);
    expect(warm.result?.document.interfaces[0].addresses).toEqual(["203.0.113.9/24"]);
    // The same analysis object, so the compiled model is built once and shared.
    expect(warm.result?.analysis).toBe(cold.result?.analysis);
  });

  test("The cache keeps at most its bound of revisions and evicts the least recently used", async () => {
    const repository = new DeviceRevisions({ maxRevisions: 2, maxElements: 10_000, maxFindings: 10 });
    for (const id of deviceIds) await repository.find(organisationId, id);
    expect(repository.cachedRevisions).toBe(2);
    // pier-a was used least recently and went first: reading it again costs the document query.
    const again = await withQueryTally(() => repository.find(organisationId, deviceIds[0]));
    expect(again.tally.count).toBe(2);
    const recent = await withQueryTally(() => repository.find(organisationId, deviceIds[2]));
    expect(recent.tally.count).toBe(1);
  });

  test("The cache is bounded by model size too: one huge revision cannot crowd out memory", async () => {
    const size = elementCount((await new DeviceRevisions().find(organisationId, deviceIds[0]))!.effective);
    // Room for two of these small devices by size, though ten by count.
    const repository = new DeviceRevisions({ maxRevisions: 10, maxElements: 2 * size + 1, maxFindings: 10 });
    for (const id of deviceIds) await repository.find(organisationId, id);
    expect(repository.cachedRevisions).toBe(2);
  });

  test("Saving returns before the analysis; the background job then stores the summary and the findings", async () => {
    const saved = await saveEdit(
      organisationId,
      deviceIds[2],
      1,
      (document) => ({ ...document, interfaces: document.interfaces.map((entry) => ({ ...entry, addresses: ["198.51.100.9/24"] })) }),
      actor,
      "moved the outside address",
    );
    expect(saved.number).toBe(2);
    await revisionAnalysisQueue.idle();
    const found = await deviceRevisions.find(organisationId, deviceIds[2]);
    expect(found?.revision.number).toBe(2);
    // The job ran in a job worker (the suite's server process): what it stored is read back with the revision.
    expect(found?.revision.analysisRecord?.findingKeys).toEqual((await deviceRevisions.findingsFor(found!)).map((finding) => [findingKey(finding), finding.severity]));
    // https listens on outside and only ssh is denied: a documentation source (RFC 5737) gets a login that asks for the second factor.
    expect(found?.revision.analysisRecord?.worstOutsideOutcome).toBe("login-mfa");
    // RFC 5737: 198.51.100.0/24 is TEST-NET-2; the probe arrives (layer 1) and is stopped by r1's deny (layer 2).
    const result = trace(found!.analysis.compiled, { from: "192.0.2.50", interface: "outside", service: "ssh", to: "198.51.100.9" });
    expect(result.outcome).toBe("silent");
    expect(result.ruleId).toBe("r1");
  });

  test("The background job's work compiles a saved revision on the one it was saved on, re-using its rule partitions, and answers as a fresh compile", async () => {
    const before = await deviceRevisions.find(organisationId, deviceIds[0]);
    // Analyse the current revision as the pages would, so it is compiled and in memory.
    expect(before?.analysis.findings.length).toBeGreaterThanOrEqual(0);
    const saved = await saveEdit(
      organisationId,
      deviceIds[0],
      before!.revision.number,
      (document) => ({
        ...document,
        inboundRules: [{ id: "r0", interface: "any", sources: ["any"], destinations: ["any"], services: ["https"], action: "deny", enabled: false }, ...document.inboundRules],
      }),
      actor,
      "added a disabled rule",
    );
    // The queued job ran in another process; this process does the job's work again, as a job
    // worker that analysed the previous revision would: its compiled model is in memory here.
    await revisionAnalysisQueue.idle();
    const saveRecord = await DeviceRevision.findOne({ where: { deviceId: deviceIds[0], number: saved.number } });
    await RevisionAnalysisRecord.destroy({ where: { revisionId: saveRecord!.id } });
    expect(await deviceRevisions.analyseSaved(saveRecord!.id)).toBe(true);
    const after = await deviceRevisions.find(organisationId, deviceIds[0]);
    expect(after?.revision.number).toBe(saved.number);
    const compiled = after!.analysis.compiled;
    expect(compiled.partitionSources.reused + compiled.partitionSources.updated + compiled.partitionSources.inherited).toBeGreaterThan(0);
    expect(compiled.partitionSources.swept).toBe(0);
    // Same answer as a model compiled from nothing (RFC 5737 source; r1 denies ssh, PRODUCT.md §3 layer 2).
    const fresh = compileModel(after!.effective);
    const probe = { from: "192.0.2.50", interface: "outside", service: "ssh", at: "2026-01-05T10:00:00Z" };
    expect(trace(compiled, probe)).toEqual(trace(fresh, probe));
    expect(after!.analysis.findings).toEqual(findings(fresh));
  });

  test("A revision whose analysis is not stored yet gets it from the first reader, once", async () => {
    const found = await deviceRevisions.find(organisationId, deviceIds[1]);
    await RevisionAnalysisRecord.destroy({ where: { revisionId: found!.revision.id } });
    const repository = new DeviceRevisions();
    const unstored = (await repository.find(organisationId, deviceIds[1]))!;
    expect(unstored.revision.analysisRecord).toBeNull();
    const [summary] = await repository.summariesOf([unstored.revision]);
    expect(summary.worstOutsideOutcome).toBe("login-mfa");
    expect(summary.findingsBySeverity).toMatchObject({ high: expect.any(Number) });
    const stored = await RevisionAnalysisRecord.findByPk(found!.revision.id);
    expect(stored?.worstOutsideOutcome).toBe("login-mfa");
    // Read back with the revision: no computing needed any more.
    expect((await repository.find(organisationId, deviceIds[1]))?.revision.analysisRecord?.worstOutsideOutcome).toBe("login-mfa");
  });

  test("Every current revision of an organisation comes in at most two queries, whatever the number of devices", async () => {
    const repository = new DeviceRevisions();
    const cold = await withQueryTally(() => repository.current(organisationId));
    expect(cold.result.map((entry) => entry.device.name)).toEqual(["pier-a", "pier-b", "pier-c"]);
    expect(cold.tally.count).toBe(2);
    const warm = await withQueryTally(() => repository.current(organisationId));
    expect(warm.tally.count).toBe(1);
  });
});

describe("Revisions saved in version 1 of the document", () => {
  test("A revision stored in version 1 is read as version 2 with the same answers, and the next save writes version 2", async () => {
    const site = await Site.create({ organisationId, name: "Quay office", customer: "", location: "" });
    const written = {
      schemaVersion: 2,
      device: { name: "quay-v1" },
      interfaces: [
        { name: "uplink", role: "wan", addresses: ["203.0.113.20/24"], listeners: ["https", "ssh"] },
        { name: "oob", role: "management", addresses: ["10.99.0.1/24"], listeners: ["ssh"] },
      ],
      inboundRules: [{ id: "r1", interface: "any", sources: ["any"], destinations: ["any"], services: ["ssh"], schedule: "all-week", action: "deny" }],
      accounts: [{ name: "harbour-ops", secondFactor: "totp" }],
    };
    const device = await createDevice(organisationId, site.id, written, actor, "created");
    const first = (await new DeviceRevisions().find(organisationId, device.id))!;
    // The same document as the first release wrote it (PRODUCT.md §4: wan was outside,
    // management was mgmt, the built-in schedule all-week was always). Revisions never change,
    // so such a row stays in the database; it is inserted here as it was then.
    const versionOne: VersionOneModel = {
      ...first.document,
      schemaVersion: 1,
      interfaces: first.document.interfaces.map((entry) => ({ ...entry, role: entry.role === "wan" ? "outside" : "mgmt" })),
      inboundRules: first.document.inboundRules.map((rule) => ({ ...rule, schedule: "always" })),
    };
    await DeviceRevision.create({ deviceId: device.id, number: 2, document: versionOne, sharedObjects: first.shared, summary: first.revision.summary, message: "saved by the first release", authorUserId: null, authorEmail: actor.email });
    await Device.update({ currentRevisionNumber: 2 }, { where: { id: device.id } });

    const read = (await new DeviceRevisions().find(organisationId, device.id))!;
    expect(read.revision.number).toBe(2);
    expect(read.document).toEqual(first.document);
    expect(read.analysis.findings).toEqual(first.analysis.findings);
    expect(exposure(read.analysis.compiled)).toEqual(exposure(first.analysis.compiled));
    // The fleet's worst outcome on wan interfaces reads the upgraded roles: https answers with a second factor.
    const [summary] = await new DeviceRevisions().summariesOf([read.revision]);
    expect(summary.worstOutsideOutcome).toBe("login-mfa");

    await saveEdit(organisationId, device.id, 2, (document) => ({ ...document, accounts: [...document.accounts, { ...document.accounts[0], name: "harbour-oncall" }] }), actor, "an account added");
    await revisionAnalysisQueue.idle();
    const saved = await DeviceRevision.findOne({ where: { deviceId: device.id, number: 3 } });
    expect(saved?.document.schemaVersion).toBe(2);
    expect(saved?.document.interfaces.map((entry) => entry.role)).toEqual(["wan", "management"]);
    expect(saved?.document.inboundRules.map((rule) => rule.schedule)).toEqual(["all-week"]);
  });
});
