import { spawn, type ChildProcess } from "node:child_process";
import { afterAll, beforeAll, describe, expect, test } from "vitest";
import { QueryTypes } from "sequelize";
import { ApiToken, DeviceRevision, Organisation, RevisionAnalysisRecord, Site, User } from "#models/index";
import { getDatabase } from "#server/db/database.server";
import { MAX_FAILURES_PER_ACCOUNT } from "#server/auth/throttle.server";
import { JOB_QUEUE_SCHEMA } from "#server/jobs/queues";
import { REVISION_ANALYSIS_QUEUE } from "#server/jobs/revision-analysis.server";
import { GOOD_PASSWORD, signUpNewOrganisation, TestClient } from "../support/client";
import { makeToken } from "../support/api";
import { findFreePort } from "../support/free-port";
import { waitUntilAnswering } from "../support/answering";

// Scale-out (docs/decisions/018): two web processes and one job-only process against one
// database, as `npm start` runs them with WEB_CONCURRENCY=2 JOB_WORKERS=1 behind one origin.
// Sessions, sign-in throttles, API rate limits and jobs live in PostgreSQL, so it does not
// matter which process answers. Both web processes leave the jobs to the worker (SALLYPORT_JOBS=0).

const sequelize = getDatabase();
const processes: ChildProcess[] = [];
let siteOrigin = "";
let instanceA = "";
let instanceB = "";

function start(script: string, environment: Record<string, string>): ChildProcess {
  const child = spawn(process.execPath, ["--import", "tsx", script], { env: { ...process.env, NODE_ENV: "production", SALLYPORT_HMR: "0", TRUST_PROXY: "1", ...environment }, stdio: ["ignore", "ignore", "inherit"] });
  processes.push(child);
  return child;
}

beforeAll(async () => {
  const [portA, portB] = [await findFreePort(), await findFreePort()];
  instanceA = `http://127.0.0.1:${portA}`;
  instanceB = `http://127.0.0.1:${portB}`;
  // One site origin for both, as behind a load balancer: links and the same-origin guard use it.
  siteOrigin = instanceA;
  for (const port of [portA, portB]) start("server/http/main.ts", { PORT: String(port), APP_ORIGIN: siteOrigin, SALLYPORT_JOBS: "0" });
  start("server/jobs/main.ts", {});
  await Promise.all([waitUntilAnswering(instanceA, 60_000), waitUntilAnswering(instanceB, 60_000)]);
}, 90_000);

afterAll(async () => {
  for (const child of processes) child.kill("SIGTERM");
  await sequelize.close();
});

/** A client of instance B holding the same cookies (the same browser, another process answering). */
function sameBrowserOn(base: string, client: TestClient): TestClient {
  const other = new TestClient(client.clientAddress, base);
  for (const [name, value] of client.cookies) other.cookies.set(name, value);
  return other;
}

