// Findings over HTTP, as a browser uses them: the fleet-wide findings page, the device
// overview, and dismissing a finding with a reason (audited, reversible, kept on later
// revisions). Tests that change data use their own organisation and an invented model;
// the demo organisation is only read (and refused).
// Semantics: PRODUCT.md §5, docs/engine.md "Findings".

import { describe, expect, test } from "vitest";
import { DEMO_PASSWORDS, signUpNewOrganisation, TestClient, type FetchResult } from "../support/client";
import { plain, UUID } from "../support/html";



async function signedIn(role: keyof typeof DEMO_PASSWORDS): Promise<TestClient> {
  const client = new TestClient();
  const [email, password] = DEMO_PASSWORDS[role];
  expect((await client.signIn(email, password)).status).toBe(302);
  return client;
}

async function demoDeviceId(client: TestClient, name: string): Promise<string> {
  const fleet = plain((await client.get("/o/lanternfield/devices")).text);
  const id = fleet.match(new RegExp(`href="/o/lanternfield/devices/(${UUID})"[^>]*>${name}<`))?.[1];
  if (!id) throw new Error(`no ${name} on the demo fleet page`);
  return id;
}

// An invented gateway: a factory-default account name with no second factor (two high
// findings), cleartext http listening on the management interface (a medium one), narrow login
// sources, a final drop. Names and addresses are invented (RFC 5737, RFC 1918).
const TIDEWATER = {
  schemaVersion: 2,
  device: { name: "tidewater-gw", timezone: "UTC" },
  interfaces: [
    { name: "outside", role: "wan", addresses: ["192.0.2.10/24"], listeners: [] },
    { name: "mgmt", role: "management", addresses: ["10.77.0.1/24"], listeners: ["https", "ssh", "http"] },
  ],
  addresses: [{ name: "ops-lan", entries: ["10.77.0.0/24"] }],
  inboundRules: [
    { id: "ops-in", interface: "mgmt", sources: ["ops-lan"], destinations: ["any"], services: ["https", "ssh"], action: "allow" },
    { id: "drop-rest", interface: "any", sources: ["any"], destinations: ["any"], services: ["any"], action: "deny" },
  ],
  accounts: [{ name: "administrator", loginSources: ["ops-lan"] }],
  operatorNetworks: ["ops-lan"],
};

const DEFAULT_NAME_KEY = "default-account-name account:administrator";
/** Medium: dismissed at once, by the rule from before second-person confirmation. */
const CLEARTEXT_KEY = "cleartext-listener interface:mgmt service:http";
const CLEARTEXT_TITLE = 'http listens on "mgmt"';

function importModel(client: TestClient, slug: string, target: string, document: unknown, baseRevision?: number): Promise<FetchResult> {
  const form = new FormData();
  form.append("intent", "import");
  form.append("target", target);
  form.append("fileName", "tidewater.json");
  form.append("documentText", JSON.stringify(document));
  if (baseRevision) form.append("baseRevision", String(baseRevision));
  // A new revision of an existing device is imported only once its effect was read.
  if (target.startsWith("device:")) form.append("effectRead", "yes");
  return client.request(`/o/${slug}/devices/import`, { method: "POST", body: form });
}

/** A new organisation (owner signed in) with one site and the invented device imported. */
async function organisationWithDevice(label: string): Promise<{ client: TestClient; slug: string; siteId: string; deviceId: string; email: string }> {
  const { client, slug, email } = await signUpNewOrganisation(label);
  expect((await client.post(`/o/${slug}/sites`, { intent: "create", name: "Tidewater quay", customer: "", location: "" })).status).toBe(302);
  const siteId = (await client.get(`/o/${slug}/sites`)).text.match(new RegExp(`edit=(${UUID})`))?.[1];
  if (!siteId) throw new Error("no site id on the sites page");
  const imported = await importModel(client, slug, `site:${siteId}`, TIDEWATER);
  expect(imported.status).toBe(302);
  const deviceId = imported.location?.match(new RegExp(`/devices/(${UUID})$`))?.[1];
  if (!deviceId) throw new Error(`import did not open the device: ${imported.location}`);
  return { client, slug, siteId, deviceId, email };
}

