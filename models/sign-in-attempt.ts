import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from "sequelize";

/** Failed sign-ins, kept in the database so throttling survives restarts. */
export class SignInAttempt extends Model<InferAttributes<SignInAttempt>, InferCreationAttributes<SignInAttempt>> {
  declare id: CreationOptional<string>;
  /** "account" (by e-mail) or "client" (by client address). */
  declare scope: "account" | "client";
  declare subject: string;
  declare createdAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    SignInAttempt.init(
      {
        id: { type: DataTypes.BIGINT, autoIncrement: true, primaryKey: true },
        scope: { type: DataTypes.STRING(16), allowNull: false },
        subject: { type: DataTypes.STRING(254), allowNull: false },
        createdAt: DataTypes.DATE,
      },
      { sequelize, tableName: "sign_in_attempts", underscored: true, updatedAt: false },
    );
  }
}
