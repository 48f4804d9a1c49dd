// The training area's tables (docs/decisions/016): teaching scenarios apart from the fleet,
// lessons on them, and the attempts members make with their predictions.
import { DataTypes, Model, type CreationOptional, type ForeignKey, type InferAttributes, type InferCreationAttributes, type NonAttribute, type Sequelize } from "sequelize";
import type { DeviceModel } from "#server/engine/index.ts";
import { User } from "./user.ts";
import type { Organisation } from "./organisation.ts";

export const SCENARIO_ORIGINS = ["blank", "example", "copy"] as const;
export type ScenarioOrigin = (typeof SCENARIO_ORIGINS)[number];

/** A device model for teaching: one self-contained document, edited in place under a version number. */
export class TrainingScenario extends Model<InferAttributes<TrainingScenario>, InferCreationAttributes<TrainingScenario>> {
  declare id: CreationOptional<string>;
  declare organisationId: ForeignKey<Organisation["id"]>;
  declare title: string;
  /** What it teaches (Markdown). */
  declare summary: string;
  declare origin: ScenarioOrigin;
  declare exampleKey: string | null;
  declare sourceDeviceId: string | null;
  declare sourceRevision: number | null;
  declare anonymised: boolean;
  /** Version 2, normalised by the engine, with no shared objects (every object its own). */
  declare document: DeviceModel;
  declare version: CreationOptional<number>;
  declare createdByUserId: string | null;
  declare createdByEmail: string;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    TrainingScenario.init(
      {
        id: { type: DataTypes.UUID, defaultValue: DataTypes.UUIDV4, primaryKey: true },
        organisationId: { type: DataTypes.UUID, allowNull: false },
        title: { type: DataTypes.STRING(100), allowNull: false },
        summary: { type: DataTypes.STRING(2000), allowNull: false, defaultValue: "" },
        origin: { type: DataTypes.STRING(8), allowNull: false, validate: { isIn: [SCENARIO_ORIGINS] } },
        exampleKey: { type: DataTypes.STRING(63), allowNull: true },
        sourceDeviceId: { type: DataTypes.UUID, allowNull: true },
        sourceRevision: { type: DataTypes.INTEGER, allowNull: true },
        anonymised: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
        document: { type: DataTypes.JSONB, allowNull: false },
        version: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 1 },
        createdByUserId: { type: DataTypes.UUID, allowNull: true },
        createdByEmail: { type: DataTypes.STRING(254), allowNull: false },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: "training_scenarios", underscored: true },
    );
  }
}

/**
 * An ordered list of probes on one scenario with the trainer's notes per layer. `steps` is read
 * through LessonStepsSchema (server/training/lessons.ts), which the engine's types sit above.
 */
export class TrainingLesson extends Model<InferAttributes<TrainingLesson>, InferCreationAttributes<TrainingLesson>> {
  declare id: CreationOptional<string>;
  declare organisationId: ForeignKey<Organisation["id"]>;
  declare scenarioId: ForeignKey<TrainingScenario["id"]>;
  declare title: string;
  /** Markdown. */
  declare introduction: string;
  declare steps: unknown;
  declare version: CreationOptional<number>;
  declare createdByUserId: string | null;
  declare createdByEmail: string;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    TrainingLesson.init(
      {
        id: { type: DataTypes.UUID, defaultValue: DataTypes.UUIDV4, primaryKey: true },
        organisationId: { type: DataTypes.UUID, allowNull: false },
        scenarioId: { type: DataTypes.UUID, allowNull: false },
        title: { type: DataTypes.STRING(100), allowNull: false },
        introduction: { type: DataTypes.STRING(4000), allowNull: false, defaultValue: "" },
        steps: { type: DataTypes.JSONB, allowNull: false, defaultValue: [] },
        version: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 1 },
        createdByUserId: { type: DataTypes.UUID, allowNull: true },
        createdByEmail: { type: DataTypes.STRING(254), allowNull: false },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: "training_lessons", underscored: true },
    );
  }
}

/** What an attempt is of (docs/decisions/016). */
export const ATTEMPT_KINDS = ["lesson", "drill"] as const;
export type AttemptKind = (typeof ATTEMPT_KINDS)[number];

