import { DataTypes, Model, type CreationOptional, type ForeignKey, type InferAttributes, type InferCreationAttributes, type NonAttribute, type Sequelize } from "sequelize";
import type { User } from "./user.ts";

/** A server-side sign-in session. The cookie carries a random token; only its hash is stored. */
export class Session extends Model<InferAttributes<Session>, InferCreationAttributes<Session>> {
  declare id: CreationOptional<string>;
  declare tokenHash: string;
  declare userId: ForeignKey<User["id"]>;
  declare expiresAt: Date;
  declare lastSeenAt: Date;
  declare userAgent: string;
  declare clientAddress: string;
  /** Made by the password step of a user with a second factor: not signed in until the code step passes. */
  declare secondFactorPending: CreationOptional<boolean>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
  declare user?: NonAttribute<User>;

  static initModel(sequelize: Sequelize): void {
    Session.init(
      {
        id: { type: DataTypes.UUID, defaultValue: DataTypes.UUIDV4, primaryKey: true },
        tokenHash: { type: DataTypes.STRING(64), allowNull: false, unique: true },
        expiresAt: { type: DataTypes.DATE, allowNull: false },
        lastSeenAt: { type: DataTypes.DATE, allowNull: false },
        userAgent: { type: DataTypes.STRING(300), allowNull: false, defaultValue: "" },
        clientAddress: { type: DataTypes.STRING(64), allowNull: false, defaultValue: "" },
        secondFactorPending: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: "sessions", underscored: true },
    );
  }
}
