import { DataTypes, Model, type CreationOptional, type ForeignKey, type InferAttributes, type InferCreationAttributes, type NonAttribute, type Sequelize } from "sequelize";
import type { DeviceRevision } from "./device-revision.ts";
import type { Organisation } from "./organisation.ts";
import type { Site } from "./site.ts";

/** A managed appliance; its model lives in its revisions, the newest being current. */
export class Device extends Model<InferAttributes<Device>, InferCreationAttributes<Device>> {
  declare id: CreationOptional<string>;
  declare organisationId: ForeignKey<Organisation["id"]>;
  declare siteId: ForeignKey<Site["id"]>;
  declare name: string;
  declare currentRevisionNumber: CreationOptional<number>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
  declare site?: NonAttribute<Site>;
  declare revisions?: NonAttribute<DeviceRevision[]>;

  static initModel(sequelize: Sequelize): void {
    Device.init(
      {
        id: { type: DataTypes.UUID, defaultValue: DataTypes.UUIDV4, primaryKey: true },
        name: { type: DataTypes.STRING(100), allowNull: false },
        currentRevisionNumber: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: "devices", underscored: true },
    );
  }
}
