// Changing a shared address object or group, over HTTP as a browser does it: the review lists
// every device that uses it (directly or through a shared group) with its exposure change, which
// `trace` must replay; the confirmation gives each of those devices a new revision in the same
// transaction as the library change and its audit entries; a device edited in between makes the
// confirmation fail (409) with nothing written. Each test makes its own organisation.
// Semantics: PRODUCT.md §3 (outcomes, addresses), §4 (shared objects), docs/decisions/008.

import { randomUUID } from "node:crypto";
import { afterAll, describe, expect, test } from "vitest";
import { AuditEvent, DeviceRevision, Organisation, RevisionAnalysisRecord } from "#models/index";
import { getDatabase } from "#server/db/database.server";
import { parseCidr } from "#server/engine/addresses";
import { compileModel, diffModels, parseModel, trace, type CompiledModel, type Outcome } from "#server/engine/index";
import { revisionAnalysisQueue } from "#server/jobs/revision-analysis.server";
import { stopJobQueue } from "#server/jobs/job-queue.server";
import { previewSharedObjectChange, saveSharedObject } from "#server/services/shared-objects.server";
import { lockSharedLibrary } from "#server/services/shared-library-lock.server";
import { signUpNewOrganisation, type FetchResult, type TestClient } from "../support/client";
import { plain, UUID } from "../support/html";
import { confirmReview, PIER_GW, QUAY_EDGE, reviewConfirmFields } from "../support/shared-objects";
import { ownerConnection } from "../support/database";

const sequelize = getDatabase();
afterAll(async () => {
  await stopJobQueue();
  await sequelize.close();
});

// Invented devices; documentation addresses (RFC 5737, RFC 3849) stand in for the internet.
// QUAY_EDGE uses ops-desk directly, PIER_GW through the shared group all-operators.
/** Uses no shared object. */
const LAB_FW = {
  schemaVersion: 2,
  device: { name: "lab-fw" },
  interfaces: [{ name: "outside", role: "wan", addresses: ["192.0.2.30/24"], listeners: ["ssh"] }],
  accounts: [{ name: "ops-kai", secondFactor: "totp" }],
};
/** Defines its own ops-desk, which wins over the shared one. */
const YARD_FW = {
  schemaVersion: 2,
  device: { name: "yard-fw" },
  interfaces: [{ name: "outside", role: "wan", addresses: ["192.0.2.40/24"], listeners: ["ssh"] }],
  addresses: [{ name: "ops-desk", entries: ["198.51.100.200/29"] }],
  accounts: [{ name: "ops-mia", loginSources: ["ops-desk"], secondFactor: "totp" }],
};

type TestOrganisation = { client: TestClient; slug: string; organisationId: string; devices: Record<string, string> };

function importDocument(client: TestClient, slug: string, target: string, document: unknown, baseRevision?: number): Promise<FetchResult> {
  const fields: Record<string, string> = { intent: "import", target, fileName: "model.json", documentText: JSON.stringify(document) };
  if (baseRevision) fields.baseRevision = String(baseRevision);
  // A new revision of an existing device is imported only once its effect was read.
  if (target.startsWith("device:")) fields.effectRead = "yes";
  return client.post(`/o/${slug}/devices/import`, fields);
}

function saveObject(client: TestClient, slug: string, fields: { original?: string; kind: "address" | "group"; name: string; items: string }): Promise<FetchResult> {
  return client.post(`/o/${slug}/settings/shared-objects`, { intent: "save", original: fields.original ?? "", kind: fields.kind, name: fields.name, items: fields.items, description: "" });
}

