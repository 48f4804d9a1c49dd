import { DataTypes, Model, type CreationOptional, type ForeignKey, type InferAttributes, type InferCreationAttributes, type Sequelize } from "sequelize";
import type { Outcome } from "#server/engine/index.ts";
import type { DeviceRevision } from "./device-revision.ts";

/**
 * What the engine concluded about a revision for the fleet pages: findings by severity and
 * the worst outcome any source gets on an outside interface. Written after the revision is
 * saved (a background job, or the first reader that needs it); one row per revision.
 */
export class RevisionAnalysisRecord extends Model<InferAttributes<RevisionAnalysisRecord>, InferCreationAttributes<RevisionAnalysisRecord>> {
  declare revisionId: ForeignKey<DeviceRevision["id"]>;
  declare findingsBySeverity: Record<string, number>;
  declare worstOutsideOutcome: Outcome | null;
  declare computedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    RevisionAnalysisRecord.init(
      {
        revisionId: { type: DataTypes.UUID, primaryKey: true },
        findingsBySeverity: { type: DataTypes.JSONB, allowNull: false },
        worstOutsideOutcome: { type: DataTypes.STRING(16), allowNull: true },
        computedAt: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
      },
      { sequelize, tableName: "revision_analyses", underscored: true, timestamps: false },
    );
  }
}
