import { DataTypes, Model, type CreationOptional, type ForeignKey, type InferAttributes, type InferCreationAttributes, type Sequelize } from "sequelize";
import type { Device } from "./device.ts";
import type { Organisation } from "./organisation.ts";

/**
 * One expectation of one device, in the team's order. `definition` is the expectation as the
 * export file writes it; the engine's schema (server/engine/expectations.ts) reads it back.
 */
export class DeviceExpectation extends Model<InferAttributes<DeviceExpectation>, InferCreationAttributes<DeviceExpectation>> {
  declare id: CreationOptional<string>;
  declare organisationId: ForeignKey<Organisation["id"]>;
  declare deviceId: ForeignKey<Device["id"]>;
  /** The team's short name for it, unique per device. */
  declare expectationId: string;
  /** 1-based, unique per device. */
  declare position: number;
  declare kind: "probe" | "bound";
  declare definition: Record<string, unknown>;
  declare createdByUserId: string | null;
  declare createdByEmail: string;
  declare updatedByEmail: string;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    DeviceExpectation.init(
      {
        id: { type: DataTypes.UUID, defaultValue: DataTypes.UUIDV4, primaryKey: true },
        expectationId: { type: DataTypes.STRING(63), allowNull: false },
        position: { type: DataTypes.INTEGER, allowNull: false },
        kind: { type: DataTypes.STRING(8), allowNull: false },
        definition: { type: DataTypes.JSONB, allowNull: false },
        createdByUserId: { type: DataTypes.UUID, allowNull: true },
        createdByEmail: { type: DataTypes.STRING(254), allowNull: false },
        updatedByEmail: { type: DataTypes.STRING(254), allowNull: false },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: "device_expectations", underscored: true },
    );
  }
}
