import { DataTypes, Model, type CreationOptional, type ForeignKey, type InferAttributes, type InferCreationAttributes, type NonAttribute, type Sequelize } from "sequelize";
import type { DeviceModel, VersionOneModel } from "#server/engine/index.ts";
import type { Device } from "./device.ts";
import type { RevisionAnalysisRecord } from "./revision-analysis.ts";

/** Shared organisation objects as they were when the revision was saved. */
export type SharedObjectsSnapshot = {
  addresses: Array<{ name: string; entries: string[] }>;
  addressGroups: Array<{ name: string; members: string[] }>;
};

/**
 * Element counts, taken when the revision is saved. Revisions saved before the analysis moved
 * to its own table (revision_analyses) also carry the two analysis fields; nothing reads them.
 */
export type RevisionSummaryRecord = {
  counts: Record<string, number>;
  findingsBySeverity?: Record<string, number>;
  worstOutsideOutcome?: string | null;
};

/** One immutable saved state of a device's model document. */
export class DeviceRevision extends Model<InferAttributes<DeviceRevision>, InferCreationAttributes<DeviceRevision>> {
  declare id: CreationOptional<string>;
  declare deviceId: ForeignKey<Device["id"]>;
  declare number: number;
  /**
   * The device's own model document, normalised by the engine (names of shared objects stay
   * references). Revisions saved before version 2 hold version 1; the repository upgrades them on read.
   */
  declare document: DeviceModel | VersionOneModel;
  declare sharedObjects: SharedObjectsSnapshot;
  declare summary: RevisionSummaryRecord;
  declare message: string;
  declare authorUserId: string | null;
  declare authorEmail: string;
  declare createdAt: CreationOptional<Date>;
  declare analysisRecord?: NonAttribute<RevisionAnalysisRecord | null>;

  static initModel(sequelize: Sequelize): void {
    DeviceRevision.init(
      {
        id: { type: DataTypes.UUID, defaultValue: DataTypes.UUIDV4, primaryKey: true },
        number: { type: DataTypes.INTEGER, allowNull: false },
        document: { type: DataTypes.JSONB, allowNull: false },
        sharedObjects: { type: DataTypes.JSONB, allowNull: false },
        summary: { type: DataTypes.JSONB, allowNull: false },
        message: { type: DataTypes.STRING(500), allowNull: false, defaultValue: "" },
        authorUserId: { type: DataTypes.UUID, allowNull: true },
        authorEmail: { type: DataTypes.STRING(254), allowNull: false, defaultValue: "" },
        createdAt: DataTypes.DATE,
      },
      { sequelize, tableName: "device_revisions", underscored: true, updatedAt: false },
    );
  }
}