/** Where a finding key appears on the overview: in the active list (a dismiss form) or under "Dismissed" (a restore form). */
function stateOnOverview(html: string, key: string): "active" | "dismissed" | "absent" {
  const text = plain(html);
  const dismissForm = new RegExp(`name="intent" value="dismiss"/><input type="hidden" name="key" value="${key}"`);
  const restoreForm = new RegExp(`name="intent" value="restore"/><input type="hidden" name="key" value="${key}"`);
  if (restoreForm.test(text)) return "dismissed";
  if (dismissForm.test(text)) return "active";
  return "absent";
}

/** The counts in the overview's "Active findings" card, by severity. */
function activeCounts(html: string): Record<string, number> {
  const card = plain(html).match(/Active findings<\/h2>([\s\S]*?)<\/div>/)?.[1] ?? "";
  return Object.fromEntries([...card.matchAll(/(\d+) (critical|high|medium|low|info)/g)].map((match) => [match[2], Number(match[1])]));
}

describe("Findings across the fleet", () => {
  test("The fleet findings page lists clf-gw-02's factory-default account finding with its source and a link to the accounts editor", async () => {
    const client = await signedIn("trainee");
    const id = await demoDeviceId(client, "clf-gw-02");
    const page = await client.get("/o/lanternfield/findings");
    expect(page.status).toBe(200);
    const text = plain(page.text);
    // seeders/devices/README.md: clf-gw-02 has default-account-name on account:admin.
    const row = text.split("<tr").find((candidate) => candidate.includes("default-account-name") && candidate.includes(`/o/lanternfield/devices/${id}"`));
    expect(row, "a row for clf-gw-02's default-account-name").toBeDefined();
    expect(row).toContain('Account "admin" has a factory-default name');
    // docs/engine.md "Findings": PCI DSS v4.0 2.2.2; CIS Controls v8 4.7 (published sources).
    expect(row).toContain("PCI DSS v4.0 2.2.2");
    expect(row).toContain("CIS Controls v8 4.7");
    expect(row).toContain(`href="/o/lanternfield/devices/${id}/model/accounts?edit=admin#edit"`);

    // Filters live in the URL: at least critical leaves out the high finding; the code filter keeps it alone.
    const critical = plain((await client.get("/o/lanternfield/findings?severity=critical")).text);
    expect(critical).not.toContain("default-account-name</code>");
    expect(critical).toContain("internet-login-exposed");
    const byCode = plain((await client.get(`/o/lanternfield/findings?code=default-account-name&device=${id}`)).text);
    expect(byCode).toMatch(/1 of \d+ findings/);
    // An unknown filter value opens the page unfiltered rather than failing.
    expect((await client.get("/o/lanternfield/findings?severity=dire&sort=nonsense&site=x")).status).toBe(200);
  });

  test("Sorting by device orders the rows by device name; by severity the worst come first", async () => {
    const client = await signedIn("reviewer");
    // One list (no grouping), so the order runs across the whole page.
    const byDevice = plain((await client.get("/o/lanternfield/findings?sort=device&dir=asc&group=none")).text);
    const devices = [...byDevice.matchAll(new RegExp(`href="/o/lanternfield/devices/${UUID}"[^>]*>([a-z0-9.-]+)<`, "g"))].map((match) => match[1]);
    expect(devices.length).toBeGreaterThan(5);
    expect(devices).toEqual([...devices].sort((a, b) => a.localeCompare(b)));
    const bySeverity = plain((await client.get("/o/lanternfield/findings?group=none")).text);
    const severities = [...bySeverity.matchAll(/<td[^>]*><span class="[^"]*uppercase[^"]*">(critical|high|medium|low|info)<\/span>/g)].map((match) => match[1]);
    const rank = ["info", "low", "medium", "high", "critical"];
    expect(severities.length).toBeGreaterThan(5);
    expect(severities.map((severity) => rank.indexOf(severity))).toEqual(severities.map((severity) => rank.indexOf(severity)).sort((a, b) => b - a));
  });
});