describe("Two web processes and a job worker on one database", () => {
  test("A session made by one web process is honoured by the other, and signing out on the other ends it for both", async () => {
    const { email, slug } = await signUpNewOrganisation("scale-session");
    const onA = new TestClient(undefined, instanceA);
    expect((await onA.post("/login", { email, password: GOOD_PASSWORD }, { origin: siteOrigin })).status).toBe(302);
    const onB = sameBrowserOn(instanceB, onA);
    expect((await onB.get(`/o/${slug}/devices`)).status).toBe(200);
    expect((await onB.post("/logout", {}, { origin: siteOrigin })).status).toBe(302);
    // The session row is gone: A no longer knows the cookie either (redirect to sign-in).
    const afterwards = await onA.get(`/o/${slug}/devices`);
    expect(afterwards.status).toBe(302);
    expect(afterwards.location).toContain("/login");
  });

  // PCI DSS v4.0 8.3.4: lock out after not more than 10 invalid attempts — counted across processes.
  test("Failed sign-ins on both processes count together: the eleventh is refused, wherever it lands", async () => {
    const { email } = await signUpNewOrganisation("scale-throttle");
    const onA = new TestClient(undefined, instanceA);
    const onB = new TestClient(undefined, instanceB);
    for (let attempt = 1; attempt <= MAX_FAILURES_PER_ACCOUNT; attempt++) {
      const client = attempt % 2 === 0 ? onA : onB;
      expect((await client.post("/login", { email, password: `wrong guess ${attempt}` }, { origin: siteOrigin })).status).toBe(401);
    }
    expect((await onA.post("/login", { email, password: GOOD_PASSWORD }, { origin: siteOrigin })).status).toBe(429);
    expect((await onB.post("/login", { email, password: GOOD_PASSWORD }, { origin: siteOrigin })).status).toBe(429);
  });

  test("An API token's rate limit is shared: calls on both processes use up one allowance; a save on one is analysed exactly once by the job worker", async () => {
    const { email, slug } = await signUpNewOrganisation("scale-api");
    const organisation = (await Organisation.findOne({ where: { slug } }))!;
    const user = (await User.findOne({ where: { email } }))!;
    const token = await makeToken(organisation.id, { userId: user.id, email, role: "owner" }, { name: "scale-out test" });
    const site = await Site.create({ organisationId: organisation.id, name: "Harbour office", customer: "", location: "" });
    const call = (base: string, method: string, path: string, body?: unknown) =>
      fetch(`${base}/api/v1${path}`, { method, headers: { Authorization: `Bearer ${token.secret}`, "Content-Type": "application/json" }, body: body === undefined ? undefined : JSON.stringify(body) });

    // The save, on A: an invented device with a documentation (RFC 5737) address on its wan interface.
    const document = {
      schemaVersion: 2,
      device: { name: "harbour-edge" },
      interfaces: [{ name: "outside", role: "wan", addresses: ["198.51.100.7/24"], listeners: ["https"] }],
      inboundRules: [],
      accounts: [{ name: "harbour-ops", secondFactor: "totp" }],
    };
    const created = await call(instanceA, "POST", "/devices", { siteId: site.id, document, message: "created on A" });
    expect(created.status).toBe(201);
    const deviceId = ((await created.json()) as { id: string }).id;
    const revision = (await DeviceRevision.findOne({ where: { deviceId, number: 1 } }))!;

    // The allowance: five calls a minute, spent one call on A already, then alternately on B and A.
    await ApiToken.update({ ratePerMinute: 5 }, { where: { id: token.id } });
    const statuses: number[] = [];
    for (let index = 0; index < 5; index++) statuses.push((await call(index % 2 === 0 ? instanceB : instanceA, "GET", "/devices")).status);
    // Calls 2–5 are allowed, the sixth (on A) refused: one count for both processes (RFC 6585 §4: 429).
    expect(statuses).toEqual([200, 200, 200, 200, 429]);
    expect((await call(instanceB, "GET", "/devices")).status).toBe(429);

    // The job worker analyses the revision saved on A; one job, run once (pg-boss keeps its output).
    const deadline = Date.now() + 30_000;
    type JobRow = { state: string; output: { analysed?: boolean } | null };
    let jobs: JobRow[] = [];
    for (;;) {
      jobs = await sequelize.query<JobRow>(
        `SELECT state, output FROM ${JOB_QUEUE_SCHEMA}.job WHERE name = :queue AND data->>'revisionId' = :revision
         UNION ALL SELECT state, output FROM ${JOB_QUEUE_SCHEMA}.archive WHERE name = :queue AND data->>'revisionId' = :revision`,
        { replacements: { queue: REVISION_ANALYSIS_QUEUE, revision: revision.id }, type: QueryTypes.SELECT },
      );
      if (jobs.length > 0 && jobs.every((job) => job.state === "completed")) break;
      if (Date.now() > deadline) throw new Error(`the analysis job did not complete: ${JSON.stringify(jobs)}`);
      await new Promise((resolve) => setTimeout(resolve, 200));
    }
    expect(jobs).toHaveLength(1);
    const stored = await RevisionAnalysisRecord.findAll({ where: { revisionId: revision.id } });
    expect(stored).toHaveLength(1);
    // https on the wan interface with no rule and a second factor on every account: a login that asks for it (PRODUCT.md §3).
    expect(stored[0].worstOutsideOutcome).toBe("login-mfa");
    expect(stored[0].findingKeys).not.toBeNull();
  });
});
