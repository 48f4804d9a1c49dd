import { DataTypes, Model, type CreationOptional, type ForeignKey, type InferAttributes, type InferCreationAttributes, type Sequelize } from "sequelize";
import type { Device } from "./device.ts";
import type { Organisation } from "./organisation.ts";

/** Where a field check's observations came from: a file uploaded on the device's page, or a program. */
export const FIELD_CHECK_SOURCES = ["upload", "api"] as const;
export type FieldCheckSource = (typeof FIELD_CHECK_SOURCES)[number];

/**
 * One field check of one device: its counts and every row's result as the engine gave it
 * (server/engine/field-checks.ts reads them back through its schema). Never changes once
 * written (a database trigger refuses updates).
 */
export class FieldCheckRecord extends Model<InferAttributes<FieldCheckRecord>, InferCreationAttributes<FieldCheckRecord>> {
  declare id: CreationOptional<string>;
  declare organisationId: ForeignKey<Organisation["id"]>;
  declare deviceId: ForeignKey<Device["id"]>;
  declare source: FieldCheckSource;
  declare fileName: string;
  /** The device's current revision when the check was made (each row names the revision it was predicted with). */
  declare currentRevision: number;
  declare rowsTotal: number;
  declare agreements: number;
  declare differences: number;
  declare invalid: number;
  declare results: unknown[];
  declare createdByUserId: string | null;
  declare createdByEmail: string;
  declare createdAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    FieldCheckRecord.init(
      {
        id: { type: DataTypes.UUID, defaultValue: DataTypes.UUIDV4, primaryKey: true },
        source: { type: DataTypes.STRING(8), allowNull: false },
        fileName: { type: DataTypes.STRING(255), allowNull: false, defaultValue: "" },
        currentRevision: { type: DataTypes.INTEGER, allowNull: false },
        rowsTotal: { type: DataTypes.INTEGER, allowNull: false },
        agreements: { type: DataTypes.INTEGER, allowNull: false },
        differences: { type: DataTypes.INTEGER, allowNull: false },
        invalid: { type: DataTypes.INTEGER, allowNull: false },
        results: { type: DataTypes.JSONB, allowNull: false },
        createdByUserId: { type: DataTypes.UUID, allowNull: true },
        createdByEmail: { type: DataTypes.STRING(254), allowNull: false },
        createdAt: DataTypes.DATE,
      },
      { sequelize, tableName: "field_checks", underscored: true, updatedAt: false },
    );
  }
}
