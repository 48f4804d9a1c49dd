import type { MigrationContext } from "#server/db/migrator.ts";

// Lessons and attempts (docs/decisions/016). A lesson is an ordered list of probes on one
// scenario with the trainer's notes per layer (`steps`, read through LessonStepsSchema in
// server/training/lessons.ts). An attempt is one member taking one lesson: it snapshots the
// scenario's model and every probe's trace when it begins (`script`), so editing the lesson or
// the scenario later never changes what a started attempt is graded against. Its predictions
// are rows, one per layer answered, in order.
//
// `training_attempts.kind` says what was taken; drills and assignments (later work) add their
// kind, a `drill_id` and an `assignment_id` beside `lesson_id`, so progress reads one table.
export async function up({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`
    CREATE TABLE training_lessons (
      id uuid PRIMARY KEY,
      organisation_id uuid NOT NULL REFERENCES organisations(id) ON DELETE CASCADE,
      -- A scenario in use by a lesson is not deleted (the service says which lessons).
      scenario_id uuid NOT NULL REFERENCES training_scenarios(id) ON DELETE RESTRICT,
      title varchar(100) NOT NULL CHECK (length(btrim(title)) > 0),
      introduction varchar(4000) NOT NULL DEFAULT '',
      steps jsonb NOT NULL DEFAULT '[]' CHECK (jsonb_typeof(steps) = 'array'),
      version integer NOT NULL DEFAULT 1 CHECK (version >= 1),
      created_by_user_id uuid REFERENCES users(id) ON DELETE SET NULL,
      created_by_email varchar(254) NOT NULL,
      created_at timestamptz NOT NULL DEFAULT now(),
      updated_at timestamptz NOT NULL DEFAULT now(),
      CONSTRAINT training_lessons_title_per_organisation UNIQUE (organisation_id, title)
    );
    CREATE INDEX training_lessons_scenario ON training_lessons(scenario_id);

    CREATE TABLE training_attempts (
      id uuid PRIMARY KEY,
      organisation_id uuid NOT NULL REFERENCES organisations(id) ON DELETE CASCADE,
      user_id uuid NOT NULL REFERENCES users(id) ON DELETE CASCADE,
      kind varchar(16) NOT NULL CHECK (kind IN ('lesson')),
      lesson_id uuid REFERENCES training_lessons(id) ON DELETE CASCADE,
      lesson_version integer NOT NULL,
      title varchar(100) NOT NULL,
      script jsonb NOT NULL,
      question_count integer NOT NULL CHECK (question_count >= 1),
      points integer NOT NULL DEFAULT 0 CHECK (points >= 0),
      possible integer NOT NULL DEFAULT 0 CHECK (possible >= points),
      started_at timestamptz NOT NULL DEFAULT now(),
      finished_at timestamptz,
      last_activity_at timestamptz NOT NULL DEFAULT now(),
      CONSTRAINT training_attempts_lesson CHECK (kind <> 'lesson' OR lesson_id IS NOT NULL)
    );
    CREATE INDEX training_attempts_user ON training_attempts(organisation_id, user_id);
    CREATE INDEX training_attempts_lesson ON training_attempts(lesson_id);

    CREATE TABLE training_predictions (
      id uuid PRIMARY KEY,
      attempt_id uuid NOT NULL REFERENCES training_attempts(id) ON DELETE CASCADE,
      -- Answers come in order: the n-th prediction of an attempt is its n-th question.
      position integer NOT NULL CHECK (position >= 1),
      step integer NOT NULL CHECK (step >= 0),
      layer_index integer NOT NULL CHECK (layer_index >= 0),
      layer varchar(16) NOT NULL,
      verdict varchar(8) NOT NULL CHECK (verdict IN ('pass', 'stop')),
      outcome varchar(16),
      actual_verdict varchar(8) NOT NULL CHECK (actual_verdict IN ('pass', 'stop')),
      actual_outcome varchar(16),
      points integer NOT NULL CHECK (points >= 0),
      possible integer NOT NULL CHECK (possible >= points),
      answered_at timestamptz NOT NULL DEFAULT now(),
      CONSTRAINT training_predictions_in_order UNIQUE (attempt_id, position),
      CONSTRAINT training_predictions_once UNIQUE (attempt_id, step, layer_index)
    );
  `);
}

export async function down({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`DROP TABLE IF EXISTS training_predictions, training_attempts, training_lessons;`);
}