/** A new organisation with the shared library and the four devices, each at revision 1. */
async function organisationWithDevices(label: string, documents: readonly unknown[] = [QUAY_EDGE, PIER_GW, LAB_FW, YARD_FW]): Promise<TestOrganisation> {
  const { client, slug } = await signUpNewOrganisation(label);
  expect((await client.post(`/o/${slug}/sites`, { intent: "create", name: "Harbour office", customer: "", location: "" })).status).toBe(302);
  const siteId = (await client.get(`/o/${slug}/sites`)).text.match(new RegExp(`edit=(${UUID})`))?.[1];
  if (!siteId) throw new Error("no site id on the sites page");
  expect((await saveObject(client, slug, { kind: "address", name: "ops-desk", items: "198.51.100.0/28" })).status).toBe(302);
  expect((await saveObject(client, slug, { kind: "group", name: "all-operators", items: "ops-desk" })).status).toBe(302);
  const devices: Record<string, string> = {};
  for (const document of documents) {
    const imported = await importDocument(client, slug, `site:${siteId}`, document);
    expect(imported.status, imported.text.slice(0, 300)).toBe(302);
    devices[(document as { device: { name: string } }).device.name] = imported.location?.match(new RegExp(`/devices/(${UUID})$`))?.[1] ?? "";
  }
  const organisation = await Organisation.findOne({ where: { slug } });
  return { client, slug, organisationId: organisation!.id, devices };
}

async function exported(organisation: TestOrganisation, device: string, revision: number): Promise<FetchResult> {
  return organisation.client.get(`/o/${organisation.slug}/devices/${organisation.devices[device]}/revisions/${revision}/export`);
}

async function compiledAt(organisation: TestOrganisation, device: string, revision: number): Promise<CompiledModel> {
  const response = await exported(organisation, device, revision);
  expect(response.status).toBe(200);
  const parsed = parseModel(JSON.parse(response.text));
  if (!parsed.ok) throw new Error(`export of ${device} r${revision} does not validate`);
  return compileModel(parsed.model);
}

type ReviewRow = { before: Outcome; after: Outcome; count: string; ranges: string[]; services: string[]; to: string[]; witness: { from: string; interface: string; service: string; to: string; at: string } };
type ReviewCard = { name: string; rows: ReviewRow[]; moreExposed: string; lessExposed: string; findingsAdded: string[]; text: string };

function attribute(tag: string, name: string): string {
  return plain(new RegExp(`${name}="([^"]*)"`).exec(tag)?.[1] ?? "");
}

/** The review's device cards as the page shows them. */
function reviewCards(html: string): ReviewCard[] {
  return html
    .split('data-testid="device-effect"')
    .slice(1)
    .map((card) => {
      const rows = [...card.matchAll(/<li [^>]*data-testid="exposure-change"[^>]*>[\s\S]*?<a [^>]*data-testid="change-witness"[^>]*>/g)].map((match): ReviewRow => {
        const tag = match[0].slice(0, match[0].indexOf(">") + 1);
        const link = match[0].slice(match[0].lastIndexOf("<a "));
        const query = new URLSearchParams(attribute(link, "href").split("?")[1]);
        return {
          before: attribute(tag, "data-before") as Outcome,
          after: attribute(tag, "data-after") as Outcome,
          ranges: attribute(tag, "data-ranges").split(" "),
          services: attribute(tag, "data-services").split(" "),
          to: attribute(tag, "data-to").split(" "),
          count: /data-count="(\d+)"/.exec(match[0])?.[1] ?? "",
          witness: { from: query.get("from")!, interface: query.get("interface")!, service: query.get("service")!, to: query.get("to")!, at: query.get("at")! },
        };
      });
      const newFindings = card.split("New findings")[1]?.split("</ul>")[0] ?? "";
      return {
        name: card.match(/<a [^>]*href="\/o\/[^"]+\/devices\/[0-9a-f-]{36}"[^>]*>([^<]+)<\/a>/)?.[1] ?? "",
        rows,
        moreExposed: card.match(/data-testid="more-exposed" data-count="(\d+)"/)?.[1] ?? "0",
        lessExposed: card.match(/data-testid="less-exposed" data-count="(\d+)"/)?.[1] ?? "0",
        findingsAdded: [...newFindings.matchAll(/<code[^>]*>([^<]*)<\/code>/g)].map((match) => match[1]),
        text: plain(card),
      };
    });
}