/** One member taking one lesson: the script it is graded against, the running score. */
export class TrainingAttempt extends Model<InferAttributes<TrainingAttempt>, InferCreationAttributes<TrainingAttempt>> {
  declare id: CreationOptional<string>;
  declare organisationId: ForeignKey<Organisation["id"]>;
  declare userId: ForeignKey<User["id"]>;
  declare kind: AttemptKind;
  declare lessonId: string | null;
  declare lessonVersion: number | null;
  declare drillId: CreationOptional<string | null>;
  /** The assignment this attempt answers, if any (late when finished after its due date). */
  declare assignmentId: CreationOptional<string | null>;
  declare title: string;
  /** A Script (server/training/lessons.ts): the model and every step's trace when the attempt began. */
  declare script: unknown;
  declare questionCount: number;
  declare points: CreationOptional<number>;
  declare possible: CreationOptional<number>;
  declare startedAt: CreationOptional<Date>;
  declare finishedAt: Date | null;
  declare lastActivityAt: CreationOptional<Date>;
  declare user?: NonAttribute<User>;

  static initModel(sequelize: Sequelize): void {
    TrainingAttempt.init(
      {
        id: { type: DataTypes.UUID, defaultValue: DataTypes.UUIDV4, primaryKey: true },
        organisationId: { type: DataTypes.UUID, allowNull: false },
        userId: { type: DataTypes.UUID, allowNull: false },
        kind: { type: DataTypes.STRING(16), allowNull: false, validate: { isIn: [ATTEMPT_KINDS] } },
        lessonId: { type: DataTypes.UUID, allowNull: true },
        lessonVersion: { type: DataTypes.INTEGER, allowNull: true },
        drillId: { type: DataTypes.UUID, allowNull: true },
        assignmentId: { type: DataTypes.UUID, allowNull: true },
        title: { type: DataTypes.STRING(100), allowNull: false },
        script: { type: DataTypes.JSONB, allowNull: false },
        questionCount: { type: DataTypes.INTEGER, allowNull: false },
        points: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
        possible: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
        startedAt: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
        finishedAt: { type: DataTypes.DATE, allowNull: true },
        lastActivityAt: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
      },
      { sequelize, tableName: "training_attempts", underscored: true, timestamps: false },
    );
  }
}

/** One answered question of an attempt: the prediction and what the layer did. */
export class TrainingPrediction extends Model<InferAttributes<TrainingPrediction>, InferCreationAttributes<TrainingPrediction>> {
  declare id: CreationOptional<string>;
  declare attemptId: ForeignKey<TrainingAttempt["id"]>;
  declare position: number;
  declare step: number;
  declare layerIndex: number;
  declare layer: string;
  declare verdict: string;
  declare outcome: string | null;
  declare actualVerdict: string;
  declare actualOutcome: string | null;
  declare points: number;
  declare possible: number;
  declare answeredAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    TrainingPrediction.init(
      {
        id: { type: DataTypes.UUID, defaultValue: DataTypes.UUIDV4, primaryKey: true },
        attemptId: { type: DataTypes.UUID, allowNull: false },
        position: { type: DataTypes.INTEGER, allowNull: false },
        step: { type: DataTypes.INTEGER, allowNull: false },
        layerIndex: { type: DataTypes.INTEGER, allowNull: false },
        layer: { type: DataTypes.STRING(16), allowNull: false },
        verdict: { type: DataTypes.STRING(8), allowNull: false },
        outcome: { type: DataTypes.STRING(16), allowNull: true },
        actualVerdict: { type: DataTypes.STRING(8), allowNull: false },
        actualOutcome: { type: DataTypes.STRING(16), allowNull: true },
        points: { type: DataTypes.INTEGER, allowNull: false },
        possible: { type: DataTypes.INTEGER, allowNull: false },
        answeredAt: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
      },
      { sequelize, tableName: "training_predictions", underscored: true, timestamps: false },
    );
  }
}

import { DRILL_KINDS, type DrillKind } from "./training-kinds.ts";
export { DRILL_KINDS, type DrillKind };

/**
 * A graded exercise on a scenario. A predict drill's probes come from its seed and count
 * (regenerated by predictDrill, never stored); spot, fix and order drills keep their goals and
 * the trainer's answer as JSON read through the drill schemas in server/training.
 */
