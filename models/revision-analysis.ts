import { DataTypes, Model, type CreationOptional, type ForeignKey, type InferAttributes, type InferCreationAttributes, type Sequelize } from "sequelize";
import type { Finding, Outcome } from "#server/engine/index.ts";
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
  /** The engine's findings as it gave them; null on rows written before they were kept (the first reader fills them). */
  declare findings: CreationOptional<Finding[] | null>;
  /** Each finding's key and severity, in the findings' order: what the fleet table counts. */
  declare findingKeys: CreationOptional<Array<[string, string]> | null>;
  declare computedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    RevisionAnalysisRecord.init(
      {
        revisionId: { type: DataTypes.UUID, primaryKey: true },
        findingsBySeverity: { type: DataTypes.JSONB, allowNull: false },
        worstOutsideOutcome: { type: DataTypes.STRING(16), allowNull: true },
        findings: { type: DataTypes.JSONB, allowNull: true },
        findingKeys: { type: DataTypes.JSONB, allowNull: true },
        computedAt: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
      },
      { sequelize, tableName: "revision_analyses", underscored: true, timestamps: false },
    );
  }
}
