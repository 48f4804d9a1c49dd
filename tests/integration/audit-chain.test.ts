// Issue 14, point 8: an audit log you can trust (docs/decisions/020). Each entry is chained to the
// one before it in its organisation's chain by SHA-256 (FIPS 180-4), set by the database; the verify
// command walks the chains and names the first broken entry. Tampering is simulated as the owner
// role, which may switch the append-only trigger off; each test puts the entry back afterwards.
import { execFile } from "node:child_process";
import { mkdtempSync, readFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { promisify } from "node:util";
import { afterAll, describe, expect, test } from "vitest";
import { QueryTypes, Sequelize } from "sequelize";
import { getDatabase } from "#server/db/database.server";
import { grantRuntimeRole, runtimeRoleOf } from "#server/db/roles";
import { recordAuditEvent, recordAuditEvents, type AuditActor } from "#server/services/audit.server";
import { anchorsOf, GENESIS_HASH, sha256Hex, verifyAuditChains } from "#server/services/audit-chain.server";
import { signUpNewOrganisation } from "../support/client";
import { ownerConnection } from "../support/database";
import { up as chainMigrationUp, down as chainMigrationDown } from "../../migrations/20261206-0300-audit-hash-chain";

const run = promisify(execFile);
const sequelize = getDatabase();
const owner = ownerConnection();
const runtime = new Sequelize(process.env.DATABASE_URL!, { dialect: "postgres", logging: false });
afterAll(async () => {
  await Promise.all([owner.close(), runtime.close()]);
});

type Entry = { id: string; created_at: Date; chain_seq: string; prev_hash: string; hash: string; actor_email: string; changes: Record<string, unknown> };

async function organisationIdOf(slug: string): Promise<string> {
  const [row] = await sequelize.query<{ id: string }>("SELECT id FROM organisations WHERE slug = :slug", { type: QueryTypes.SELECT, replacements: { slug } });
  return row.id;
}

async function entriesOf(organisationId: string): Promise<Entry[]> {
  return sequelize.query<Entry>("SELECT id, created_at, chain_seq, prev_hash, hash, actor_email, changes FROM audit_events WHERE organisation_id = :organisationId ORDER BY chain_seq", { type: QueryTypes.SELECT, replacements: { organisationId } });
}

/** An organisation whose owner has made a few changes through the app. */
async function organisationWithEntries(label: string): Promise<{ organisationId: string; entries: Entry[] }> {
  const { client, slug } = await signUpNewOrganisation(label);
  for (const name of ["Harbour office", "Quay store", "Ferry terminal"]) {
    expect((await client.post(`/o/${slug}/sites`, { intent: "create", name, customer: "Lanternfield Ferries", location: "Pier 4" })).status).toBe(302);
  }
  const organisationId = await organisationIdOf(slug);
  return { organisationId, entries: await entriesOf(organisationId) };
}

/** Runs a statement as the owner with the append-only (and, when asked, the chaining) trigger off, as a tamperer with the owner's password could. */
async function asTamperer(statement: string, replacements: Record<string, unknown>, triggers: "append-only" | "all" = "append-only"): Promise<void> {
  const which = triggers === "all" ? "USER" : "audit_events_no_update";
  await owner.transaction(async (transaction) => {
    await owner.query(`ALTER TABLE audit_events DISABLE TRIGGER ${which}`, { transaction });
    await owner.query(statement, { replacements, transaction });
    await owner.query(`ALTER TABLE audit_events ENABLE TRIGGER ${which}`, { transaction });
  });
}

/** Puts a removed entry back exactly as it was, chain columns included. */
async function putBack(row: Record<string, unknown>): Promise<void> {
  const columns = Object.keys(row);
  await asTamperer(
    `INSERT INTO audit_events (${columns.join(", ")}) VALUES (${columns.map((column) => (column === "changes" ? `CAST(:${column} AS jsonb)` : `:${column}`)).join(", ")})`,
    { ...row, changes: JSON.stringify(row.changes) },
    "all",
  );
}

async function wholeRow(id: string): Promise<Record<string, unknown>> {
  const [row] = await owner.query<Record<string, unknown>>("SELECT * FROM audit_events WHERE id = :id", { type: QueryTypes.SELECT, replacements: { id } });
  return row;
}

describe("The audit log is a hash chain per organisation", () => {
  test("Entries written by ordinary actions are chained in order, and the chain verifies", async () => {
    const { organisationId, entries } = await organisationWithEntries("chain-ok");
    expect(entries.length).toBeGreaterThanOrEqual(4); // the sign-up and three sites
    expect(entries.map((entry) => Number(entry.chain_seq))).toEqual(entries.map((_, index) => index + 1));
    expect(entries[0].prev_hash).toBe(GENESIS_HASH);
    for (let index = 1; index < entries.length; index += 1) expect(entries[index].prev_hash).toBe(entries[index - 1].hash);
    // Each hash is the SHA-256 (FIPS 180-4) of the entry's canonical content, recomputed here in Node.
    const canonical = await sequelize.query<{ id: string; canonical: string; hash: string }>(
      "SELECT id, audit_event_canonical(e) AS canonical, hash FROM audit_events e WHERE organisation_id = :organisationId",
      { type: QueryTypes.SELECT, replacements: { organisationId } },
    );
    for (const row of canonical) {
      expect(sha256Hex(row.canonical)).toBe(row.hash);
      const [format, id, chain, place, previous, organisation] = JSON.parse(row.canonical) as unknown[];
      expect([format, id, chain, previous, organisation]).toEqual(["sallyport-audit-1", Number(row.id), organisationId, entries.find((entry) => entry.id === row.id)?.prev_hash, organisationId]);
      expect(place).toBe(Number(entries.find((entry) => entry.id === row.id)?.chain_seq));
    }

    const report = await verifyAuditChains(sequelize, { chain: organisationId });
    expect(report.breaks).toEqual([]);
    expect(report.chains).toEqual([expect.objectContaining({ chain: organisationId, entries: entries.length, seq: entries.length, hash: entries.at(-1)!.hash })]);
  });

  test("The bulk insert and single inserts in one transaction continue the same chain, whatever hash the caller offers", async () => {
    const { organisationId, entries } = await organisationWithEntries("chain-bulk");
    const actor: AuditActor = { userId: null, email: "harbour-ops@test.example", clientAddress: "192.0.2.10" };
    await sequelize.transaction(async (transaction) => {
      await recordAuditEvents(actor, ["pier-net", "quay-net", "ferry-net"].map((name) => ({ organisationId, action: "shared-object.created", targetType: "shared-object", targetId: name, changes: { name } })), transaction);
      await recordAuditEvent(actor, { organisationId, action: "shared-object.deleted", targetType: "shared-object", targetId: "quay-net" }, transaction);
    });
    // The runtime role names its own place and hash: the database sets them anyway.
    await runtime.query("INSERT INTO audit_events (organisation_id, action, target_type, chain_seq, prev_hash, hash) VALUES (:organisationId, 'site.created', 'site', 1, :forged, :forged)", { replacements: { organisationId, forged: "f".repeat(64) } });
    const after = await entriesOf(organisationId);
    expect(after).toHaveLength(entries.length + 5);
    expect(after.map((entry) => Number(entry.chain_seq))).toEqual(after.map((_, index) => index + 1));
    expect(after.map((entry) => entry.hash)).not.toContain("f".repeat(64));
    expect((await verifyAuditChains(sequelize, { chain: organisationId })).breaks).toEqual([]);
  });

  test("Parallel writers to one organisation's chain are serialised: no fork, no gap", async () => {
    const { organisationId } = await organisationWithEntries("chain-parallel");
    const actor: AuditActor = { userId: null, email: "harbour-ops@test.example", clientAddress: "192.0.2.11" };
    await Promise.all(Array.from({ length: 16 }, (_, index) => sequelize.transaction(async (transaction) => {
      await recordAuditEvent(actor, { organisationId, action: "site.created", targetType: "site", changes: { name: `Berth ${index}` } }, transaction);
      await recordAuditEvent(actor, { organisationId, action: "site.deleted", targetType: "site", changes: { name: `Berth ${index}` } }, transaction);
    })));
    const entries = await entriesOf(organisationId);
    expect(entries.map((entry) => Number(entry.chain_seq))).toEqual(entries.map((_, index) => index + 1));
    expect(new Set(entries.map((entry) => entry.prev_hash)).size).toBe(entries.length);
    expect((await verifyAuditChains(sequelize, { chain: organisationId })).breaks).toEqual([]);
  });

  test("An entry changed afterwards (as the owner role, trigger off) fails the verify, which names it with its time; the command exits 1", async () => {
    const { organisationId, entries } = await organisationWithEntries("chain-edit");
    const victim = entries[2];
    // Someone covers their tracks: the entry now names another person.
    await asTamperer("UPDATE audit_events SET actor_email = 'someone-else@test.example' WHERE id = :id", { id: victim.id });
    try {
      const report = await verifyAuditChains(sequelize, { chain: organisationId });
      expect(report.breaks).toEqual([expect.objectContaining({ problem: "changed", entryId: String(victim.id), at: victim.created_at, place: 3 })]);
      expect(report.breaks[0].message).toContain(`entry ${victim.id} of ${victim.created_at.toISOString()}`);

      const command = await run("npx", ["tsx", "server/db/audit-verify.ts", "--organisation", organisationId]).then(() => ({ code: 0, stdout: "" }), (error: { code: number; stdout: string }) => error);
      expect(command.code).toBe(1);
      expect(command.stdout).toContain(`entry ${victim.id} of ${victim.created_at.toISOString()} (place 3) was changed after it was written`);
      expect(command.stdout).toContain("Audit log BROKEN");
    } finally {
      await asTamperer("UPDATE audit_events SET actor_email = :email WHERE id = :id", { id: victim.id, email: victim.actor_email });
    }
    expect((await verifyAuditChains(sequelize, { chain: organisationId })).breaks).toEqual([]);
  });

  test("A deleted entry is found: in the middle by the gap before the next entry, at the end by the chain's head", { timeout: 60_000 }, async () => {
    const { organisationId, entries } = await organisationWithEntries("chain-delete");
    const middle = await wholeRow(entries[1].id);
    await asTamperer("DELETE FROM audit_events WHERE id = :id", { id: entries[1].id });
    try {
      const report = await verifyAuditChains(sequelize, { chain: organisationId });
      expect(report.breaks).toEqual([expect.objectContaining({ problem: "missing", entryId: String(entries[2].id), at: entries[2].created_at, place: 3 })]);
      expect(report.breaks[0].message).toMatch(/^1 entry is missing before entry/);
    } finally {
      await putBack(middle);
    }
    expect((await verifyAuditChains(sequelize, { chain: organisationId })).breaks).toEqual([]);

    const last = await wholeRow(entries.at(-1)!.id);
    await asTamperer("DELETE FROM audit_events WHERE id = :id", { id: last.id });
    try {
      const report = await verifyAuditChains(sequelize, { chain: organisationId });
      expect(report.breaks).toEqual([expect.objectContaining({ problem: "truncated", place: entries.length })]);
    } finally {
      await putBack(last);
    }
    expect((await verifyAuditChains(sequelize, { chain: organisationId })).breaks).toEqual([]);
  });

  test("A chain rewritten with fresh hashes passes on its own, and is caught by the anchors recorded before", async () => {
    const { organisationId, entries } = await organisationWithEntries("chain-anchor");
    const directory = mkdtempSync(path.join(tmpdir(), "sallyport-anchors-"));
    const anchorsFile = path.join(directory, "anchors.json");
    await run("npx", ["tsx", "server/db/audit-verify.ts", "--organisation", organisationId, "--record", anchorsFile]);
    const anchors = JSON.parse(readFileSync(anchorsFile, "utf8")) as Record<string, { seq: number; hash: string }>;
    expect(anchors).toEqual(anchorsOf(await verifyAuditChains(sequelize, { chain: organisationId })));
    expect(anchors[organisationId]).toEqual({ seq: entries.length, hash: entries.at(-1)!.hash });

    // Someone with the owner role's password rewrites the last entry and recomputes its hash and the head.
    const last = entries.at(-1)!;
    const rewrite = async (changes: string) => {
      await asTamperer(
        `UPDATE audit_events SET changes = CAST(:changes AS jsonb) WHERE id = :id;
         UPDATE audit_events e SET hash = encode(sha256(convert_to(audit_event_canonical(e), 'UTF8')), 'hex') WHERE id = :id;
         UPDATE audit_chain_heads SET hash = (SELECT hash FROM audit_events WHERE id = :id) WHERE chain_key = :organisationId`,
        { id: last.id, changes, organisationId },
      );
    };
    await rewrite(JSON.stringify({ name: "A site that never was" }));
    try {
      expect((await verifyAuditChains(sequelize, { chain: organisationId })).breaks).toEqual([]);
      const report = await verifyAuditChains(sequelize, { chain: organisationId, anchors });
      expect(report.breaks).toEqual([expect.objectContaining({ problem: "anchor", entryId: String(last.id), place: entries.length })]);
      const command = await run("npx", ["tsx", "server/db/audit-verify.ts", "--organisation", organisationId, "--anchors", anchorsFile]).then(() => ({ code: 0, stdout: "" }), (error: { code: number; stdout: string }) => error);
      expect(command.code).toBe(1);
      expect(command.stdout).toContain("does not match the anchor recorded earlier");
    } finally {
      await rewrite(JSON.stringify(last.changes));
    }
    expect((await verifyAuditChains(sequelize, { chain: organisationId, anchors })).breaks).toEqual([]);
  });

  test("Entries written before the chain existed are chained by the migration in the order they were written", { timeout: 120_000 }, async () => {
    const { organisationId } = await organisationWithEntries("chain-migration");
    const queryInterface = owner.getQueryInterface();
    await chainMigrationDown({ context: queryInterface });
    try {
      await owner.query("INSERT INTO audit_events (organisation_id, action, target_type, target_id) VALUES (:organisationId, 'site.created', 'site', 'older-1'), (:organisationId, 'site.deleted', 'site', 'older-2')", { replacements: { organisationId } });
    } finally {
      await chainMigrationUp({ context: queryInterface });
      // What `npm run db:migrate` does after every migration: the new table's grants.
      const role = runtimeRoleOf(process.env.DATABASE_URL!, process.env.MIGRATION_DATABASE_URL ?? process.env.DATABASE_URL!);
      if (role) await grantRuntimeRole(owner, role);
    }
    const entries = await sequelize.query<{ id: string; chain_seq: string; target_id: string }>("SELECT id, chain_seq, target_id FROM audit_events WHERE organisation_id = :organisationId ORDER BY id", { type: QueryTypes.SELECT, replacements: { organisationId } });
    expect(entries.map((entry) => Number(entry.chain_seq))).toEqual(entries.map((_, index) => index + 1));
    expect(entries.slice(-2).map((entry) => entry.target_id)).toEqual(["older-1", "older-2"]);
    // Every chain, every organisation's, verifies after the migration re-chained them all.
    expect((await verifyAuditChains(sequelize)).breaks).toEqual([]);
  });
});

describe("The runtime role cannot forge or rewrite the chain", () => {
  test("Going around the chaining through its transaction-local setting only ever refuses the insert or leaves a break the verify names", async () => {
    const { organisationId, entries } = await organisationWithEntries("chain-forge");
    const forged = "e".repeat(64);
    // A place already taken: the unique place index refuses the insert.
    await expect(runtime.transaction(async (transaction) => {
      await runtime.query(`SELECT set_config('sallyport.audit_chain_last', :value, true)`, { replacements: { value: `${organisationId}|1|${forged}` }, transaction });
      await runtime.query("INSERT INTO audit_events (organisation_id, action, target_type) VALUES (:organisationId, 'site.created', 'site')", { replacements: { organisationId }, transaction });
    })).rejects.toMatchObject({ parent: expect.objectContaining({ constraint: "audit_events_chain_place" }) });
    // A place beyond the end: accepted, committed, and reported as a gap before that very entry.
    await runtime.transaction(async (transaction) => {
      await runtime.query(`SELECT set_config('sallyport.audit_chain_last', :value, true)`, { replacements: { value: `${organisationId}|${entries.length + 5}|${forged}` }, transaction });
      await runtime.query("INSERT INTO audit_events (organisation_id, action, target_type) VALUES (:organisationId, 'site.created', 'site')", { replacements: { organisationId }, transaction });
    });
    const [inserted] = (await entriesOf(organisationId)).slice(-1);
    const report = await verifyAuditChains(sequelize, { chain: organisationId });
    expect(report.breaks).toEqual([expect.objectContaining({ problem: "missing", entryId: String(inserted.id), place: entries.length + 6 })]);
    // The entries written before are untouched and still verify up to the break.
    expect((await entriesOf(organisationId)).slice(0, entries.length).map((entry) => entry.hash)).toEqual(entries.map((entry) => entry.hash));
    await asTamperer("DELETE FROM audit_events WHERE id = :id; UPDATE audit_chain_heads SET seq = :seq, hash = :hash WHERE chain_key = :organisationId", { id: inserted.id, seq: entries.length, hash: entries.at(-1)!.hash, organisationId });
    expect((await verifyAuditChains(sequelize, { chain: organisationId })).breaks).toEqual([]);
  });

  test("Its privileges on the audit tables are exactly: insert and read the log, read the heads", async () => {
    const privileges = ["SELECT", "INSERT", "UPDATE", "DELETE", "TRUNCATE", "REFERENCES", "TRIGGER"];
    const one = async (sql: string) => (await runtime.query<Record<string, boolean>>(sql, { type: QueryTypes.SELECT }))[0];
    const granted = async (table: string) => {
      const row = await one(`SELECT ${privileges.map((privilege) => `has_table_privilege(current_user, '${table}', '${privilege}') AS "${privilege}"`).join(", ")}`);
      return privileges.filter((privilege) => row[privilege]);
    };
    expect(await granted("audit_events")).toEqual(["SELECT", "INSERT"]);
    expect(await granted("audit_chain_heads")).toEqual(["SELECT"]);
    // It owns neither table nor any of the chain's functions, so it can alter or replace none of them.
    const owned = await runtime.query<{ name: string }>(
      `SELECT c.relname AS name FROM pg_class c WHERE c.relname IN ('audit_events', 'audit_chain_heads') AND pg_get_userbyid(c.relowner) = current_user
       UNION ALL SELECT p.proname FROM pg_proc p WHERE p.proname LIKE 'audit%' AND pg_get_userbyid(p.proowner) = current_user`,
      { type: QueryTypes.SELECT },
    );
    expect(owned).toEqual([]);
  });

  test("It reads the chains' heads but cannot write them, and cannot change the chaining", async () => {
    await expect(runtime.query("SELECT count(*) FROM audit_chain_heads")).resolves.toBeDefined();
    for (const statement of [
      "UPDATE audit_chain_heads SET seq = 0",
      "DELETE FROM audit_chain_heads",
      `INSERT INTO audit_chain_heads VALUES ('${"1".repeat(8)}-1111-1111-1111-${"1".repeat(12)}', 1, '${"0".repeat(64)}')`,
      "TRUNCATE audit_chain_heads",
      "ALTER TABLE audit_events DISABLE TRIGGER audit_events_chain",
      "DROP TRIGGER audit_events_chain ON audit_events",
      "CREATE OR REPLACE FUNCTION audit_events_chain() RETURNS trigger LANGUAGE plpgsql AS $$ BEGIN RETURN NEW; END $$",
      "CREATE OR REPLACE FUNCTION audit_event_canonical(entry audit_events) RETURNS text LANGUAGE sql AS $$ SELECT '' $$",
      "UPDATE audit_events SET hash = hash",
    ]) {
      await expect(runtime.query(statement), statement).rejects.toThrow(/permission denied|must be owner/);
    }
  });
});
