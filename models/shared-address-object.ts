import { DataTypes, Model, type CreationOptional, type ForeignKey, type InferAttributes, type InferCreationAttributes, type Sequelize } from "sequelize";
import type { Organisation } from "./organisation.ts";

/** What a shared object holds: address entries, or the names of its members. */
export const SHARED_OBJECT_KINDS = ["address", "group"] as const;
export type SharedObjectKind = (typeof SHARED_OBJECT_KINDS)[number];

/** An organisation-level address object or group that any device of it may reference by name. */
export class SharedAddressObject extends Model<InferAttributes<SharedAddressObject>, InferCreationAttributes<SharedAddressObject>> {
  declare id: CreationOptional<string>;
  declare organisationId: ForeignKey<Organisation["id"]>;
  declare kind: SharedObjectKind;
  declare name: string;
  /** Address entries of an object, or member names of a group. */
  declare items: string[];
  declare description: string;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    SharedAddressObject.init(
      {
        id: { type: DataTypes.UUID, defaultValue: DataTypes.UUIDV4, primaryKey: true },
        kind: { type: DataTypes.STRING(8), allowNull: false },
        name: { type: DataTypes.STRING(63), allowNull: false },
        items: { type: DataTypes.JSONB, allowNull: false, defaultValue: [] },
        description: { type: DataTypes.STRING(300), allowNull: false, defaultValue: "" },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: "shared_address_objects", underscored: true },
    );
  }
}
