// The training area's tables (docs/decisions/016): teaching scenarios apart from the fleet.
import { DataTypes, Model, type CreationOptional, type ForeignKey, type InferAttributes, type InferCreationAttributes, type Sequelize } from "sequelize";
import type { DeviceModel } from "#server/engine/index.ts";
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

/** Registers the training models and their associations (called from initModels). */
export function initTrainingModels(sequelize: Sequelize): void {
  TrainingScenario.initModel(sequelize);
}
