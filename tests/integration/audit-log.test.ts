// The audit log as a reviewer reads it: names instead of ids, each change in words with its
// recorded values behind "Details", filters in the URL, pages, and the same view as CSV.

import { inject, describe, expect, test } from "vitest";
import { parseCsv } from "#server/formats/csv";
import { AUDIT_ACTION_LABELS } from "#app/utils/audit-words";
import { isAuditAction } from "#models/audit-actions";
import { waitForLink } from "../support/outbox";
import { GOOD_PASSWORD, signUpNewOrganisation, TestClient, uniqueEmail } from "../support/client";
import { plain, UUID } from "../support/html";

const outboxDir = inject("outboxDir");

/** The data-action of each row of the audit table, top to bottom. */
function rowActions(html: string): string[] {
  return [...html.matchAll(/<tr data-action="([a-z.-]+)"/g)].map((match) => match[1]);
}

/** The value of the select option whose label starts with `label`. */
function optionValue(html: string, label: string): string {
  const value = [...plain(html).matchAll(new RegExp(`<option value="(${UUID})"[^>]*>([^<]*)</option>`, "g"))].find((match) => match[2].startsWith(label))?.[1];
  if (!value) throw new Error(`no option labelled ${label}`);
  return value;
}

/** The audit table alone (the page's data script holds other JSON). */
function tableOf(html: string): string {
  return plain(html).match(/<table[\s\S]*<\/table>/)?.[0] ?? "";
}

/** An organisation with a second member (an engineer) who has made changes of their own. */
async function organisationWithTwoActors(label: string) {
  const { client: owner, slug, email: ownerEmail } = await signUpNewOrganisation(label);
  const engineerEmail = uniqueEmail(`${label}-engineer`);
  expect((await owner.post(`/o/${slug}/settings/members`, { intent: "invite", email: engineerEmail, role: "engineer" })).status).toBe(302);
  const invitation = new URL(await waitForLink(outboxDir, engineerEmail, /https?:\/\/\S+\/invitations\/[A-Za-z0-9_-]+/)).pathname;
  const engineer = new TestClient();
  expect((await engineer.post(invitation, { name: "Ines Quayside", password: GOOD_PASSWORD })).status).toBe(302);
  // The owner adds a site; the engineer adds another, creates a device there and deletes it.
  expect((await owner.post(`/o/${slug}/sites`, { intent: "create", name: "Harbour office", customer: "Lanternfield Ferries", location: "Pier 4" })).status).toBe(302);
  expect((await engineer.post(`/o/${slug}/sites`, { intent: "create", name: "Dry dock", customer: "", location: "" })).status).toBe(302);
  const siteId = (await engineer.get(`/o/${slug}/sites`)).text.match(new RegExp(`edit=(${UUID})`))?.[1];
  expect(siteId).toBeDefined();
  const created = await engineer.post(`/o/${slug}/devices/new`, { name: "quay-gw-01", siteId: siteId!, timezone: "UTC" });
  expect(created.status).toBe(302);
  const deviceId = created.location?.match(new RegExp(`/devices/(${UUID})/`))?.[1];
  expect(deviceId).toBeDefined();
  const deleted = await engineer.post(`/o/${slug}/devices/${deviceId}/model/settings`, { intent: "delete-device", confirmName: "quay-gw-01", baseRevision: "1" });
  expect(deleted.status).toBe(302);
  return { owner, ownerEmail, engineer, engineerEmail, slug, deviceId: deviceId! };
}