describe("The fleet findings page is dense", () => {
  test("By default findings sit under their check, worst group first, one row each, with the witness to try", async () => {
    const client = await signedIn("engineer");
    const id = await demoDeviceId(client, "clf-gw-02");
    const text = plain((await client.get("/o/lanternfield/findings")).text);
    // Group headers: the check's code and how many findings on how many devices.
    const headers = [...text.matchAll(/<th colSpan="\d+" scope="colgroup"[^>]*>.*?<span class="[^"]*uppercase[^"]*">(critical|high|medium|low|info)<\/span><code[^>]*>([a-z-]+)<\/code><span[^>]*>(\d+) findings? on (\d+) devices?/g)].map((match) => ({ worst: match[1], code: match[2], findings: Number(match[3]) }));
    expect(headers.length).toBeGreaterThan(5);
    expect(new Set(headers.map((header) => header.code)).size).toBe(headers.length); // one group per check
    const rank = ["info", "low", "medium", "high", "critical"];
    expect(headers.map((header) => rank.indexOf(header.worst))).toEqual(headers.map((header) => rank.indexOf(header.worst)).sort((a, b) => b - a));
    // Every finding is one row: the rows add up to the count the page announces.
    const total = Number(text.match(/(\d+) of \d+ findings/)![1]);
    expect(headers.reduce((sum, header) => sum + header.findings, 0)).toBe(total);
    // The witness is kept: internet-login-exposed on clf-gw-02 links to the trace page with its probe.
    const row = text.split("<tr").find((candidate) => candidate.includes('https on "outside" presents a login') && candidate.includes(`/o/lanternfield/devices/${id}"`))!;
    expect(row).toContain("Witness: https from");
    expect(row).toMatch(new RegExp(`href="/o/lanternfield/devices/${id}/analysis\\?from=[^"]+&interface=outside&service=https[^"]*"[^>]*>Try it`));
    // The detail folds out under the title.
    expect(row).toMatch(/<details[^>]*><summary[^>]*>https on "outside" presents a login/);
  });

  test("Grouped by device, each device heads its own findings", async () => {
    const client = await signedIn("trainee");
    const id = await demoDeviceId(client, "clf-gw-02");
    const text = plain((await client.get("/o/lanternfield/findings?group=device")).text);
    const groups = text.split('scope="colgroup"').slice(1);
    const own = groups.find((group) => group.includes(`href="/o/lanternfield/devices/${id}"`))!;
    // seeders/devices/README.md: clf-gw-02 has 10 findings.
    expect(own).toMatch(/· 10 findings/);
    expect(own).toContain('Account "admin" has a factory-default name');
    expect((await client.get("/o/lanternfield/findings?group=colour")).status).toBe(200); // an unknown value groups by check
  });
});

