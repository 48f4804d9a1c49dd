import { randomUUID } from "node:crypto";
import { afterAll, beforeAll, describe, expect, test } from "vitest";
import type PgBoss from "pg-boss";
import { DeviceRevision, Organisation, RevisionAnalysisRecord, Site } from "#models/index";
import { getDatabase } from "#server/db/database.server";
import { DeviceRevisions, deviceRevisions } from "#server/devices/index";
import { withQueryTally } from "#server/db/query-log.server";
import { fleetDeviceRows } from "#server/services/device-list.server";
import { fleetFindings } from "#server/services/findings.server";
import { compileModel, findingKey, findings, parseModel } from "#server/engine/index";
import { BENCH_SIZE, generateModel } from "#server/engine/testing/generate-model";
import { closeAnalysisPool, analyseOffThread, POOL_THRESHOLD_ELEMENTS } from "#server/jobs/analysis-pool.server";
import { createJobQueue, stopJobQueue } from "#server/jobs/job-queue.server";
import { JOB_QUEUE_SCHEMA, QUEUES } from "#server/jobs/queues";
import { REVISION_ANALYSIS_QUEUE, revisionAnalysisQueue, runRevisionAnalysis, workRevisionAnalysis, type RevisionAnalysisOutput } from "#server/jobs/revision-analysis.server";
import { createDevice } from "#server/services/devices.server";
import type { AuditActor } from "#server/services/audit.server";
import { summariseDocument } from "#server/workspace/index";
import { elementCount } from "#server/devices/index";
import { ownerConnection } from "../support/database";
import { signUpNewOrganisation } from "../support/client";

// Background analysis on PostgreSQL (docs/decisions/018): a save queues a job (pg-boss), a job
// worker — here the suite's server process, or a client this test starts — stores the findings
// and summary; jobs survive a restart of the process that would run them and are retried.

const sequelize = getDatabase();
const actor: AuditActor = { userId: null, email: "jobs-test@test.example", clientAddress: "192.0.2.30" };
let organisationId = "";
let siteId = "";
/** A queue of this file's own, with the analysis queue's settings but a short retry delay: the suite's server does not work it. */
const testQueue = `revision-analysis-test-${randomUUID().slice(0, 8)}`;
const clients: PgBoss[] = [];

/** An invented device (RFC 5737 documentation address outside). */
function documentNamed(name: string) {
  return {
    schemaVersion: 2,
    device: { name },
    interfaces: [{ name: "outside", role: "wan", addresses: ["203.0.113.40/24"], listeners: ["https", "ssh"] }],
    inboundRules: [{ id: "r1", interface: "any", sources: ["any"], destinations: ["any"], services: ["ssh"], action: "deny" }],
    accounts: [{ name: "quay-ops", secondFactor: "totp" }],
  };
}

async function client(): Promise<PgBoss> {
  const boss = await createJobQueue(process.env.DATABASE_URL!);
  clients.push(boss);
  return boss;
}

async function jobOf(boss: PgBoss, queue: string, id: string, until: (state: string) => boolean) {
  const deadline = Date.now() + 20_000;
  for (;;) {
    const job = await boss.getJobById<{ revisionId: string }>(queue, id, { includeArchive: true });
    if (job && until(job.state)) return job;
    if (Date.now() > deadline) throw new Error(`job ${id} never reached the expected state (last: ${job?.state})`);
    await new Promise((resolve) => setTimeout(resolve, 100));
  }
}

beforeAll(async () => {
  const organisation = await Organisation.create({ slug: `jobs-${randomUUID().slice(0, 8)}`, name: "Background analysis test" });
  organisationId = organisation.id;
  siteId = (await Site.create({ organisationId, name: "Quay office", customer: "", location: "" })).id;
  // The test queue, made as the owner role (the runtime role creates no tables) and handed to the runtime role.
  const owner = ownerConnection();
  const { name: _name, ...options } = QUEUES.revisionAnalysis;
  await owner.query(`SELECT ${JOB_QUEUE_SCHEMA}.create_queue(:name, :options)`, { replacements: { name: testQueue, options: JSON.stringify({ ...options, retryDelay: 1, retryBackoff: false }) } });
  const runtime = decodeURIComponent(new URL(process.env.DATABASE_URL!).username);
  await owner.query(`GRANT SELECT, INSERT, UPDATE, DELETE ON ALL TABLES IN SCHEMA ${JOB_QUEUE_SCHEMA} TO "${runtime}"`);
  await owner.close();
});

