import { describe, expect, test } from "vitest";
import { DEMO_PASSWORDS, postMultipart, signUpNewOrganisation, TestClient } from "../support/client";
import { plain, UUID } from "../support/html";

// A new organisation's first steps leave no dead end (docs/decisions/008): the first site is
// named where the first device is made, an import offers a rename for a taken name, and a page
// a role may not open refuses inside the app's frame. Common practice, no source.

/** An invented edge device (RFC 5737 outside address). */
const QUAY_MODEL = {
  schemaVersion: 1,
  device: { name: "quay-edge" },
  interfaces: [{ name: "outside", role: "outside", addresses: ["203.0.113.40/24"], listeners: ["https"] }],
};

async function fleetNames(client: TestClient, slug: string): Promise<string[]> {
  const page = await client.get(`/o/${slug}/devices`);
  return [...page.text.matchAll(new RegExp(`href="/o/${slug}/devices/${UUID}"[^>]*>([^<]+)<`, "g"))].map((match) => match[1]);
}

async function siteNames(client: TestClient, slug: string): Promise<string[]> {
  const page = plain((await client.get(`/o/${slug}/sites`)).text);
  return ["Quayside office", "Harbour office", "Pier office"].filter((name) => page.includes(name));
}

describe("A new organisation's first device", () => {
  test("New device names the organisation's first site inline, and both are created together", async () => {
    const { client, slug } = await signUpNewOrganisation("first-site");
    const form = plain((await client.get(`/o/${slug}/devices/new`)).text);
    expect(form).toContain("this organisation has none yet");

    // Nothing chosen and nothing named: said in words beside the field, never the validator's own text.
    const missing = await client.post(`/o/${slug}/devices/new`, { name: "quay-gw-01", timezone: "UTC" });
    expect(missing.status).toBe(400);
    expect(plain(missing.text)).toContain("Choose a site, or name a new one.");
    expect(missing.text).not.toContain("Invalid input");
    const unnamed = await client.post(`/o/${slug}/devices/new`, { name: "quay-gw-01", siteId: "new", siteName: " ", timezone: "UTC" });
    expect(unnamed.status).toBe(400);
    expect(plain(unnamed.text)).toContain("Name the new site");

    const created = await client.post(`/o/${slug}/devices/new`, { name: "quay-gw-01", siteId: "new", siteName: "Quayside office", timezone: "UTC" });
    expect(created.status).toBe(302);
    expect(created.location).toMatch(new RegExp(`^/o/${slug}/devices/${UUID}/model/interfaces$`));
    expect(await siteNames(client, slug)).toEqual(["Quayside office"]);
    const audit = (await client.get(`/o/${slug}/settings/audit`)).text;
    for (const action of ["site.created", "device.created"]) expect(audit).toContain(action);

    // A taken site name is refused beside its field, and rolls the device back with it.
    const clash = await client.post(`/o/${slug}/devices/new`, { name: "quay-gw-02", siteId: "new", siteName: "Quayside office", timezone: "UTC" });
    expect(clash.status).toBe(409);
    expect(plain(clash.text)).toContain('A site named "Quayside office" exists already.');
    expect(await fleetNames(client, slug)).toEqual(["quay-gw-01"]);
    // A bad time zone with a new site creates neither.
    const badZone = await client.post(`/o/${slug}/devices/new`, { name: "quay-gw-03", siteId: "new", siteName: "Harbour office", timezone: "Mars/Olympus" });
    expect(badZone.status).toBe(400);
    expect(await siteNames(client, slug)).toEqual(["Quayside office"]);
  });

  test("Import creates the first site inline, tells an unchosen file from an empty one, and offers a rename for a taken name", async () => {
    const { client, slug } = await signUpNewOrganisation("first-import");
    const path = `/o/${slug}/devices/import`;
    // A form sent with the file field left empty (the browser's form is checked in tests/e2e/new-organisation.spec.ts).
    const noFile = await postMultipart(client, path, { intent: "preview", target: "site:new", siteName: "Pier office" });
    expect(noFile.status).toBe(400);
    expect(plain(noFile.text)).toContain("No file chosen: choose a model document (.json) to upload.");
    const emptyFile = await postMultipart(client, path, { intent: "preview", target: "site:new", siteName: "Pier office", file: new Blob([]) });
    expect(plain(emptyFile.text)).toContain("The chosen file is empty.");
    const unnamedSite = await postMultipart(client, path, { intent: "preview", target: "site:new", siteName: "", file: new Blob([JSON.stringify(QUAY_MODEL)]) });
    expect(unnamedSite.status).toBe(400);
    expect(plain(unnamedSite.text)).toContain("Name the new site");

    const first = await postMultipart(client, path, { intent: "import", target: "site:new", siteName: "Pier office", fileName: "quay.json", documentText: JSON.stringify(QUAY_MODEL) });
    expect(first.status).toBe(302);
    expect(await siteNames(client, slug)).toEqual(["Pier office"]);
    const siteId = (await client.get(`/o/${slug}/sites`)).text.match(new RegExp(`edit=(${UUID})`))?.[1];
    expect(siteId).toBeDefined();

    // The same document again at that site: the preview says the name is taken and proposes a free one.
    const preview = await postMultipart(client, path, { intent: "preview", target: `site:${siteId}`, file: new Blob([JSON.stringify(QUAY_MODEL)]) });
    expect(preview.status).toBe(200);
    expect(plain(preview.text)).toContain("A device named quay-edge exists already");
    expect(preview.text).toMatch(/name="deviceName"[^>]*value="quay-edge-2"|value="quay-edge-2"[^>]*name="deviceName"/);
    // A bad rename returns to the preview with the reason beside the field; nothing is created.
    const badName = await postMultipart(client, path, { intent: "import", target: `site:${siteId}`, fileName: "quay.json", documentText: JSON.stringify(QUAY_MODEL), deviceName: "quay edge" });
    expect(badName.status).toBe(400);
    expect(plain(badName.text)).toContain("Use 1–63 characters");
    expect(plain(badName.text)).toContain("Preview: quay-edge");
    // Keeping the taken name at the last step returns to the preview too, with the clash said beside the name.
    const taken = await postMultipart(client, path, { intent: "import", target: `site:${siteId}`, fileName: "quay.json", documentText: JSON.stringify(QUAY_MODEL), deviceName: "quay-edge" });
    expect(taken.status).toBe(409);
    expect(plain(taken.text)).toContain('A device named "quay-edge" exists already in this organisation.');
    expect(taken.text).toContain('name="deviceName"');
    const renamed = await postMultipart(client, path, { intent: "import", target: `site:${siteId}`, fileName: "quay.json", documentText: JSON.stringify(QUAY_MODEL), deviceName: "quay-edge-lab" });
    expect(renamed.status).toBe(302);
    expect((await fleetNames(client, slug)).sort()).toEqual(["quay-edge", "quay-edge-lab"]);
  });
});

