import { DataTypes, Model, type CreationOptional, type ForeignKey, type InferAttributes, type InferCreationAttributes, type Sequelize } from "sequelize";
import type { User } from "./user.ts";

/** A pending change of a user's e-mail, confirmed by a single-use link to the new address; only the token's hash is stored. */
export class EmailChange extends Model<InferAttributes<EmailChange>, InferCreationAttributes<EmailChange>> {
  declare id: CreationOptional<string>;
  declare userId: ForeignKey<User["id"]>;
  declare newEmail: string;
  declare tokenHash: string;
  declare expiresAt: Date;
  declare usedAt: Date | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    EmailChange.init(
      {
        id: { type: DataTypes.UUID, defaultValue: DataTypes.UUIDV4, primaryKey: true },
        newEmail: { type: DataTypes.STRING(254), allowNull: false },
        tokenHash: { type: DataTypes.STRING(64), allowNull: false, unique: true },
        expiresAt: { type: DataTypes.DATE, allowNull: false },
        usedAt: { type: DataTypes.DATE, allowNull: true },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: "email_changes", underscored: true },
    );
  }
}
