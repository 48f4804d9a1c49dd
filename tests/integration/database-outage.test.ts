// Issue 14: with PostgreSQL stopped every page and the trace API answered 500 (the API in plain
// text). Now: 503 with Retry-After — RFC 9457 problem details on API routes, an HTML page on
// pages — and recovery once it is back. The outage is real but private to this test: a second
// app server reaches PostgreSQL through a TCP relay that the test closes and reopens, so the
// shared cluster and the suite's own server are never touched.
import { createConnection, createServer, type Server, type Socket } from "node:net";
import { spawn, type ChildProcess } from "node:child_process";
import { afterAll, beforeAll, describe, expect, test } from "vitest";
import { Organisation, Device } from "#models/index";
import { getDatabase } from "#server/db/database.server";
import { findFreePort } from "../support/free-port";
import { DEMO_PASSWORDS, TestClient } from "../support/client";

const sequelize = getDatabase();
const target = new URL(process.env.DATABASE_URL!);
let relayPort = 0;
let relay: Server | null = null;
const sockets = new Set<Socket>();
let app: ChildProcess | undefined;
let baseUrl = "";

function openRelay(): Promise<void> {
  relay = createServer((client) => {
    const upstream = createConnection(Number(target.port || 5432), target.hostname);
    for (const socket of [client, upstream]) {
      sockets.add(socket);
      socket.on("close", () => sockets.delete(socket));
      socket.on("error", () => socket.destroy());
    }
    client.pipe(upstream).pipe(client);
  });
  return new Promise((resolve) => relay!.listen(relayPort, "127.0.0.1", () => resolve()));
}

function closeRelay(): Promise<void> {
  for (const socket of sockets) socket.destroy();
  return new Promise((resolve) => (relay ? relay.close(() => resolve()) : resolve()));
}

async function waitFor(check: () => Promise<boolean>, ms: number): Promise<boolean> {
  const deadline = Date.now() + ms;
  while (Date.now() < deadline) {
    if (await check().catch(() => false)) return true;
    await new Promise((resolve) => setTimeout(resolve, 250));
  }
  return false;
}

beforeAll(async () => {
  relayPort = await findFreePort();
  await openRelay();
  const port = await findFreePort();
  baseUrl = `http://127.0.0.1:${port}`;
  const relayed = new URL(process.env.DATABASE_URL!);
  relayed.port = String(relayPort);
  app = spawn(process.execPath, ["--import", "tsx", "server/http/main.ts"], {
    env: { ...process.env, NODE_ENV: "production", PORT: String(port), APP_ORIGIN: baseUrl, DATABASE_URL: relayed.toString(), TRUST_PROXY: "1", SALLYPORT_FAKE_SMTP: "0" },
    stdio: ["ignore", "ignore", "inherit"],
  });
  // A second app process starting beside the browser suite on a busy 2-core machine took over 30 s.
  expect(await waitFor(async () => (await fetch(`${baseUrl}/healthz`)).ok, 90_000)).toBe(true);
}, 120_000);

afterAll(async () => {
  app?.kill("SIGTERM");
  await closeRelay();
  await sequelize.close();
});

describe("PostgreSQL unreachable → 503 with Retry-After, then recovery", () => {
  test("Pages, the trace API and health answer 503 while the database is away, and 200 again once it is back", { timeout: 90_000 }, async () => {
    const client = new TestClient(undefined, baseUrl);
    expect((await client.signIn(...DEMO_PASSWORDS.engineer)).status).toBe(302);
    const organisation = await Organisation.findOne({ where: { slug: "lanternfield" } });
    const device = await Device.findOne({ where: { organisationId: organisation!.id } });
    const fleet = "/o/lanternfield/devices";
    const traceApi = `/o/lanternfield/devices/${device!.id}/api/trace?from=192.0.2.1&interface=wan&service=https`;
    expect((await client.get(fleet)).status).toBe(200);
    const traceBefore = await client.get(traceApi);
    expect(traceBefore.status).toBeLessThan(500);

    await closeRelay();

    const page = await client.get(fleet);
    expect(page.status).toBe(503);
    expect(Number(page.headers.get("Retry-After"))).toBeGreaterThan(0);
    expect(page.headers.get("Content-Type")).toMatch(/text\/html/);
    expect(page.text).toContain("cannot reach its database");

    const api = await client.get(traceApi);
    expect(api.status).toBe(503);
    expect(Number(api.headers.get("Retry-After"))).toBeGreaterThan(0);
    // RFC 9457 §3: application/problem+json with type, title, status and detail.
    expect(api.headers.get("Content-Type")).toBe("application/problem+json");
    const problem = JSON.parse(api.text) as Record<string, unknown>;
    expect(problem).toMatchObject({ type: "about:blank", title: "Service Unavailable", status: 503 });
    expect(typeof problem.detail).toBe("string");

    const data = await client.get(`${fleet}.data`);
    expect(data.status).toBe(503);
    const signedOut = await new TestClient(undefined, baseUrl).post("/login", { email: DEMO_PASSWORDS.engineer[0], password: DEMO_PASSWORDS.engineer[1] });
    expect(signedOut.status).toBe(503);
    expect((await client.get("/healthz")).status).toBe(503);

    await openRelay();
    // Recovery without a restart: the pool reconnects.
    expect(await waitFor(async () => (await client.get(fleet)).status === 200, 30_000)).toBe(true);
    expect((await client.get(traceApi)).status).toBe(traceBefore.status);
  });
});