describe("Pages a role may not open", () => {
  test("are not linked for that role, and refuse inside the app's frame when opened by address", async () => {
    const trainee = new TestClient();
    await trainee.signIn(...DEMO_PASSWORDS.trainee);
    const settings = await trainee.get("/o/lanternfield/settings/members");
    expect(settings.status).toBe(200);
    expect(settings.text).not.toContain('href="/o/lanternfield/settings/audit"');
    const fleet = await trainee.get("/o/lanternfield/devices");
    expect(fleet.text).not.toContain('href="/o/lanternfield/devices/new"');
    expect(fleet.text).not.toContain('href="/o/lanternfield/devices/import"');

    const refused = await trainee.get("/o/lanternfield/settings/audit");
    expect(refused.status).toBe(403);
    const page = plain(refused.text);
    expect(page).toContain("Not allowed");
    expect(page).toContain("This needs the reviewer role or higher; you are trainee.");
    // The frame stays: the main navigation and the settings tabs, and a way back.
    expect(refused.text).toContain('aria-label="Main"');
    expect(refused.text).toContain('aria-label="Settings"');
    expect(page).toContain("Back to members");

    // A refused form (a page left open after a role change, say) refuses inside the frame as well.
    const refusedForm = await trainee.post("/o/lanternfield/sites", { intent: "create", name: "Quayside office", customer: "", location: "" });
    expect(refusedForm.status).toBe(403);
    expect(plain(refusedForm.text)).toContain("This needs the engineer role or higher; you are trainee.");
    expect(refusedForm.text).toContain('aria-label="Main"');

    // An address inside the organisation that no page answers is a 404 inside the frame too.
    const missing = await trainee.get("/o/lanternfield/no-such-page");
    expect(missing.status).toBe(404);
    expect(missing.text).toContain('aria-label="Main"');
    expect(plain(missing.text)).toContain("There is no such page in this organisation.");

    const reviewer = new TestClient();
    await reviewer.signIn(...DEMO_PASSWORDS.reviewer);
    expect((await reviewer.get("/o/lanternfield/settings/members")).text).toContain('href="/o/lanternfield/settings/audit"');
  });
});