afterAll(async () => {
  for (const boss of clients) await boss.stop({ graceful: false, wait: true, timeout: 1_000 });
  await stopJobQueue();
  await closeAnalysisPool();
  await sequelize.close();
});

/** A device's first revision with its stored analysis removed, as if saved before any job ran. */
async function unanalysedRevision(name: string): Promise<string> {
  const device = await createDevice(organisationId, siteId, documentNamed(name), actor, "created");
  await revisionAnalysisQueue.idle();
  const revision = await DeviceRevision.findOne({ where: { deviceId: device.id, number: 1 } });
  await RevisionAnalysisRecord.destroy({ where: { revisionId: revision!.id } });
  return revision!.id;
}

describe("Background analysis of saved revisions", () => {
  test("A save queues one job; a job worker stores the revision's findings and summary, and a second job for it does nothing", async () => {
    const device = await createDevice(organisationId, siteId, documentNamed("quay-a"), actor, "created");
    const revision = await DeviceRevision.findOne({ where: { deviceId: device.id, number: 1 } });
    await revisionAnalysisQueue.idle();
    const stored = await RevisionAnalysisRecord.findByPk(revision!.id);
    // https listens on the wan interface and only ssh is denied: a login that asks for the second factor (PRODUCT.md §3).
    expect(stored?.worstOutsideOutcome).toBe("login-mfa");
    const fresh = findings(compileModel(revision!.document as Parameters<typeof compileModel>[0]));
    expect(stored?.findings).toEqual(JSON.parse(JSON.stringify(fresh)));
    expect(stored?.findingKeys?.length).toBe(fresh.length);
    const boss = await client();
    const jobs = (await boss.fetch<{ revisionId: string }>(REVISION_ANALYSIS_QUEUE, { batchSize: 100, includeMetadata: true })) ?? [];
    // Nothing left waiting for this revision: its one job ran.
    expect(jobs.filter((job) => job.data.revisionId === revision!.id)).toEqual([]);
    // A repeated delivery finds the work done and changes nothing.
    expect(await runRevisionAnalysis({ revisionId: revision!.id })).toEqual({ analysed: false });
    expect((await RevisionAnalysisRecord.findByPk(revision!.id))?.computedAt).toEqual(stored?.computedAt);
  });

  test("A queued job survives a restart: the process that would run it stops, a new one starts and completes it", async () => {
    const revisionId = await unanalysedRevision("quay-b");
    const first = await client();
    const id = await first.send(testQueue, { revisionId });
    expect(id).toBeTruthy();
    // The first process goes away before any worker fetched the job.
    await first.stop({ graceful: false, wait: true, timeout: 1_000 });
    expect(await RevisionAnalysisRecord.findByPk(revisionId)).toBeNull();
    const second = await client();
    const stop = await workRevisionAnalysis({ boss: second, queue: testQueue });
    const done = await jobOf(second, testQueue, id!, (state) => state === "completed");
    await stop();
    expect(done.output).toEqual({ analysed: true } satisfies RevisionAnalysisOutput);
    expect((await RevisionAnalysisRecord.findByPk(revisionId))?.worstOutsideOutcome).toBe("login-mfa");
  });

  test("A job that fails is retried, and the retry stores the analysis", async () => {
    const revisionId = await unanalysedRevision("quay-c");
    const boss = await client();
    let attempts = 0;
    const stop = await workRevisionAnalysis({
      boss,
      queue: testQueue,
      handle: async (job) => {
        attempts += 1;
        if (attempts === 1) throw new Error("the database went away (simulated)");
        return runRevisionAnalysis(job);
      },
    });
    const id = await boss.send(testQueue, { revisionId });
    const done = await jobOf(boss, testQueue, id!, (state) => state === "completed" || state === "failed");
    await stop();
    expect(done.state).toBe("completed");
    expect(done.retryCount).toBe(1);
    expect(attempts).toBe(2);
    expect((await RevisionAnalysisRecord.findByPk(revisionId))?.findingKeys).not.toBeNull();
  });

  test("A large model is analysed on the worker-thread pool with the same answers as on the calling thread", async () => {
    const parsed = parseModel(generateModel(20261202, { ...BENCH_SIZE, rules: 300, addressObjects: 200, entries: 600, groups: 20 }).model);
    if (!parsed.ok) throw new Error("the generated model did not parse");
    const model = parsed.model;
    expect(elementCount(model)).toBeGreaterThanOrEqual(POOL_THRESHOLD_ELEMENTS);
    const pooled = await analyseOffThread(model);
    const compiled = compileModel(model);
    const here = findings(compiled);
    expect(pooled.findings).toEqual(JSON.parse(JSON.stringify(here)));
    const summary = summariseDocument(model, compiled, here);
    expect(pooled.findingsBySeverity).toEqual(summary.findingsBySeverity);
    expect(pooled.worstOutsideOutcome).toBe(summary.worstOutsideOutcome);
  });

  test("The fleet's counts come from stored keys: a revision stored before keys were kept gets them from the first reader", async () => {
    const revisionId = await unanalysedRevision("quay-d");
    await RevisionAnalysisRecord.create({ revisionId, findingsBySeverity: { high: 0 }, worstOutsideOutcome: "login-mfa" });
    const repository = new DeviceRevisions();
    const [record] = (await repository.fleetRecords(organisationId)).filter((candidate) => candidate.revisionId === revisionId);
    expect(record.hasFindingKeys).toBe(false);
    // A dismissed key's severity is asked for (the fleet's counts leave dismissed findings out).
    const wanted = findings(compileModel((await DeviceRevision.findByPk(revisionId))!.document as Parameters<typeof compileModel>[0]))[0];
    const asked = findingKey(wanted);
    const severities = await repository.severitiesOfKeys([{ revisionId, keys: [asked], hasFindingKeys: false }]);
    const stored = await RevisionAnalysisRecord.findByPk(revisionId);
    expect(stored?.findingKeys?.length).toBe(stored?.findings?.length);
    expect(stored?.findingKeys).toContainEqual([asked, wanted.severity]);
    expect(severities.get(revisionId)).toEqual([[asked, wanted.severity]]);
  });

  test("The fleet page shows a large device as being analysed while its job runs, queues it again if it was lost, and shows its figures once stored", async () => {
    const { client, slug } = await signUpNewOrganisation("jobs-fleet");
    const organisation = (await Organisation.findOne({ where: { slug } }))!;
    const site = await Site.create({ organisationId: organisation.id, name: "Dry dock", customer: "", location: "" });
    const parsed = parseModel(generateModel(20261203, { ...BENCH_SIZE, rules: 300, addressObjects: 100, entries: 300, groups: 10 }).model);
    if (!parsed.ok) throw new Error("the generated model did not parse");
    const device = await createDevice(organisation.id, site.id, { ...parsed.model, device: { ...parsed.model.device, name: "dry-dock-edge" } }, actor, "created");
    await revisionAnalysisQueue.idle();
    const revision = (await DeviceRevision.findOne({ where: { deviceId: device.id, number: 1 } }))!;
    // As if the job had been lost before it ran: nothing stored, nothing queued.
    await RevisionAnalysisRecord.destroy({ where: { revisionId: revision.id } });
    const during = await client.get(`/o/${slug}/devices`);
    expect(during.status).toBe(200);
    expect(during.text).toContain("Analysing r1…");
    // The page queued the job again; the suite's server works it and the next look shows the figures.
    const deadline = Date.now() + 30_000;
    for (;;) {
      const stored = await RevisionAnalysisRecord.findByPk(revision.id);
      if (stored?.findingKeys) break;
      if (Date.now() > deadline) throw new Error("the re-queued analysis was not stored");
      await new Promise((resolve) => setTimeout(resolve, 200));
    }
    const after = await client.get(`/o/${slug}/devices`);
    expect(after.text).not.toContain("Analysing r1…");
    expect(after.text).toContain("dry-dock-edge");
  });

  test("The fleet table and the fleet findings read only what the analysis stored: no device document is read and nothing is compiled", async () => {
    await revisionAnalysisQueue.idle();
    const compiledBefore = deviceRevisions.cachedRevisions;
    const { result: rows, tally } = await withQueryTally(() => fleetDeviceRows(organisationId));
    expect(rows.map((row) => row.name)).toEqual(["quay-a", "quay-b", "quay-c", "quay-d"]);
    expect(rows.every((row) => !row.analysing && row.worstOutsideOutcome === "login-mfa")).toBe(true);
    const { tally: findingsTally } = await withQueryTally(() => fleetFindings(organisationId));
    for (const statement of [...tally.statements, ...findingsTally.statements]) expect(statement).not.toMatch(/"document"/);
    expect(deviceRevisions.cachedRevisions).toBe(compiledBefore);
  });
});

