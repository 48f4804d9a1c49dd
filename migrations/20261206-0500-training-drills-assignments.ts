import type { MigrationContext } from "#server/db/migrator.ts";

// Drills and assignments (docs/decisions/016, "Consequences"). A drill is a graded exercise on a
// scenario: its kind, its seed and count (a predict drill's probes are regenerated from them, not
// stored), and for the kinds that need them its goals and the trainer's answer (JSON read through
// the drill schemas in server/training). An assignment gives a lesson or a drill to one member
// with a due date. Attempts stay the one record of "someone took something": they gain the drill
// and the assignment they answer, so progress reads attempts alone.
export async function up({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`
    CREATE TABLE training_drills (
      id uuid PRIMARY KEY,
      organisation_id uuid NOT NULL REFERENCES organisations(id) ON DELETE CASCADE,
      scenario_id uuid NOT NULL REFERENCES training_scenarios(id) ON DELETE RESTRICT,
      kind varchar(16) NOT NULL CHECK (kind IN ('predict', 'spot', 'fix', 'order')),
      title varchar(100) NOT NULL CHECK (length(btrim(title)) > 0),
      introduction varchar(4000) NOT NULL DEFAULT '',
      seed integer NOT NULL DEFAULT 1,
      count integer NOT NULL DEFAULT 10 CHECK (count BETWEEN 1 AND 50),
      goals jsonb NOT NULL DEFAULT '[]' CHECK (jsonb_typeof(goals) = 'array'),
      answer jsonb,
      version integer NOT NULL DEFAULT 1 CHECK (version >= 1),
      created_by_user_id uuid REFERENCES users(id) ON DELETE SET NULL,
      created_by_email varchar(254) NOT NULL,
      created_at timestamptz NOT NULL DEFAULT now(),
      updated_at timestamptz NOT NULL DEFAULT now(),
      CONSTRAINT training_drills_title_per_organisation UNIQUE (organisation_id, title)
    );
    CREATE INDEX training_drills_scenario ON training_drills(scenario_id);

    CREATE TABLE training_assignments (
      id uuid PRIMARY KEY,
      organisation_id uuid NOT NULL REFERENCES organisations(id) ON DELETE CASCADE,
      kind varchar(16) NOT NULL CHECK (kind IN ('lesson', 'drill')),
      lesson_id uuid REFERENCES training_lessons(id) ON DELETE CASCADE,
      drill_id uuid REFERENCES training_drills(id) ON DELETE CASCADE,
      assignee_user_id uuid NOT NULL REFERENCES users(id) ON DELETE CASCADE,
      assigned_by_user_id uuid REFERENCES users(id) ON DELETE SET NULL,
      assigned_by_email varchar(254) NOT NULL,
      due_at timestamptz NOT NULL,
      note varchar(2000) NOT NULL DEFAULT '',
      emailed_at timestamptz,
      created_at timestamptz NOT NULL DEFAULT now(),
      CONSTRAINT training_assignments_target CHECK ((kind = 'lesson' AND lesson_id IS NOT NULL AND drill_id IS NULL) OR (kind = 'drill' AND drill_id IS NOT NULL AND lesson_id IS NULL))
    );
    CREATE INDEX training_assignments_assignee ON training_assignments(organisation_id, assignee_user_id);

    ALTER TABLE training_attempts DROP CONSTRAINT IF EXISTS training_attempts_kind_check;
    ALTER TABLE training_attempts ADD CONSTRAINT training_attempts_kind_check CHECK (kind IN ('lesson', 'drill'));
    ALTER TABLE training_attempts ALTER COLUMN lesson_version DROP NOT NULL;
    ALTER TABLE training_attempts ADD COLUMN drill_id uuid REFERENCES training_drills(id) ON DELETE CASCADE;
    ALTER TABLE training_attempts ADD COLUMN assignment_id uuid REFERENCES training_assignments(id) ON DELETE SET NULL;
    ALTER TABLE training_attempts ADD CONSTRAINT training_attempts_drill CHECK (kind <> 'drill' OR drill_id IS NOT NULL);
    CREATE INDEX training_attempts_drill ON training_attempts(drill_id);
    CREATE INDEX training_attempts_assignment ON training_attempts(assignment_id);
  `);
}

export async function down({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`
    DELETE FROM training_attempts WHERE kind = 'drill';
    ALTER TABLE training_attempts DROP CONSTRAINT IF EXISTS training_attempts_drill;
    ALTER TABLE training_attempts DROP COLUMN IF EXISTS assignment_id;
    ALTER TABLE training_attempts DROP COLUMN IF EXISTS drill_id;
    ALTER TABLE training_attempts ALTER COLUMN lesson_version SET NOT NULL;
    ALTER TABLE training_attempts DROP CONSTRAINT IF EXISTS training_attempts_kind_check;
    ALTER TABLE training_attempts ADD CONSTRAINT training_attempts_kind_check CHECK (kind IN ('lesson'));
    DROP TABLE IF EXISTS training_assignments, training_drills;
  `);
}