export class TrainingDrill extends Model<InferAttributes<TrainingDrill>, InferCreationAttributes<TrainingDrill>> {
  declare id: CreationOptional<string>;
  declare organisationId: ForeignKey<Organisation["id"]>;
  declare scenarioId: string;
  declare kind: DrillKind;
  declare title: string;
  /** Markdown shown before the drill starts. */
  declare introduction: CreationOptional<string>;
  declare seed: CreationOptional<number>;
  declare count: CreationOptional<number>;
  declare goals: CreationOptional<unknown[]>;
  declare answer: CreationOptional<Record<string, unknown> | null>;
  declare version: CreationOptional<number>;
  declare createdByUserId: string | null;
  declare createdByEmail: string;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
  declare scenario?: NonAttribute<TrainingScenario>;

  static initModel(sequelize: Sequelize): void {
    TrainingDrill.init(
      {
        id: { type: DataTypes.UUID, defaultValue: DataTypes.UUIDV4, primaryKey: true },
        organisationId: { type: DataTypes.UUID, allowNull: false },
        scenarioId: { type: DataTypes.UUID, allowNull: false },
        kind: { type: DataTypes.STRING(16), allowNull: false, validate: { isIn: [DRILL_KINDS] } },
        title: { type: DataTypes.STRING(100), allowNull: false },
        introduction: { type: DataTypes.STRING(4000), allowNull: false, defaultValue: "" },
        seed: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 1 },
        count: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 10 },
        goals: { type: DataTypes.JSONB, allowNull: false, defaultValue: [] },
        answer: { type: DataTypes.JSONB, allowNull: true },
        version: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 1 },
        createdByUserId: { type: DataTypes.UUID, allowNull: true },
        createdByEmail: { type: DataTypes.STRING(254), allowNull: false },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: "training_drills", underscored: true },
    );
  }
}

export const ASSIGNMENT_KINDS = ["lesson", "drill"] as const;
export type AssignmentKind = (typeof ASSIGNMENT_KINDS)[number];

/** A lesson or a drill given to one member, due by a date (answers after it are accepted and marked late). */
export class TrainingAssignment extends Model<InferAttributes<TrainingAssignment>, InferCreationAttributes<TrainingAssignment>> {
  declare id: CreationOptional<string>;
  declare organisationId: ForeignKey<Organisation["id"]>;
  declare kind: AssignmentKind;
  declare lessonId: string | null;
  declare drillId: string | null;
  declare assigneeUserId: string;
  declare assignedByUserId: string | null;
  declare assignedByEmail: string;
  declare dueAt: Date;
  declare note: CreationOptional<string>;
  declare emailedAt: Date | null;
  declare createdAt: CreationOptional<Date>;
  declare assignee?: NonAttribute<User>;

  static initModel(sequelize: Sequelize): void {
    TrainingAssignment.init(
      {
        id: { type: DataTypes.UUID, defaultValue: DataTypes.UUIDV4, primaryKey: true },
        organisationId: { type: DataTypes.UUID, allowNull: false },
        kind: { type: DataTypes.STRING(16), allowNull: false, validate: { isIn: [ASSIGNMENT_KINDS] } },
        lessonId: { type: DataTypes.UUID, allowNull: true },
        drillId: { type: DataTypes.UUID, allowNull: true },
        assigneeUserId: { type: DataTypes.UUID, allowNull: false },
        assignedByUserId: { type: DataTypes.UUID, allowNull: true },
        assignedByEmail: { type: DataTypes.STRING(254), allowNull: false },
        dueAt: { type: DataTypes.DATE, allowNull: false },
        note: { type: DataTypes.STRING(2000), allowNull: false, defaultValue: "" },
        emailedAt: { type: DataTypes.DATE, allowNull: true },
        createdAt: DataTypes.DATE,
      },
      { sequelize, tableName: "training_assignments", underscored: true, updatedAt: false },
    );
  }
}

/** Registers the training models and their associations (called from initModels). */
export function initTrainingModels(sequelize: Sequelize): void {
  for (const model of [TrainingScenario, TrainingLesson, TrainingAttempt, TrainingPrediction, TrainingDrill, TrainingAssignment]) model.initModel(sequelize);
  TrainingLesson.belongsTo(TrainingScenario, { foreignKey: "scenarioId", as: "scenario" });
  TrainingDrill.belongsTo(TrainingScenario, { foreignKey: "scenarioId", as: "scenario" });
  TrainingAttempt.hasMany(TrainingPrediction, { foreignKey: "attemptId", as: "predictions" });
  TrainingAttempt.belongsTo(User, { foreignKey: "userId", as: "user" });
  TrainingAssignment.belongsTo(User, { foreignKey: "assigneeUserId", as: "assignee" });
}