describe("A readable audit log", () => {
  test("Entries name who did what to what in words, with the recorded values behind Details", async () => {
    const { owner, slug, engineerEmail } = await organisationWithTwoActors("audit-words");
    const page = await owner.get(`/o/${slug}/settings/audit`);
    expect(page.status).toBe(200);
    const text = tableOf(page.text);
    // Who: names, with the e-mail beside them.
    expect(text).toContain("Ines Quayside");
    expect(text).toContain(engineerEmail);
    // What, in words: the action's label and a sentence naming the target.
    expect(text).toContain(AUDIT_ACTION_LABELS["site.created"]);
    expect(text).toContain("Added site “Harbour office” for Lanternfield Ferries at Pier 4");
    expect(text).toContain(`Invited ${engineerEmail} as engineer`);
    expect(text).toContain(`${engineerEmail} joined as engineer`);
    // A deleted device keeps the name it had, from the log itself.
    expect(text).toContain("Deleted device “quay-gw-01” and its revisions (last r1)");
    expect(text).toMatch(/Created device “quay-gw-01” as r1/);
    // No raw JSON objects and no truncated ids on the page; the details list the values.
    expect(text).not.toMatch(/\{&quot;|\{"name"/);
    expect(text).not.toMatch(/(device|site) [0-9a-f]{8}(?![0-9a-f-])/);
    expect(text).toContain("<summary");
    expect(text).toMatch(/<dt[^>]*>location<\/dt><dd[^>]*><span[^>]*>Pier 4<\/span>/);
    // Newest first: the deletion heads the list.
    expect(rowActions(page.text)[0]).toBe("device.deleted");
  });

  test("Filters by actor, action, device and day range narrow the entries, through the URL", async () => {
    const { owner, slug, deviceId } = await organisationWithTwoActors("audit-filters");
    const base = `/o/${slug}/settings/audit`;
    const all = await owner.get(base);
    const everything = rowActions(all.text);
    expect(everything).toEqual(["device.deleted", "device.created", "site.created", "site.created", "invitation.accepted", "invitation.sent", "organisation.created"]);

    // Actor: only the engineer's own entries (joining, a site, the device's creation and deletion).
    const engineerId = optionValue(all.text, "Ines Quayside (");
    const byEngineer = rowActions((await owner.get(`${base}?actor=${engineerId}`)).text);
    expect(byEngineer.sort()).toEqual(["device.created", "device.deleted", "invitation.accepted", "site.created"]);

    // Action.
    const sites = await owner.get(`${base}?action=site.created`);
    expect(rowActions(sites.text)).toEqual(["site.created", "site.created"]);
    expect(plain(sites.text)).toContain('<option value="site.created" selected="">');

    // Device: entries about that device, even after it was deleted (listed as deleted).
    expect(plain(all.text)).toContain("quay-gw-01 (deleted)");
    expect(rowActions((await owner.get(`${base}?device=${deviceId}`)).text)).toEqual(["device.deleted", "device.created"]);

    // Days (UTC, inclusive): today holds everything, yesterday and tomorrow nothing.
    const day = (offset: number) => new Date(Date.now() + offset * 86_400_000).toISOString().slice(0, 10);
    expect(rowActions((await owner.get(`${base}?from=${day(0)}&to=${day(0)}`)).text)).toEqual(everything);
    expect(rowActions((await owner.get(`${base}?from=${day(1)}`)).text)).toEqual([]);
    expect(plain((await owner.get(`${base}?to=${day(-1)}`)).text)).toContain("No entries match these filters");

    // Filters combine.
    expect(rowActions((await owner.get(`${base}?actor=${engineerId}&action=site.created`)).text)).toEqual(["site.created"]);

    // Unknown values mean "no filter", never an error (shared links must keep opening).
    for (const query of ["action=site.exploded", "actor=not-a-uuid", "device=------------------------------------", "from=2026-02-31", "to=yesterday", "page=-4"]) {
      const response = await owner.get(`${base}?${query}`);
      expect(response.status, query).toBe(200);
      expect(rowActions(response.text), query).toEqual(everything);
    }
    // U+0000 is no filter value at all: refused before the route, naming the parameter.
    const nul = await owner.get(`${base}?device=%00`);
    expect(nul.status).toBe(400);
    expect(nul.text).toContain("parameter “device”");
  });

  test("Long logs come in pages of 50, newest first, with no entry on two pages", async () => {
    const { client, slug } = await signUpNewOrganisation("audit-pages");
    for (let index = 1; index <= 54; index += 1) {
      expect((await client.post(`/o/${slug}/sites`, { intent: "create", name: `Site ${String(index).padStart(2, "0")}`, customer: "", location: "" })).status).toBe(302);
    }
    const first = await client.get(`/o/${slug}/settings/audit`);
    const second = await client.get(`/o/${slug}/settings/audit?page=2`);
    const firstRows = tableOf(first.text).match(/Added site “Site \d\d”/g) ?? [];
    const secondRows = tableOf(second.text).match(/Added site “Site \d\d”/g) ?? [];
    expect(rowActions(first.text)).toHaveLength(50);
    // 54 sites and the organisation's creation.
    expect(rowActions(second.text)).toEqual(["site.created", "site.created", "site.created", "site.created", "organisation.created"]);
    expect(firstRows[0]).toBe("Added site “Site 54”");
    expect(secondRows.at(-1)).toBe("Added site “Site 01”");
    expect(new Set([...firstRows, ...secondRows]).size).toBe(54);
    expect(plain(first.text)).toContain("1–50 of 55 entries");
    expect(plain(second.text)).toContain("51–55 of 55 entries");
    // A page past the end shows the last page.
    expect(rowActions((await client.get(`/o/${slug}/settings/audit?page=9`)).text)).toEqual(rowActions(second.text));
  });

  test("The CSV holds the filtered entries with codes, a label beside each code, names and the recorded values", async () => {
    const { owner, slug, engineer } = await organisationWithTwoActors("audit-csv");
    // A value a spreadsheet would run as a formula is neutralised (OWASP CSV injection).
    expect((await engineer.post(`/o/${slug}/sites`, { intent: "create", name: "=HYPERLINK(1)", customer: "", location: "" })).status).toBe(302);
    const response = await owner.get(`/o/${slug}/settings/audit.csv`);
    expect(response.status).toBe(200);
    expect(response.headers.get("content-type")).toMatch(/^text\/csv/);
    expect(response.headers.get("content-disposition")).toMatch(/^attachment; filename="[A-Za-z0-9._-]+\.csv"$/);
    const [header, ...rows] = parseCsv(response.text);
    expect(header).toEqual(["at_utc", "actor_name", "actor_email", "action", "action_label", "target_type", "target_type_label", "target_id", "target_name", "summary", "client_address", "api_token", "changes_json"]);
    const column = (name: string) => header.indexOf(name);
    // As many rows as the page counts, in the same order.
    const page = await owner.get(`/o/${slug}/settings/audit`);
    expect(rows.map((row) => row[column("action")])).toEqual(rowActions(page.text));
    for (const row of rows) {
      // ISO 8601 instants in UTC for programs; each code followed by its label.
      expect(row[column("at_utc")]).toMatch(/^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}\.\d{3}Z$/);
      const action = row[column("action")];
      expect(isAuditAction(action) ? AUDIT_ACTION_LABELS[action] : `unknown action ${action}`).toBe(row[column("action_label")]);
      expect(JSON.parse(row[column("changes_json")])).toBeTypeOf("object");
    }
    const formula = rows.find((row) => row[column("action")] === "site.created" && row[column("target_name")].includes("HYPERLINK"));
    expect(formula?.[column("target_name")]).toBe("'=HYPERLINK(1)");
    expect(formula?.[column("actor_name")]).toBe("Ines Quayside");
    expect(formula?.[column("target_type_label")]).toBe("Site");

    // The same filters as the page.
    const filtered = parseCsv((await owner.get(`/o/${slug}/settings/audit.csv?action=device.deleted`)).text).slice(1);
    expect(filtered).toHaveLength(1);
    expect(filtered[0][column("target_name")]).toBe("quay-gw-01");
    expect(filtered[0][column("summary")]).toBe("Deleted device “quay-gw-01” and its revisions (last r1)");
  });

  test("Reviewers and above read the log and its CSV; trainees and outsiders do not", async () => {
    const { client: owner, slug } = await signUpNewOrganisation("audit-access");
    const traineeEmail = uniqueEmail("audit-trainee");
    await owner.post(`/o/${slug}/settings/members`, { intent: "invite", email: traineeEmail, role: "trainee" });
    const invitation = new URL(await waitForLink(outboxDir, traineeEmail, /https?:\/\/\S+\/invitations\/[A-Za-z0-9_-]+/)).pathname;
    const trainee = new TestClient();
    await trainee.post(invitation, { name: "Tam Trainee", password: GOOD_PASSWORD });
    expect((await trainee.get(`/o/${slug}/settings/audit.csv`)).status).toBe(403);
    const { client: outsider } = await signUpNewOrganisation("audit-outsider");
    expect((await outsider.get(`/o/${slug}/settings/audit.csv`)).status).toBe(404);
    expect((await new TestClient().get(`/o/${slug}/settings/audit.csv`)).status).toBe(302);
  });
});
