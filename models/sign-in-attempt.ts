import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from "sequelize";

/** What a throttle row counts: failed sign-ins per account or client address, password-reset requests and sign-ups per e-mail or client address, and second-factor codes per account or client address. */
export const THROTTLE_SCOPES = ["account", "client", "reset-email", "reset-client", "signup-email", "signup-client", "code-account", "code-client"] as const;
export type ThrottleScope = (typeof THROTTLE_SCOPES)[number];

/** Throttled attempts, kept in the database so throttling survives restarts and is shared by every server process. */
export class SignInAttempt extends Model<InferAttributes<SignInAttempt>, InferCreationAttributes<SignInAttempt>> {
  declare id: CreationOptional<string>;
  /** "account" (by e-mail) or "client" (by client address), or a request kind per e-mail or client. */
  declare scope: ThrottleScope;
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
