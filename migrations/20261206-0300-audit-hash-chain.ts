import type { MigrationContext } from "#server/db/migrator.ts";

// The audit log as hash chains (docs/decisions/020): one chain per organisation, and one for
// entries that belong to no organisation (the nil UUID). Each entry carries its place in its chain,
// the previous entry's hash and the SHA-256 of its canonical content, all set by a BEFORE INSERT
// trigger, so every insert path (the model, the bulk insert, a migration's own INSERT) is chained
// and the runtime role cannot choose the values. The chain's last place and hash are kept in
// audit_chain_heads, which only the triggers (running as the owner role) may write: a deleted last
// entry shows as a head beyond the chain. Locking the head row serialises one chain's inserts until
// commit — per organisation, so one organisation's long transaction never stalls another's.
export async function up({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`
    ALTER TABLE audit_events
      ADD COLUMN chain_seq bigint,
      ADD COLUMN prev_hash char(64),
      ADD COLUMN hash char(64);

    CREATE TABLE audit_chain_heads (
      chain_key uuid PRIMARY KEY,
      seq bigint NOT NULL,
      hash char(64) NOT NULL
    );

    -- The chain an entry belongs to: its organisation, or the nil UUID for entries of none.
    CREATE FUNCTION audit_chain_key(organisation_id uuid) RETURNS uuid
      LANGUAGE sql IMMUTABLE AS $$ SELECT coalesce(organisation_id, '00000000-0000-0000-0000-000000000000'::uuid) $$;

    -- The canonical content an entry's hash covers: a JSON array of its fields in a fixed order
    -- (json_build_array's text form: ", " between values; changes in jsonb's text form), with the
    -- time in UTC to the microsecond, so neither the session's time zone nor its date style changes
    -- it; it includes the entry's place and the previous hash. hash = SHA-256 of its UTF-8 bytes, in
    -- hex. An array, not an object: building jsonb objects doubled the cost of a 25,000-entry insert.
    CREATE FUNCTION audit_event_canonical(entry audit_events) RETURNS text
      LANGUAGE sql STABLE AS $$
        SELECT json_build_array(
          'sallyport-audit-1',
          entry.id,
          public.audit_chain_key(entry.organisation_id),
          entry.chain_seq,
          entry.prev_hash,
          entry.organisation_id,
          entry.actor_user_id,
          entry.actor_email,
          entry.action,
          entry.target_type,
          entry.target_id,
          entry.changes,
          entry.client_address,
          entry.api_token_id,
          entry.api_token_name,
          to_char(entry.created_at AT TIME ZONE 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.US"Z"')
        )::text
      $$;

    -- Each new entry's place and hashes. The head row's lock is held until commit: one chain's
    -- writers take turns, other chains' writers do not wait. The head itself is written once per
    -- statement (below): updating one row per entry of a 25,000-entry insert would leave a chain of
    -- row versions that every later lookup walks. So within a statement, entries beyond the head
    -- are this transaction's own; and the last entry this transaction chained is remembered in a
    -- transaction-local setting (reverted with a rolled-back savepoint, like the rows), so a bulk
    -- insert does not lock and look its chain up again for every row (2.5 times faster). Anyone may
    -- set that setting: a runtime role that forges it skips the wait and names a place and a
    -- previous hash, which at worst refuses its insert (the unique place index) or adds an entry
    -- the verify reports as broken — it never hides or changes an entry already written.
    CREATE FUNCTION audit_events_chain() RETURNS trigger
      LANGUAGE plpgsql SECURITY DEFINER SET search_path = public, pg_temp AS $$
      DECLARE
        this_chain uuid := audit_chain_key(NEW.organisation_id);
        remembered text[] := string_to_array(current_setting('sallyport.audit_chain_last', true), '|');
        head audit_chain_heads%ROWTYPE;
        last_seq bigint;
        last_hash char(64);
      BEGIN
        IF remembered[1] = this_chain::text THEN
          -- This transaction already holds the chain's head lock: nobody else appended since.
          last_seq := remembered[2]::bigint;
          last_hash := remembered[3];
        ELSE
          -- Waits for another transaction's insert into this chain to commit, then reads its head.
          SELECT * INTO head FROM audit_chain_heads WHERE chain_key = this_chain FOR UPDATE;
          IF NOT FOUND THEN
            INSERT INTO audit_chain_heads (chain_key, seq, hash) VALUES (this_chain, 0, repeat('0', 64)) ON CONFLICT (chain_key) DO NOTHING;
            SELECT * INTO head FROM audit_chain_heads WHERE chain_key = this_chain FOR UPDATE;
          END IF;
          SELECT e.chain_seq, e.hash INTO last_seq, last_hash FROM audit_events e
           WHERE audit_chain_key(e.organisation_id) = this_chain AND e.chain_seq > head.seq
           ORDER BY e.chain_seq DESC LIMIT 1;
          IF NOT FOUND THEN
            last_seq := head.seq;
            last_hash := head.hash;
          END IF;
        END IF;
        NEW.chain_seq := last_seq + 1;
        NEW.prev_hash := last_hash;
        NEW.hash := encode(sha256(convert_to(audit_event_canonical(NEW), 'UTF8')), 'hex');
        PERFORM set_config('sallyport.audit_chain_last', concat_ws('|', this_chain, NEW.chain_seq, NEW.hash), true);
        RETURN NEW;
      END $$;
    REVOKE ALL ON FUNCTION audit_events_chain() FROM PUBLIC;

    CREATE FUNCTION audit_events_chain_heads() RETURNS trigger
      LANGUAGE plpgsql SECURITY DEFINER SET search_path = public, pg_temp AS $$
      BEGIN
        UPDATE audit_chain_heads head SET seq = added.chain_seq, hash = added.hash
          FROM (SELECT DISTINCT ON (audit_chain_key(organisation_id)) audit_chain_key(organisation_id) AS chain_key, chain_seq, hash
                  FROM new_entries ORDER BY audit_chain_key(organisation_id), chain_seq DESC) added
         WHERE head.chain_key = added.chain_key AND added.chain_seq > head.seq;
        RETURN NULL;
      END $$;
    REVOKE ALL ON FUNCTION audit_events_chain_heads() FROM PUBLIC;

    -- Existing entries, chained in the order they were written.
    ALTER TABLE audit_events DISABLE TRIGGER audit_events_no_update;
    DO $$
    DECLARE
      entry audit_events%ROWTYPE;
      this_chain uuid;
      last_chain uuid := NULL;
      place bigint := 0;
      prev char(64);
    BEGIN
      FOR entry IN SELECT * FROM audit_events ORDER BY audit_chain_key(organisation_id), id LOOP
        this_chain := audit_chain_key(entry.organisation_id);
        IF last_chain IS DISTINCT FROM this_chain THEN
          IF last_chain IS NOT NULL THEN INSERT INTO audit_chain_heads VALUES (last_chain, place, prev); END IF;
          last_chain := this_chain; place := 0; prev := repeat('0', 64);
        END IF;
        place := place + 1;
        entry.chain_seq := place;
        entry.prev_hash := prev;
        prev := encode(sha256(convert_to(audit_event_canonical(entry), 'UTF8')), 'hex');
        UPDATE audit_events SET chain_seq = place, prev_hash = entry.prev_hash, hash = prev WHERE id = entry.id;
      END LOOP;
      IF last_chain IS NOT NULL THEN INSERT INTO audit_chain_heads VALUES (last_chain, place, prev); END IF;
    END $$;
    ALTER TABLE audit_events ENABLE TRIGGER audit_events_no_update;

    CREATE TRIGGER audit_events_chain BEFORE INSERT ON audit_events
      FOR EACH ROW EXECUTE FUNCTION audit_events_chain();
    CREATE TRIGGER audit_events_chain_heads AFTER INSERT ON audit_events
      REFERENCING NEW TABLE AS new_entries FOR EACH STATEMENT EXECUTE FUNCTION audit_events_chain_heads();
    CREATE UNIQUE INDEX audit_events_chain_place ON audit_events (audit_chain_key(organisation_id), chain_seq);
  `);
}

export async function down({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`
    DROP TRIGGER IF EXISTS audit_events_chain ON audit_events;
    DROP TRIGGER IF EXISTS audit_events_chain_heads ON audit_events;
    DROP INDEX IF EXISTS audit_events_chain_place;
    DROP FUNCTION IF EXISTS audit_events_chain();
    DROP FUNCTION IF EXISTS audit_events_chain_heads();
    DROP FUNCTION IF EXISTS audit_event_canonical(audit_events);
    ALTER TABLE audit_events DROP COLUMN IF EXISTS chain_seq, DROP COLUMN IF EXISTS prev_hash, DROP COLUMN IF EXISTS hash;
    DROP FUNCTION IF EXISTS audit_chain_key(uuid);
    DROP TABLE IF EXISTS audit_chain_heads;
  `);
}
