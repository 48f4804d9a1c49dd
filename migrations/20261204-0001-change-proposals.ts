import type { MigrationContext } from "#server/db/migrator.ts";

// Change proposals (docs/decisions/010): a change to one device drafted on a base revision,
// reviewed, and applied as one revision inside its change window. The draft is a whole
// document; the element edits that made it are kept in order so it can be re-applied on a
// newer revision. Comments and reviews are append-only records of the review, each tied to the
// draft version it was about, so an approval of an older draft no longer counts. The
// organisation decides how many approvals a change needs and whether changes may be saved
// directly at all.
export async function up({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`
    ALTER TABLE organisations
      ADD COLUMN approvals_required integer NOT NULL DEFAULT 1 CHECK (approvals_required BETWEEN 1 AND 5),
      ADD COLUMN changes_through_proposals boolean NOT NULL DEFAULT false;

    CREATE TABLE change_proposals (
      id uuid PRIMARY KEY,
      organisation_id uuid NOT NULL REFERENCES organisations(id) ON DELETE CASCADE,
      device_id uuid NOT NULL REFERENCES devices(id) ON DELETE CASCADE,
      -- the revision the draft was made on (or last brought up to date with)
      base_revision_number integer NOT NULL CHECK (base_revision_number >= 1),
      draft_document jsonb NOT NULL,
      -- bumped by every change of the draft or its window: approvals name the version they saw
      draft_version integer NOT NULL DEFAULT 1 CHECK (draft_version >= 1),
      title varchar(200) NOT NULL CHECK (char_length(btrim(title)) BETWEEN 3 AND 200),
      reason varchar(4000) NOT NULL DEFAULT '',
      ticket varchar(100) NOT NULL DEFAULT '',
      window_start timestamptz NOT NULL,
      window_end timestamptz NOT NULL,
      -- the address the author declares they work from; the lockout guard protects its login
      work_from varchar(64) NOT NULL DEFAULT '',
      author_user_id uuid REFERENCES users(id) ON DELETE SET NULL,
      author_email varchar(254) NOT NULL,
      state varchar(20) NOT NULL DEFAULT 'draft'
        CHECK (state IN ('draft', 'in_review', 'changes_requested', 'approved', 'rejected', 'applied', 'withdrawn')),
      -- the author's written acknowledgement when submitting while the lockout guard blocks
      guard_acknowledgement varchar(2000) NOT NULL DEFAULT '',
      submitted_at timestamptz,
      applied_revision_number integer,
      applied_by_user_id uuid REFERENCES users(id) ON DELETE SET NULL,
      applied_by_email varchar(254),
      applied_at timestamptz,
      -- an admin's reason for applying outside the change window
      outside_window_reason varchar(2000) NOT NULL DEFAULT '',
      created_at timestamptz NOT NULL DEFAULT now(),
      updated_at timestamptz NOT NULL DEFAULT now(),
      CHECK (window_end > window_start),
      CHECK ((state = 'applied') = (applied_at IS NOT NULL AND applied_revision_number IS NOT NULL AND applied_by_email IS NOT NULL))
    );
    CREATE INDEX change_proposals_device ON change_proposals(device_id, state);
    CREATE INDEX change_proposals_organisation ON change_proposals(organisation_id, state, updated_at DESC);
    -- One revision comes from at most one proposal.
    CREATE UNIQUE INDEX change_proposals_applied_revision ON change_proposals(device_id, applied_revision_number) WHERE applied_revision_number IS NOT NULL;

    CREATE TABLE proposal_edits (
      id uuid PRIMARY KEY,
      proposal_id uuid NOT NULL REFERENCES change_proposals(id) ON DELETE CASCADE,
      position integer NOT NULL CHECK (position >= 1),
      edit jsonb NOT NULL,
      message varchar(500) NOT NULL,
      author_user_id uuid REFERENCES users(id) ON DELETE SET NULL,
      author_email varchar(254) NOT NULL,
      created_at timestamptz NOT NULL DEFAULT now(),
      UNIQUE (proposal_id, position)
    );

    CREATE TABLE proposal_comments (
      id uuid PRIMARY KEY,
      proposal_id uuid NOT NULL REFERENCES change_proposals(id) ON DELETE CASCADE,
      -- a comment on one inbound rule of the draft, or (null) on the whole proposal
      rule_id varchar(63),
      body varchar(4000) NOT NULL CHECK (char_length(btrim(body)) >= 1),
      draft_version integer NOT NULL CHECK (draft_version >= 1),
      author_user_id uuid REFERENCES users(id) ON DELETE SET NULL,
      author_email varchar(254) NOT NULL,
      created_at timestamptz NOT NULL DEFAULT now()
    );
    CREATE INDEX proposal_comments_proposal ON proposal_comments(proposal_id, created_at);

    CREATE TABLE proposal_reviews (
      id uuid PRIMARY KEY,
      proposal_id uuid NOT NULL REFERENCES change_proposals(id) ON DELETE CASCADE,
      reviewer_user_id uuid REFERENCES users(id) ON DELETE SET NULL,
      reviewer_email varchar(254) NOT NULL,
      reviewer_role varchar(16) NOT NULL CHECK (reviewer_role IN ('trainee', 'reviewer', 'engineer', 'admin', 'owner')),
      verdict varchar(20) NOT NULL CHECK (verdict IN ('approved', 'changes_requested', 'rejected')),
      reason varchar(2000) NOT NULL DEFAULT '',
      -- an admin's or owner's written reason for approving while the lockout guard blocks
      guard_override_reason varchar(2000) NOT NULL DEFAULT '',
      draft_version integer NOT NULL CHECK (draft_version >= 1),
      created_at timestamptz NOT NULL DEFAULT now()
    );
    CREATE INDEX proposal_reviews_proposal ON proposal_reviews(proposal_id, created_at);
    -- A double click approves once.
    CREATE UNIQUE INDEX proposal_reviews_one_approval ON proposal_reviews(proposal_id, reviewer_user_id, draft_version) WHERE verdict = 'approved';

    -- Comments and reviews are the record of the review: never changed afterwards (only a
    -- deleted account's id is let go, as ON DELETE SET NULL asks).
    CREATE FUNCTION proposal_records_append_only() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
      IF (to_jsonb(NEW) - 'author_user_id' - 'reviewer_user_id') IS DISTINCT FROM (to_jsonb(OLD) - 'author_user_id' - 'reviewer_user_id') THEN
        RAISE EXCEPTION '% is append-only', TG_TABLE_NAME;
      END IF;
      RETURN NEW;
    END $$;
    CREATE TRIGGER proposal_comments_no_update BEFORE UPDATE ON proposal_comments
      FOR EACH ROW EXECUTE FUNCTION proposal_records_append_only();
    CREATE TRIGGER proposal_reviews_no_update BEFORE UPDATE ON proposal_reviews
      FOR EACH ROW EXECUTE FUNCTION proposal_records_append_only();
  `);
}

export async function down({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`
    DROP TABLE IF EXISTS proposal_reviews;
    DROP TABLE IF EXISTS proposal_comments;
    DROP FUNCTION IF EXISTS proposal_records_append_only();
    DROP TABLE IF EXISTS proposal_edits;
    DROP TABLE IF EXISTS change_proposals;
    ALTER TABLE organisations DROP COLUMN IF EXISTS approvals_required, DROP COLUMN IF EXISTS changes_through_proposals;
  `);
}
