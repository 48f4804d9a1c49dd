// Issue 14, point 9: `npm run backup` and `npm run restore` (docs/decisions/020), run as an operator
// would, against a database of this test's own (the test database's name with "_backup"), never
// the demo's: back up, change the data, restore, and find the earlier state.
import { execFile } from "node:child_process";
import { randomUUID } from "node:crypto";
import { existsSync, mkdtempSync, readdirSync, readFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { promisify } from "node:util";
import { describe, expect, test } from "vitest";
import { QueryTypes, Sequelize } from "sequelize";
import { verifyAuditChains } from "#server/services/audit-chain.server";

const execFileAsync = promisify(execFile);
const testDatabase = new URL(process.env.DATABASE_URL!).pathname.slice(1);
const database = `${testDatabase.replace(/_test$/, "")}_backup_test`;

/** The scripts as `npm run …` runs them, for this test's database and the local cluster (not the suite's DATABASE_URL). */
async function script(name: string, args: string[], options: { input?: string } = {}): Promise<{ code: number; stdout: string; stderr: string }> {
  const env: NodeJS.ProcessEnv = { ...process.env, SALLYPORT_DB_NAME: database };
  delete env.DATABASE_URL;
  delete env.MIGRATION_DATABASE_URL;
  const child = execFileAsync("bash", [`server/setup/${name}`, ...args], { env, maxBuffer: 8 * 1024 * 1024 });
  if (options.input !== undefined) child.child.stdin?.end(options.input);
  else child.child.stdin?.end();
  return child.then(({ stdout, stderr }) => ({ code: 0, stdout, stderr }), (error: { code: number; stdout: string; stderr: string }) => ({ code: error.code, stdout: error.stdout, stderr: error.stderr }));
}

/** Creates (or empties) this test's database, migrates it, and answers its runtime URL. */
async function freshDatabase(): Promise<string> {
  const env: NodeJS.ProcessEnv = { ...process.env };
  delete env.DATABASE_URL;
  delete env.MIGRATION_DATABASE_URL;
  const { stdout } = await execFileAsync("bash", ["-c", `source server/setup/lib.sh >/dev/null && ensure_postgres_cluster >/dev/null && ensure_database "$1" >/dev/null \
    && npx tsx server/db/cli.ts reset migrate >/dev/null && echo "$DATABASE_URL"`, "fresh", database], { env });
  return stdout.trim().split("\n").at(-1)!;
}

const one = async <T extends object>(connection: Sequelize, sql: string, replacements: Record<string, unknown> = {}) =>
  (await connection.query<T>(sql, { type: QueryTypes.SELECT, replacements }))[0];

describe("Backup and restore", () => {
  test("A backup taken before a change brings the earlier state back: data, audit log and all, with everyone signed out", { timeout: 240_000 }, async () => {
    const url = await freshDatabase();
    const directory = mkdtempSync(path.join(tmpdir(), "sallyport-backups-"));
    const organisationId = randomUUID();
    const userId = randomUUID();
    let connection = new Sequelize(url, { dialect: "postgres", logging: false });
    try {
      await connection.query(
        `INSERT INTO organisations (id, slug, name) VALUES (:organisationId, 'tidewater-ops', 'Tidewater Operations');
         INSERT INTO users (id, email, name, password_hash) VALUES (:userId, 'rhea.calloway@tidewater.example', 'Rhea Calloway', 'not-a-real-hash');
         INSERT INTO sites (id, organisation_id, name) VALUES (:siteId, :organisationId, 'Dry dock');
         INSERT INTO audit_events (organisation_id, actor_user_id, action, target_type, changes) VALUES (:organisationId, :userId, 'site.created', 'site', '{"name": "Dry dock"}');`,
        { replacements: { organisationId, userId, siteId: randomUUID() } },
      );
    } finally {
      await connection.close();
    }

    const backup = await script("backup.sh", [directory]);
    expect(backup.code, backup.stderr).toBe(0);
    const file = /wrote (\S+\.dump)/.exec(backup.stdout)?.[1];
    expect(file).toBeDefined();
    // Timestamped, in pg_dump's custom format (its files begin with "PGDMP").
    expect(path.basename(file!)).toMatch(new RegExp(`^sallyport-${database}-\\d{8}T\\d{6}Z\\.dump$`));
    expect(existsSync(file!)).toBe(true);
    expect(readFileSync(file!).subarray(0, 5).toString()).toBe("PGDMP");

    // Changes after the backup: a rename, a new site, a deletion, more audit entries and a session.
    connection = new Sequelize(url, { dialect: "postgres", logging: false });
    try {
      await connection.query(
        `UPDATE organisations SET name = 'Renamed after the backup' WHERE id = :organisationId;
         INSERT INTO sites (id, organisation_id, name) VALUES (:siteId, :organisationId, 'Slipway');
         DELETE FROM sites WHERE name = 'Dry dock';
         INSERT INTO audit_events (organisation_id, actor_user_id, action, target_type, changes) VALUES (:organisationId, :userId, 'site.deleted', 'site', '{"name": "Dry dock"}');
         INSERT INTO sessions (id, token_hash, user_id, expires_at, last_seen_at) VALUES (:sessionId, :tokenHash, :userId, now() + interval '1 hour', now());`,
        { replacements: { organisationId, userId, siteId: randomUUID(), sessionId: randomUUID(), tokenHash: "a".repeat(64) } },
      );

      // While anything is connected (a running server holds connections), the restore refuses and changes nothing.
      const refused = await script("restore.sh", [file!, "--yes", "--backup-dir", directory]);
      expect(refused.code).not.toBe(0);
      expect(refused.stderr).toMatch(/other connection\(s\) to database .* are open/);
      expect((await one<{ name: string }>(connection, "SELECT name FROM organisations WHERE id = :organisationId", { organisationId }))?.name).toBe("Renamed after the backup");
    } finally {
      await connection.close();
    }

    // Without --yes and without a terminal to ask in, nothing happens either.
    const unconfirmed = await script("restore.sh", [file!, "--backup-dir", directory], { input: `${database}\n` });
    expect(unconfirmed.code).not.toBe(0);
    expect(unconfirmed.stderr).toContain("nothing restored: confirmation needs a terminal");
    // A file that is not a backup is refused before anything is touched.
    const notABackup = await script("restore.sh", [path.join(process.cwd(), "package.json"), "--yes", "--backup-dir", directory]);
    expect(notABackup.code).not.toBe(0);
    expect(notABackup.stderr).toContain("is not a backup made by `npm run backup`");

    const restored = await script("restore.sh", [file!, "--yes", "--backup-dir", directory]);
    expect(restored.code, `${restored.stdout}\n${restored.stderr}`).toBe(0);
    expect(restored.stdout).toContain(`restored ${file}`);
    expect(restored.stdout).toContain("Audit log intact");
    // The data from just before the restore was kept, in case the wrong file was named.
    expect(readdirSync(directory).filter((name) => name.endsWith("-before-restore.dump"))).toHaveLength(1);

    connection = new Sequelize(url, { dialect: "postgres", logging: false });
    try {
      expect((await one<{ name: string }>(connection, "SELECT name FROM organisations WHERE id = :organisationId", { organisationId }))?.name).toBe("Tidewater Operations");
      expect((await connection.query<{ name: string }>("SELECT name FROM sites WHERE organisation_id = :organisationId ORDER BY name", { type: QueryTypes.SELECT, replacements: { organisationId } })).map((site) => site.name)).toEqual(["Dry dock"]);
      expect((await connection.query<{ action: string }>("SELECT action FROM audit_events WHERE organisation_id = :organisationId ORDER BY chain_seq", { type: QueryTypes.SELECT, replacements: { organisationId } })).map((entry) => entry.action)).toEqual(["site.created"]);
      expect((await one<{ n: string }>(connection, "SELECT count(*) AS n FROM sessions"))?.n).toBe("0");
      // The restored log verifies, and the runtime role may still only append to it.
      expect((await verifyAuditChains(connection)).breaks).toEqual([]);
      await connection.query("INSERT INTO audit_events (organisation_id, action, target_type) VALUES (:organisationId, 'site.updated', 'site')", { replacements: { organisationId } });
      await expect(connection.query("DELETE FROM audit_events")).rejects.toThrow(/permission denied/);
      const chain = await verifyAuditChains(connection, { chain: organisationId });
      expect(chain.breaks).toEqual([]);
      expect(chain.chains[0].seq).toBe(2);
    } finally {
      await connection.close();
    }
  });
});