describe("Dismissing a finding", () => {
  test("An owner dismisses a medium finding with a reason: it moves to Dismissed, leaves the counts and the fleet page, is audited, survives a new revision, and can be restored", async () => {
    const { client, slug, deviceId } = await organisationWithDevice("fd-dismiss");
    const overviewPath = `/o/${slug}/devices/${deviceId}`;
    const dismissals = `${overviewPath}/dismissals`;

    const before = await client.get(overviewPath);
    expect(before.status).toBe(200);
    expect(stateOnOverview(before.text, CLEARTEXT_KEY)).toBe("active");
    const countsBefore = activeCounts(before.text);
    expect(countsBefore.medium).toBe(1);
    expect(plain((await client.get(`/o/${slug}/findings`)).text)).toContain(CLEARTEXT_TITLE);

    // Refusals: a missing or too short reason keeps the key and what was typed; nothing changes.
    const missing = await client.post(dismissals, { intent: "dismiss", key: CLEARTEXT_KEY });
    expect(missing.status).toBe(400);
    expect(plain(missing.text)).toContain("Say why this finding is accepted");
    const short = await client.post(dismissals, { intent: "dismiss", key: CLEARTEXT_KEY, reason: " ok " });
    expect(short.status).toBe(400);
    expect(plain(short.text)).toContain("at least 3 characters");
    expect(plain(short.text)).toContain(" ok ");
    expect((await client.post(dismissals, { intent: "dismiss", key: CLEARTEXT_KEY, reason: "x".repeat(501) })).status).toBe(400);
    // A well-formed key this revision does not report is 404; a malformed one 400; an unknown intent 400.
    const unknown = await client.post(dismissals, { intent: "dismiss", key: "default-account-name account:nobody", reason: "Accepted for the test." });
    expect(unknown.status).toBe(404);
    expect(plain(unknown.text)).toContain("reports no such finding");
    expect((await client.post(dismissals, { intent: "dismiss", key: "<script>", reason: "Accepted for the test." })).status).toBe(400);
    expect((await client.post(dismissals, { intent: "forget", key: CLEARTEXT_KEY, reason: "Accepted for the test." })).status).toBe(400);
    expect((await client.get(dismissals)).status).toBe(405);
    expect(stateOnOverview((await client.get(overviewPath)).text, CLEARTEXT_KEY)).toBe("active");

    const reason = "Renamed on the device in change 4711; the model update follows.";
    const dismissed = await client.post(dismissals, { intent: "dismiss", key: CLEARTEXT_KEY, reason });
    expect(dismissed.status).toBe(302);
    expect(dismissed.location).toBe(overviewPath);
    expect(dismissed.setCookies.some((cookie) => cookie.startsWith("sallyport-flash="))).toBe(true);

    const after = await client.get(overviewPath);
    expect(stateOnOverview(after.text, CLEARTEXT_KEY)).toBe("dismissed");
    expect(plain(after.text)).toContain("Dismissed (1)");
    expect(plain(after.text)).toContain(reason);
    // The overview counts active findings only.
    expect(activeCounts(after.text).medium ?? 0).toBe(countsBefore.medium - 1);
    expect(activeCounts(after.text).high).toBe(countsBefore.high);

    // Gone from the fleet page unless dismissed ones are shown.
    expect(plain((await client.get(`/o/${slug}/findings`)).text)).not.toContain(CLEARTEXT_TITLE);
    const shown = plain((await client.get(`/o/${slug}/findings?dismissed=show`)).text);
    expect(shown).toContain(CLEARTEXT_TITLE);
    expect(shown).toContain(reason);

    // Once only; the audit log shows who accepted what and why.
    expect((await client.post(dismissals, { intent: "dismiss", key: CLEARTEXT_KEY, reason })).status).toBe(409);
    const audit = plain((await client.get(`/o/${slug}/settings/audit`)).text);
    expect(audit).toContain('<tr data-action="finding.dismissed"');
    expect(audit).toContain("cleartext-listener");
    expect(audit).toContain(reason);

    // A later revision reports the same finding: it stays dismissed ("accepted risk").
    const revised = await importModel(client, slug, `device:${deviceId}`, { ...TIDEWATER, interfaces: TIDEWATER.interfaces.map((entry) => (entry.name === "mgmt" ? { ...entry, listeners: ["https", "http"] } : entry)) }, 1);
    expect(revised.status).toBe(302);
    const onRevision2 = await client.get(overviewPath);
    expect(plain(onRevision2.text)).toContain("Hardening checks on revision r2");
    expect(stateOnOverview(onRevision2.text, CLEARTEXT_KEY)).toBe("dismissed");

    // Restore: back among the active findings and on the fleet page, audited; a second restore finds nothing.
    const restored = await client.post(dismissals, { intent: "restore", key: CLEARTEXT_KEY });
    expect(restored.status).toBe(302);
    expect(restored.location).toBe(overviewPath);
    const back = await client.get(overviewPath);
    expect(stateOnOverview(back.text, CLEARTEXT_KEY)).toBe("active");
    expect(plain(back.text)).not.toContain("Dismissed (");
    expect(plain((await client.get(`/o/${slug}/findings`)).text)).toContain(CLEARTEXT_TITLE);
    expect(plain((await client.get(`/o/${slug}/settings/audit`)).text)).toContain('<tr data-action="finding.restored"');
    expect((await client.post(dismissals, { intent: "restore", key: CLEARTEXT_KEY })).status).toBe(404);
  });

  test("A dismissal whose finding went away is listed and can be withdrawn", async () => {
    const { client, slug, deviceId } = await organisationWithDevice("fd-unmatched");
    const overviewPath = `/o/${slug}/devices/${deviceId}`;
    const reason = "Will be renamed in the next change window.";
    expect((await client.post(`${overviewPath}/dismissals`, { intent: "dismiss", key: DEFAULT_NAME_KEY, reason })).status).toBe(302);
    // The next revision renames the account: the finding is gone, its dismissal stays on record.
    const renamed = { ...TIDEWATER, accounts: TIDEWATER.accounts.map((account) => ({ ...account, name: "ops-ferran" })) };
    expect((await importModel(client, slug, `device:${deviceId}`, renamed, 1)).status).toBe(302);
    const page = plain((await client.get(overviewPath)).text);
    expect(page).toContain("Dismissals that no longer match a finding (1)");
    expect(page).toContain(reason);
    expect((await client.post(`${overviewPath}/dismissals`, { intent: "restore", key: DEFAULT_NAME_KEY })).status).toBe(302);
    expect(plain((await client.get(overviewPath)).text)).not.toContain("Dismissals that no longer match");
  });

  test("A trainee or reviewer cannot dismiss (403), and sees no dismiss control; the demo finding stays active", async () => {
    const engineer = await signedIn("engineer");
    const id = await demoDeviceId(engineer, "clf-gw-02");
    const key = "default-account-name account:admin";
    expect(stateOnOverview((await engineer.get(`/o/lanternfield/devices/${id}`)).text, key)).toBe("active");
    for (const role of ["trainee", "reviewer"] as const) {
      const client = await signedIn(role);
      const overview = await client.get(`/o/lanternfield/devices/${id}`);
      expect(overview.status).toBe(200);
      expect(stateOnOverview(overview.text, key)).toBe("absent");
      expect(plain(overview.text)).toContain('Account "admin" has a factory-default name');
      const refused = await client.post(`/o/lanternfield/devices/${id}/dismissals`, { intent: "dismiss", key, reason: "Not mine to accept." });
      expect(refused.status).toBe(403);
      expect((await client.post(`/o/lanternfield/devices/${id}/dismissals`, { intent: "restore", key })).status).toBe(403);
    }
    expect(stateOnOverview((await engineer.get(`/o/lanternfield/devices/${id}`)).text, key)).toBe("active");
  });

  test("Another organisation's device answers 404, through either organisation's address", async () => {
    const { client, slug } = await signUpNewOrganisation("fd-outsider");
    const engineer = await signedIn("engineer");
    const id = await demoDeviceId(engineer, "clf-gw-02");
    const fields = { intent: "dismiss", key: "default-account-name account:admin", reason: "Not our device." };
    expect((await client.post(`/o/lanternfield/devices/${id}/dismissals`, fields)).status).toBe(404);
    expect((await client.post(`/o/${slug}/devices/${id}/dismissals`, fields)).status).toBe(404);
    expect((await client.get(`/o/lanternfield/findings`)).status).toBe(404);
    // And the outsider's own findings page is empty, not someone else's.
    const own = plain((await client.get(`/o/${slug}/findings`)).text);
    expect(own).toContain("No devices yet");
    expect(own).not.toContain("clf-gw-02");
  });
});
