import { execFileSync } from "node:child_process";
import { mkdtempSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { beforeAll, describe, expect, test } from "vitest";
import { DEMO_PASSWORDS, TestClient } from "../support/client";

// The trace the browser shows comes from the trace API; it must be exactly what the CLI prints
// with --json for the same model and probe, so pipelines and people see the same answer.
let engineer: TestClient;
const devices = new Map<string, string>();
const folder = mkdtempSync(path.join(tmpdir(), "sallyport-trace-"));

beforeAll(async () => {
  engineer = new TestClient();
  const [email, password] = DEMO_PASSWORDS.engineer;
  await engineer.signIn(email, password);
  const fleet = await engineer.get("/o/lanternfield/devices");
  for (const match of fleet.text.matchAll(/href="\/o\/lanternfield\/devices\/([0-9a-f-]{36})"[^>]*>([^<]+)</g)) devices.set(match[2], match[1]);
});

function cliTrace(modelFile: string, probe: Record<string, string>): unknown {
  const args = ["server/cli/sallyport.mjs", "trace", modelFile, "--from", probe.from, "--on", probe.interface, "--service", probe.service, "--at", probe.at, "--json"];
  if (probe.to) args.push("--to", probe.to);
  if (probe.account) args.push("--account", probe.account);
  return JSON.parse(execFileSync(process.execPath, args, { encoding: "utf8" }));
}

const PROBES: Array<{ device: string; probe: Record<string, string> }> = [
  { device: "clf-gw-02", probe: { from: "203.0.113.50", interface: "outside", service: "https", at: "2026-12-02T10:00:00Z" } },
  { device: "clf-gw-02", probe: { from: "203.0.113.50", interface: "outside", service: "telnet", at: "2026-12-02T10:00:00Z" } },
  { device: "bwc-edge-01", probe: { from: "203.0.113.50", interface: "outside", service: "ssh", at: "2026-12-02T10:00:00Z" } },
  { device: "ngl-core-01", probe: { from: "10.20.0.5", interface: "inside", service: "snmp", at: "2026-12-05T03:00:00Z" } },
  { device: "clf-fw-01", probe: { from: "198.51.100.70", interface: "outside", service: "https", at: "2026-12-02T15:00:00Z" } },
  { device: "bwc-edge-v6", probe: { from: "2001:DB8::1", interface: "outside", service: "ping", at: "2026-12-02T10:00:00Z" } },
];

describe("The trace API behind the browser", () => {
  test.each(PROBES)("answers exactly what `sallyport trace --json` prints ($device, $probe.service from $probe.from)", async ({ device, probe }) => {
    const id = devices.get(device);
    expect(id, `demo device ${device}`).toBeDefined();
    const exported = await engineer.get(`/o/lanternfield/devices/${id}/revisions/1/export`);
    const modelFile = path.join(folder, `${device}.json`);
    writeFileSync(modelFile, exported.text);
    const api = await engineer.get(`/o/lanternfield/devices/${id}/api/trace?${new URLSearchParams(probe).toString()}`);
    expect(api.status).toBe(200);
    expect(JSON.parse(api.text)).toEqual(cliTrace(modelFile, probe));
  });

  test("Input errors are a 400 with the engine's message, not a 500", async () => {
    const id = devices.get("clf-gw-02");
    const malformed = await engineer.get(`/o/lanternfield/devices/${id}/api/trace?from=10.0.0&interface=outside&service=https`);
    expect(malformed.status).toBe(400);
    expect(JSON.parse(malformed.text).error).toMatch(/10\.0\.0/);
    const unknown = await engineer.get(`/o/lanternfield/devices/${id}/api/trace?from=203.0.113.5&interface=nowhere&service=https`);
    expect(unknown.status).toBe(400);
    expect(JSON.parse(unknown.text).error).toMatch(/nowhere/);
    const missing = await engineer.get(`/o/lanternfield/devices/${id}/api/trace?interface=outside`);
    expect(missing.status).toBe(400);
  });

  test("Another organisation cannot trace this organisation's devices (404)", async () => {
    const stranger = new TestClient();
    await stranger.post("/signup", { name: "Stranger", email: `stranger-${Date.now()}@test.example`, organisationName: `Stranger ${Date.now()}`, password: "quiet harbour lantern 42" });
    const id = devices.get("clf-gw-02");
    const response = await stranger.get(`/o/lanternfield/devices/${id}/api/trace?from=203.0.113.50&interface=outside&service=https`);
    expect(response.status).toBe(404);
  });
});
