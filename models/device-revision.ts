import { DataTypes, Model, type CreationOptional, type ForeignKey, type InferAttributes, type InferCreationAttributes, type Sequelize } from "sequelize";
import type { DeviceModel } from "#server/engine/index.ts";
import type { Device } from "./device.ts";

/** Shared organisation objects as they were when the revision was saved. */
export type SharedObjectsSnapshot = {
  addresses: Array<{ name: string; entries: string[] }>;
  addressGroups: Array<{ name: string; members: string[] }>;
};

/** What the fleet table shows, computed by the engine when the revision is saved. */
export type RevisionSummaryRecord = {
  findingsBySeverity: Record<string, number>;
  worstOutsideOutcome: string | null;
  counts: Record<string, number>;
};

/** One immutable saved state of a device's model document. */
export class DeviceRevision extends Model<InferAttributes<DeviceRevision>, InferCreationAttributes<DeviceRevision>> {
  declare id: CreationOptional<string>;
  declare deviceId: ForeignKey<Device["id"]>;
  declare number: number;
  /** The device's own model document, normalised by the engine (names of shared objects stay references). */
  declare document: DeviceModel;
  declare sharedObjects: SharedObjectsSnapshot;
  declare summary: RevisionSummaryRecord;
  declare message: string;
  declare authorUserId: string | null;
  declare authorEmail: string;
  declare createdAt: CreationOptional<Date>;

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
