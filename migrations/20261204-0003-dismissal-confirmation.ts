import type { MigrationContext } from "#server/db/migrator.ts";

// Dismissing a high or critical finding takes two people: the engineer who asks (a reason of
// at least 20 characters) and a reviewer or above who confirms. Until confirmed the dismissal
// is "awaiting confirmation" and the finding still counts. A lockout finding is never
// dismissed, only fixed.
//
// The database keeps what it can check on its own row: a dismissal that needs confirmation has
// the longer reason, the confirmer is someone else, and only such a dismissal is confirmed.
// Which severities need confirmation is the service's rule (server/services/dismissal-rules.ts):
// dismissals accepted before this migration were made under the earlier rule and stay as they
// were, on the record. Standing dismissals of lockout findings do not: they end here, each with
// an audit entry, and no new one can be written.
export async function up({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`
    ALTER TABLE finding_dismissals
      ADD COLUMN needs_confirmation boolean NOT NULL DEFAULT false,
      ADD COLUMN confirmed_at timestamptz,
      ADD COLUMN confirmed_by_user_id uuid REFERENCES users(id) ON DELETE SET NULL,
      ADD COLUMN confirmed_by_email varchar(254);

    WITH ended AS (
      UPDATE finding_dismissals
         SET restored_at = now(), restored_by_email = 'sallyport'
       WHERE code = 'lockout' AND restored_at IS NULL
      RETURNING organisation_id, device_id, code, elements, reason, dismissed_by_email, revision_number
    )
    INSERT INTO audit_events (organisation_id, actor_user_id, actor_email, action, target_type, target_id, changes)
    SELECT organisation_id, NULL, '', 'finding.restored', 'device', device_id::text,
           jsonb_build_object('code', code, 'elements', elements, 'reason', reason, 'dismissedBy', dismissed_by_email, 'revision', revision_number,
                              'why', 'Lockout findings are fixed, not dismissed: this dismissal ended when the rule came in.')
      FROM ended;

    ALTER TABLE finding_dismissals
      ADD CONSTRAINT finding_dismissals_confirmer_recorded CHECK ((confirmed_at IS NULL) = (confirmed_by_email IS NULL)),
      ADD CONSTRAINT finding_dismissals_confirmed_when_needed CHECK (confirmed_at IS NULL OR needs_confirmation),
      ADD CONSTRAINT finding_dismissals_confirmation_reason CHECK (NOT needs_confirmation OR char_length(btrim(reason)) >= 20),
      -- A second person: never the one who asked (by account, and by address while both are known).
      ADD CONSTRAINT finding_dismissals_second_person CHECK (
        confirmed_by_email IS NULL
        OR (lower(confirmed_by_email) <> lower(dismissed_by_email)
            AND (confirmed_by_user_id IS NULL OR dismissed_by_user_id IS NULL OR confirmed_by_user_id <> dismissed_by_user_id))
      ),
      ADD CONSTRAINT finding_dismissals_no_lockout CHECK (code <> 'lockout' OR restored_at IS NOT NULL);

    -- The fleet findings page's "awaiting my confirmation" reads these.
    CREATE INDEX finding_dismissals_awaiting ON finding_dismissals(organisation_id)
      WHERE restored_at IS NULL AND needs_confirmation AND confirmed_at IS NULL;
  `);
}

export async function down({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`
    DROP INDEX IF EXISTS finding_dismissals_awaiting;
    ALTER TABLE finding_dismissals
      DROP CONSTRAINT IF EXISTS finding_dismissals_no_lockout,
      DROP CONSTRAINT IF EXISTS finding_dismissals_second_person,
      DROP CONSTRAINT IF EXISTS finding_dismissals_confirmation_reason,
      DROP CONSTRAINT IF EXISTS finding_dismissals_confirmed_when_needed,
      DROP CONSTRAINT IF EXISTS finding_dismissals_confirmer_recorded,
      DROP COLUMN IF EXISTS confirmed_by_email,
      DROP COLUMN IF EXISTS confirmed_by_user_id,
      DROP COLUMN IF EXISTS confirmed_at,
      DROP COLUMN IF EXISTS needs_confirmation;
  `);
}
