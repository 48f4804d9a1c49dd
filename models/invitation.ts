import { DataTypes, Model, type CreationOptional, type ForeignKey, type InferAttributes, type InferCreationAttributes, type NonAttribute, type Sequelize } from "sequelize";
import { ROLES, type Role } from "./roles.ts";
import type { Organisation } from "./organisation.ts";
import type { User } from "./user.ts";

/** An e-mailed invitation to join an organisation with a role; only the token's hash is stored. */
export class Invitation extends Model<InferAttributes<Invitation>, InferCreationAttributes<Invitation>> {
  declare id: CreationOptional<string>;
  declare organisationId: ForeignKey<Organisation["id"]>;
  declare invitedById: ForeignKey<User["id"]>;
  declare email: string;
  declare role: Role;
  declare tokenHash: string;
  declare expiresAt: Date;
  declare acceptedAt: Date | null;
  declare revokedAt: Date | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
  declare organisation?: NonAttribute<Organisation>;

  static initModel(sequelize: Sequelize): void {
    Invitation.init(
      {
        id: { type: DataTypes.UUID, defaultValue: DataTypes.UUIDV4, primaryKey: true },
        email: { type: DataTypes.STRING(254), allowNull: false },
        role: { type: DataTypes.STRING(16), allowNull: false, validate: { isIn: [ROLES] } },
        tokenHash: { type: DataTypes.STRING(64), allowNull: false, unique: true },
        expiresAt: { type: DataTypes.DATE, allowNull: false },
        acceptedAt: { type: DataTypes.DATE, allowNull: true },
        revokedAt: { type: DataTypes.DATE, allowNull: true },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: "invitations", underscored: true },
    );
  }
}