/** Addresses in a CIDR list (RFC 4632 §3.1: a /n holds 2^(bits−n)). */
function sizeOf(cidrs: readonly string[]): bigint {
  return cidrs.reduce((total, text) => {
    const { range } = parseCidr(text);
    return total + range.last - range.first + 1n;
  }, 0n);
}

function lastAddressOf(cidr: string): string {
  const { range } = parseCidr(cidr);
  if (range.family === 4) return [24n, 16n, 8n, 0n].map((shift) => String((range.last >> shift) & 255n)).join(".");
  // Only used for IPv4 rows below; IPv6 rows are checked at their first address.
  throw new Error("IPv4 only");
}

async function historyText(organisation: TestOrganisation, device: string): Promise<string> {
  const page = await organisation.client.get(`/o/${organisation.slug}/devices/${organisation.devices[device]}/history`);
  expect(page.status).toBe(200);
  return plain(page.text);
}

describe("Changing a shared object", () => {
  test("The review lists each device that uses it, directly or through a group, and every change it shows is what trace gives before and after", async () => {
    const organisation = await organisationWithDevices("shared-review");
    const { client, slug } = organisation;
    // ops-desk moves from 198.51.100.0/28 to 198.51.100.16/28 and gains an IPv6 block.
    const review = await saveObject(client, slug, { original: "ops-desk", kind: "address", name: "ops-desk", items: "198.51.100.16/28\n2001:db8:77::/120" });
    expect(review.status).toBe(200);
    const text = plain(review.text);
    expect(text).toContain("Review before saving: 2 devices change");
    expect(text).toContain("Save and create 2 new revisions");
    // Nothing is saved yet: the library and every device are as they were.
    expect((await exported(organisation, "quay-edge", 2)).status).toBe(404);
    expect(plain((await client.get(`/o/${slug}/settings/shared-objects`)).text)).toContain("198.51.100.0/28");

    const cards = reviewCards(review.text);
    // quay-edge uses ops-desk directly, pier-gw through all-operators; lab-fw does not use it and
    // yard-fw's own ops-desk wins over the shared one (PRODUCT.md §4), so neither is listed.
    expect(cards.map((card) => card.name)).toEqual(["pier-gw", "quay-edge"]);
    const fields = reviewConfirmFields(review.text);
    expect(fields.bases.split(",").sort()).toEqual([`${organisation.devices["pier-gw"]}:1`, `${organisation.devices["quay-edge"]}:1`].sort());

    // Distinct sources: quay-edge gains the new /28 (16, RFC 4632 §3.1) on IPv4 and the /120
    // (2^8 = 256, RFC 4291 §2.3) on IPv6, and loses the old /28; pier-gw's login sources move the same way.
    const [pier, quay] = cards;
    expect([quay.moreExposed, quay.lessExposed]).toEqual(["272", "16"]);
    expect([pier.moreExposed, pier.lessExposed]).toEqual(["16", "16"]);

    // Saved, the revisions are what the engine compares.
    const saved = await confirmReview(client, `/o/${slug}/settings/shared-objects`, review);
    expect(saved.status).toBe(302);
    for (const card of cards) {
      const before = await compiledAt(organisation, card.name, 1);
      const after = await compiledAt(organisation, card.name, 2);
      const diff = diffModels(before, after);
      // Every transition of the engine's diff is in a row of the review (none left out at this size).
      expect(card.rows.reduce((total, row) => total + row.services.length * row.to.length, 0)).toBe(diff.changes.reduce((total, change) => total + change.transitions.length, 0));
      expect(card.findingsAdded.sort()).toEqual(diff.findingsAdded.map((finding) => finding.elements.join(" ") || finding.code).sort());
      for (const row of card.rows) {
        // The witness: a probe inside the row replayed by trace on each revision.
        expect(trace(before, row.witness).outcome, `${card.name} ${JSON.stringify(row)}`).toBe(row.before);
        expect(trace(after, row.witness).outcome).toBe(row.after);
        expect(parseCidr(row.ranges[0]).range.first).toBe(parseCidr(row.witness.from).range.first);
        // The count is the size of its ranges (RFC 4632 §3.1).
        expect(BigInt(row.count)).toBe(sizeOf(row.ranges));
        // Each service and address of the row, at the first and the last source, moves the same way.
        const last = row.ranges[row.ranges.length - 1];
        const sources = parseCidr(last).range.family === 4 ? [row.witness.from, lastAddressOf(last)] : [row.witness.from];
        for (const service of row.services) {
          for (const to of row.to) {
            for (const from of sources) {
              const probe = { ...row.witness, service, to, from };
              expect(trace(before, probe).outcome, JSON.stringify(probe)).toBe(row.before);
              expect(trace(after, probe).outcome).toBe(row.after);
            }
          }
        }
      }
    }
    // The rows name the moves PRODUCT.md §3 predicts: pier-gw's account gains a login path from the
    // new block (password only: no second factor) and the old block's login is refused.
    expect(pier.rows.map((row) => [row.before, row.after, row.ranges.join(" ")]).sort()).toEqual(
      [
        ["login-denied", "login-password", "198.51.100.16/28"],
        ["login-password", "login-denied", "198.51.100.0/28"],
      ].sort(),
    );
    // quay-edge: ssh and https, in catalogue order (PRODUCT.md §3) (one row each way and family: the same sources move on both services).
    expect(quay.rows.map((row) => [row.before, row.after, row.services.join(" "), row.ranges.join(" ")]).sort()).toEqual(
      [
        ["silent", "login-mfa", "ssh https", "198.51.100.16/28"],
        ["silent", "login-mfa", "ssh https", "2001:db8:77::/120"],
        ["login-mfa", "silent", "ssh https", "198.51.100.0/28"],
      ].sort(),
    );
  });

  test("A change that widens login sources shows the finding it adds before it is saved", async () => {
    const organisation = await organisationWithDevices("shared-finding", [PIER_GW]);
    // 198.0.0.0/8 holds 2^24 addresses: broad-login-sources (PRODUCT.md §5).
    const review = await saveObject(organisation.client, organisation.slug, { original: "ops-desk", kind: "address", name: "ops-desk", items: "198.0.0.0/8" });
    expect(review.status).toBe(200);
    const [pier] = reviewCards(review.text);
    expect(pier.text).toContain("New findings (1)");
    expect(pier.findingsAdded).toEqual(["account:ops-jon"]);
    expect(pier.moreExposed).toBe(String((1n << 24n) - 16n));
  });

  test("Confirming gives every device that uses it a new revision in one transaction with the library change and the audit entries, then analyses them", async () => {
    const organisation = await organisationWithDevices("shared-save");
    const { client, slug, organisationId, devices } = organisation;
    const review = await saveObject(client, slug, { original: "ops-desk", kind: "address", name: "ops-desk", items: "198.51.100.16/28" });
    const saved = await confirmReview(client, `/o/${slug}/settings/shared-objects`, review);
    expect(saved.status).toBe(302);
    const page = await client.get(saved.location!);
    expect(plain(page.text)).toContain("Shared address object ops-desk saved. New revisions: pier-gw r2, quay-edge r2.");

    for (const device of ["quay-edge", "pier-gw"]) {
      expect((await exported(organisation, device, 2)).status).toBe(200);
      // The revision message names the shared object and its change.
      expect(await historyText(organisation, device)).toContain("Shared address object ops-desk: 198.51.100.0/28 → 198.51.100.16/28");
    }
    for (const device of ["lab-fw", "yard-fw"]) expect((await exported(organisation, device, 2)).status).toBe(404);
    // The new revision records the new value; export carries it.
    const quay = JSON.parse((await exported(organisation, "quay-edge", 2)).text) as { addresses: Array<{ name: string; entries: string[] }> };
    expect(quay.addresses).toEqual([{ name: "ops-desk", entries: ["198.51.100.16/28"] }]);

    // Audit: the library change naming the revisions it made, and one entry per device revision.
    const events = await AuditEvent.findAll({ where: { organisationId }, order: [["id", "ASC"]] });
    const updated = events.filter((event) => event.action === "shared-object.updated");
    expect(updated).toHaveLength(1);
    expect(updated[0].changes).toMatchObject({ items: { from: ["198.51.100.0/28"], to: ["198.51.100.16/28"] }, deviceRevisions: [{ device: "pier-gw", revision: 2 }, { device: "quay-edge", revision: 2 }] });
    const revised = events.filter((event) => event.action === "device.revised");
    expect(revised.map((event) => event.targetId).sort()).toEqual([devices["pier-gw"], devices["quay-edge"]].sort());
    expect(revised.every((event) => (event.changes as { sharedObjects?: string[] }).sharedObjects?.includes("ops-desk"))).toBe(true);

    // One transaction: PostgreSQL stamps each row with the id of the transaction that wrote it (xmin).
    const [rows] = (await sequelize.query(
      `SELECT xmin::text AS xid, 'revision' AS what FROM device_revisions WHERE device_id IN (:devices) AND number = 2
       UNION ALL SELECT xmin::text, 'library' FROM shared_address_objects WHERE organisation_id = :organisationId AND name = 'ops-desk'
       UNION ALL SELECT xmin::text, 'audit' FROM audit_events WHERE id IN (:events)`,
      { replacements: { devices: [devices["quay-edge"], devices["pier-gw"]], organisationId, events: [...updated, ...revised].map((event) => event.id) } },
    )) as [Array<{ xid: string; what: string }>, unknown];
    expect(rows).toHaveLength(2 + 1 + 3);
    expect(new Set(rows.map((row) => row.xid)).size).toBe(1);

    // The background analysis stores each new revision's summary.
    const revisionIds = (await DeviceRevision.findAll({ where: { deviceId: [devices["quay-edge"], devices["pier-gw"]], number: 2 }, attributes: ["id"] })).map((revision) => revision.id);
    const deadline = Date.now() + 20_000;
    while ((await RevisionAnalysisRecord.count({ where: { revisionId: revisionIds } })) < 2 && Date.now() < deadline) await new Promise((resolve) => setTimeout(resolve, 200));
    expect(await RevisionAnalysisRecord.count({ where: { revisionId: revisionIds } })).toBe(2);
  });

  test("A device edited after the review makes the confirmation fail (409) with nothing written, and shows the review again", async () => {
    const organisation = await organisationWithDevices("shared-conflict", [QUAY_EDGE, PIER_GW]);
    const { client, slug, organisationId, devices } = organisation;
    const review = await saveObject(client, slug, { original: "ops-desk", kind: "address", name: "ops-desk", items: "198.51.100.16/28" });
    expect(review.status).toBe(200);
    // Meanwhile an engineer saves pier-gw as revision 2.
    expect((await importDocument(client, slug, `device:${devices["pier-gw"]}`, { ...PIER_GW, accounts: [{ ...PIER_GW.accounts[0], secondFactor: "totp" }] }, 1)).status).toBe(302);
    const auditBefore = await AuditEvent.count({ where: { organisationId } });

    const refused = await confirmReview(client, `/o/${slug}/settings/shared-objects`, review);
    expect(refused.status).toBe(409);
    const text = plain(refused.text);
    expect(text).toContain("Nothing was saved: device pier-gw changed: revision 2 by");
    expect(text).toContain("replaced revision 1");
    // Nothing half-written: no revision for quay-edge (first in the list), the library unchanged, no audit entry.
    expect((await exported(organisation, "quay-edge", 2)).status).toBe(404);
    expect((await exported(organisation, "pier-gw", 3)).status).toBe(404);
    expect(plain((await client.get(`/o/${slug}/settings/shared-objects`)).text)).toContain("198.51.100.0/28");
    expect(await AuditEvent.count({ where: { organisationId } })).toBe(auditBefore);

    // The answer carries the review as it is now, pier-gw at revision 2; confirming that one saves.
    expect(reviewConfirmFields(refused.text).bases.split(",").sort()).toEqual([`${devices["pier-gw"]}:2`, `${devices["quay-edge"]}:1`].sort());
    expect((await confirmReview(client, `/o/${slug}/settings/shared-objects`, refused)).status).toBe(302);
    expect((await exported(organisation, "quay-edge", 2)).status).toBe(200);
    expect((await exported(organisation, "pier-gw", 3)).status).toBe(200);
  });

  test("A failure while the revisions are written leaves no device, library or audit change behind", async () => {
    const organisation = await organisationWithDevices("shared-atomic", [QUAY_EDGE, PIER_GW]);
    const { client, slug, organisationId, devices } = organisation;
    const review = await saveObject(client, slug, { original: "ops-desk", kind: "address", name: "ops-desk", items: "198.51.100.16/28" });
    const auditBefore = await AuditEvent.count({ where: { organisationId } });
    // Revisions are written by device name: pier-gw's is written, then quay-edge's insert fails.
    const trigger = `fail_${randomUUID().replace(/-/g, "")}`;
    // Triggers are the owner role's to create (docs/decisions/013); the app's runtime role cannot.
    const owner = ownerConnection();
    await owner.query(`CREATE FUNCTION ${trigger}() RETURNS trigger LANGUAGE plpgsql AS $$ BEGIN RAISE EXCEPTION 'simulated failure'; END $$`);
    await owner.query(`CREATE TRIGGER ${trigger} BEFORE INSERT ON device_revisions FOR EACH ROW WHEN (NEW.device_id = '${devices["quay-edge"]}') EXECUTE FUNCTION ${trigger}()`);
    try {
      const failed = await confirmReview(client, `/o/${slug}/settings/shared-objects`, review);
      expect(failed.status).toBe(500);
    } finally {
      await owner.query(`DROP TRIGGER ${trigger} ON device_revisions`);
      await owner.query(`DROP FUNCTION ${trigger}()`);
      await owner.close();
    }
    expect((await exported(organisation, "pier-gw", 2)).status).toBe(404);
    expect((await exported(organisation, "quay-edge", 2)).status).toBe(404);
    expect(plain((await client.get(`/o/${slug}/settings/shared-objects`)).text)).toContain("198.51.100.0/28");
    expect(await AuditEvent.count({ where: { organisationId } })).toBe(auditBefore);
    // The same confirmation, once the failure is gone, saves both.
    expect((await confirmReview(client, `/o/${slug}/settings/shared-objects`, review)).status).toBe(302);
    expect((await exported(organisation, "pier-gw", 2)).status).toBe(200);
  });

  test("A library change waits while a device save holds the library, so neither records a value the other is replacing", async () => {
    const organisation = await organisationWithDevices("shared-lock", [QUAY_EDGE, PIER_GW]);
    const { organisationId } = organisation;
    const input = { kind: "address" as const, name: "ops-desk", items: ["198.51.100.16/28"], description: "" };
    const preview = await previewSharedObjectChange(organisationId, "ops-desk", input);
    expect(preview.devices.map((device) => device.deviceName)).toEqual(["pier-gw", "quay-edge"]);
    // A device save in progress: it holds the library for reading (server/services/devices.server.ts).
    const deviceSave = await sequelize.transaction();
    await lockSharedLibrary(deviceSave, organisationId, "read");
    let settled = false;
    const saving = saveSharedObject(organisationId, "ops-desk", input, { userId: null, email: "lock-test@test.example", clientAddress: "192.0.2.10" }, preview.confirmation).finally(() => {
      settled = true;
    });
    await new Promise((resolve) => setTimeout(resolve, 500));
    expect(settled).toBe(false);
    await deviceSave.commit();
    const saved = await saving;
    expect(saved.revisions.map((revision) => `${revision.deviceName} r${revision.number}`)).toEqual(["pier-gw r2", "quay-edge r2"]);
    await revisionAnalysisQueue.idle();
  });

  test("A change no device uses saves at once; a group's new member reaches its devices; deleting an object in use is refused naming its users", async () => {
    const organisation = await organisationWithDevices("shared-direct", [QUAY_EDGE, PIER_GW]);
    const { client, slug } = organisation;
    expect((await saveObject(client, slug, { kind: "address", name: "branch-desk", items: "198.51.100.64/28" })).status).toBe(302);
    expect((await saveObject(client, slug, { original: "branch-desk", kind: "address", name: "branch-desk", items: "198.51.100.80/28" })).status).toBe(302);

    // all-operators gains branch-desk: only pier-gw (through the group) changes.
    const review = await saveObject(client, slug, { original: "all-operators", kind: "group", name: "all-operators", items: "ops-desk\nbranch-desk" });
    expect(review.status).toBe(200);
    const [pier, ...others] = reviewCards(review.text);
    expect(others).toEqual([]);
    expect(pier.name).toBe("pier-gw");
    expect(pier.rows.map((row) => [row.before, row.after, row.ranges.join(" ")])).toEqual([["login-denied", "login-password", "198.51.100.80/28"]]);
    expect((await confirmReview(client, `/o/${slug}/settings/shared-objects`, review)).status).toBe(302);
    expect(await historyText(organisation, "pier-gw")).toContain("Shared address group all-operators: ops-desk → ops-desk, branch-desk");

    const refused = await client.post(`/o/${slug}/settings/shared-objects`, { intent: "delete", name: "ops-desk" });
    expect(refused.status).toBe(409);
    expect(plain(refused.text)).toContain('"ops-desk" is in use: shared group all-operators, device pier-gw, device quay-edge.');
    const group = await client.post(`/o/${slug}/settings/shared-objects`, { intent: "delete", name: "all-operators" });
    expect(group.status).toBe(409);
    expect(plain(group.text)).toContain('"all-operators" is in use: device pier-gw.');
  });

  test("A CSV import that changes objects in use is reviewed like a single save and confirmed as one change", async () => {
    const organisation = await organisationWithDevices("shared-csv", [QUAY_EDGE, PIER_GW]);
    const { client, slug, devices } = organisation;
    const form = new FormData();
    form.append("intent", "import-csv");
    form.append("file", new Blob(["name,entries\nops-desk,198.51.100.32/28\nspare-net,10.9.0.0/16\nbad name,10.0.0.1\n"], { type: "text/csv" }), "objects.csv");
    const review = await client.request(`/o/${slug}/settings/shared-objects`, { method: "POST", body: form });
    expect(review.status).toBe(200);
    const text = plain(review.text);
    expect(text).toContain("2 to save, 1 refused");
    expect(text).toContain("Save and create 2 new revisions");
    expect(reviewCards(review.text).map((card) => card.name)).toEqual(["pier-gw", "quay-edge"]);
    expect(plain((await client.get(`/o/${slug}/settings/shared-objects`)).text)).not.toContain("spare-net");

    const saved = await confirmReview(client, `/o/${slug}/settings/shared-objects`, review);
    expect(saved.status).toBe(200);
    expect(plain(saved.text)).toContain("2 saved, 1 refused");
    const library = plain((await client.get(`/o/${slug}/settings/shared-objects`)).text);
    expect(library).toContain("198.51.100.32/28");
    expect(library).toContain("spare-net");
    for (const device of ["quay-edge", "pier-gw"]) {
      expect((await exported(organisation, device, 2)).status).toBe(200);
      // Each device's message names the change of the objects it uses (spare-net is used by none).
      expect(await historyText(organisation, device)).toContain("Shared address object ops-desk: 198.51.100.0/28 → 198.51.100.32/28 (CSV import)");
    }
    expect(devices["quay-edge"]).toMatch(new RegExp(UUID));
  });
});
