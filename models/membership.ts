import { DataTypes, Model, type CreationOptional, type ForeignKey, type InferAttributes, type InferCreationAttributes, type NonAttribute, type Sequelize } from "sequelize";
import { ROLES, type Role } from "./roles.ts";
import type { Organisation } from "./organisation.ts";
import type { User } from "./user.ts";

export class Membership extends Model<InferAttributes<Membership>, InferCreationAttributes<Membership>> {
  declare id: CreationOptional<string>;
  declare organisationId: ForeignKey<Organisation["id"]>;
  declare userId: ForeignKey<User["id"]>;
  declare role: Role;
  /** The trainer capability (docs/decisions/016): manages training whatever the role. */
  declare trainer: CreationOptional<boolean>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
  declare user?: NonAttribute<User>;
  declare organisation?: NonAttribute<Organisation>;

  static initModel(sequelize: Sequelize): void {
    Membership.init(
      {
        id: { type: DataTypes.UUID, defaultValue: DataTypes.UUIDV4, primaryKey: true },
        role: { type: DataTypes.STRING(16), allowNull: false, validate: { isIn: [ROLES] } },
        trainer: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: "memberships", underscored: true },
    );
  }
}
