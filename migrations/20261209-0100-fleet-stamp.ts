import type { MigrationContext } from "#server/db/migrator.ts";

// The fleet's change stamp (docs/decisions/026): a counter on the organisation that grows with
// every change to what the fleet table shows — its devices, their revisions and stored analyses,
// sites, change proposals, dismissals and field checks. The session's query reads it with the
// organisation, so a web process can keep the fleet's rows and know at no cost when they are
// stale. Triggers keep it, so no writer (the app, a job, a script, a restore) can forget to; they
// are deferred to the end of the transaction, so the organisation's row is locked only while
// the transaction commits, not while it works.
const TABLES = ["devices", "device_revisions", "revision_analyses", "sites", "change_proposals", "finding_dismissals", "field_checks"] as const;

export async function up({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`
    ALTER TABLE organisations ADD COLUMN fleet_stamp bigint NOT NULL DEFAULT 0;

    CREATE FUNCTION bump_fleet_stamp() RETURNS trigger LANGUAGE plpgsql AS $$
    DECLARE
      changed uuid[] := '{}';
    BEGIN
      IF TG_TABLE_NAME = 'revision_analyses' THEN
        changed := ARRAY(SELECT d.organisation_id FROM device_revisions r JOIN devices d ON d.id = r.device_id
                          WHERE r.id = CASE WHEN TG_OP = 'DELETE' THEN OLD.revision_id ELSE NEW.revision_id END);
      ELSIF TG_TABLE_NAME = 'device_revisions' THEN
        changed := ARRAY(SELECT d.organisation_id FROM devices d
                          WHERE d.id = CASE WHEN TG_OP = 'DELETE' THEN OLD.device_id ELSE NEW.device_id END);
      ELSE
        IF TG_OP <> 'INSERT' THEN changed := changed || OLD.organisation_id; END IF;
        IF TG_OP <> 'DELETE' THEN changed := changed || NEW.organisation_id; END IF;
      END IF;
      UPDATE organisations SET fleet_stamp = fleet_stamp + 1 WHERE id = ANY (changed);
      RETURN NULL;
    END $$;
  `);
  for (const table of TABLES) {
    await queryInterface.sequelize.query(`
      CREATE CONSTRAINT TRIGGER ${table}_fleet_stamp AFTER INSERT OR UPDATE OR DELETE ON ${table}
        DEFERRABLE INITIALLY DEFERRED FOR EACH ROW EXECUTE FUNCTION bump_fleet_stamp();
    `);
  }
}

export async function down({ context: queryInterface }: MigrationContext): Promise<void> {
  for (const table of TABLES) await queryInterface.sequelize.query(`DROP TRIGGER ${table}_fleet_stamp ON ${table};`);
  await queryInterface.sequelize.query(`
    DROP FUNCTION bump_fleet_stamp();
    ALTER TABLE organisations DROP COLUMN fleet_stamp;
  `);
}
