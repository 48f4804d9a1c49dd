import { randomUUID } from "node:crypto";
import type { MigrationContext } from "#server/db/migrator.ts";
import { TRAINING_EXAMPLES } from "#server/training/examples.ts";
import { stepProbe } from "#server/training/lessons.ts";
import { EMPTY_LIBRARY, validateDocument } from "#server/workspace/index.ts";
import { DEMO_ORGANISATION, DEMO_USERS } from "./demo-data.ts";

// The demo's training (docs/decisions/016): the demo engineer trains, and one teaching scenario
// from the rule-order example carries a lesson with the example's probes and notes, so the
// Training page has something to take on first start.
const EXAMPLE = "rule-order";
const LESSON_TITLE = "Rule order: who gets in first";

export async function up({ context: queryInterface }: MigrationContext): Promise<void> {
  const sequelize = queryInterface.sequelize;
  const [organisations] = (await sequelize.query(`SELECT id FROM organisations WHERE slug = '${DEMO_ORGANISATION.slug}'`)) as [Array<{ id: string }>, unknown];
  const organisationId = organisations[0]?.id;
  if (!organisationId) throw new Error("the demo organisation is missing; run the first demo seed");
  const trainer = DEMO_USERS.find((user) => user.role === "engineer")!;
  const [users] = (await sequelize.query(`SELECT id FROM users WHERE email = '${trainer.email}'`)) as [Array<{ id: string }>, unknown];
  const trainerId = users[0]?.id ?? null;
  await sequelize.query(`UPDATE memberships SET trainer = true WHERE organisation_id = '${organisationId}' AND user_id = '${trainerId}'`);

  const example = TRAINING_EXAMPLES.find((entry) => entry.key === EXAMPLE)!;
  const validated = validateDocument(example.document, EMPTY_LIBRARY);
  if (!validated.ok) throw new Error(`the ${EXAMPLE} example does not validate`);
  const now = new Date();
  const scenarioId = randomUUID();
  await queryInterface.bulkInsert("training_scenarios", [
    { id: scenarioId, organisation_id: organisationId, title: example.title, summary: example.summary, origin: "example", example_key: example.key, anonymised: false, document: JSON.stringify(validated.document), version: 1, created_by_user_id: trainerId, created_by_email: trainer.email, created_at: now, updated_at: now },
  ]);
  await queryInterface.bulkInsert("training_lessons", [
    {
      id: randomUUID(),
      organisation_id: organisationId,
      scenario_id: scenarioId,
      title: LESSON_TITLE,
      introduction: "Marlowe Freight's operations centre cannot reach its own gateway. Predict each layer, then see which rule decides — and why its position matters.",
      steps: JSON.stringify(example.probes.map((step) => ({ probe: stepProbe(step.probe), notes: step.notes }))),
      version: 1,
      created_by_user_id: trainerId,
      created_by_email: trainer.email,
      created_at: now,
      updated_at: now,
    },
  ]);
}

export async function down({ context: queryInterface }: MigrationContext): Promise<void> {
  const demo = `(SELECT id FROM organisations WHERE slug = '${DEMO_ORGANISATION.slug}')`;
  await queryInterface.sequelize.query(`DELETE FROM training_lessons WHERE organisation_id IN ${demo}; DELETE FROM training_scenarios WHERE organisation_id IN ${demo}; UPDATE memberships SET trainer = false WHERE organisation_id IN ${demo};`);
}
