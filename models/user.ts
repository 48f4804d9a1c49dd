import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from "sequelize";

export class User extends Model<InferAttributes<User>, InferCreationAttributes<User>> {
  declare id: CreationOptional<string>;
  declare email: string;
  declare name: string;
  declare passwordHash: string;
  /** The TOTP secret (RFC 6238), sealed with the server's key (docs/decisions/019); null without a second factor. */
  declare secondFactorSecret: CreationOptional<string | null>;
  declare secondFactorEnabledAt: CreationOptional<Date | null>;
  /** The last time step whose code was accepted: a code counts once (RFC 6238 §5.2). */
  declare secondFactorLastStep: CreationOptional<string | null>;
  /** A secret shown for enrolment, sealed, until a code from it confirms it. */
  declare secondFactorPendingSecret: CreationOptional<string | null>;
  declare secondFactorPendingAt: CreationOptional<Date | null>;
  /** Wrong second-factor codes in a row since `secondFactorFailedSince` (docs/decisions/019, the lockout). */
  declare secondFactorFailures: CreationOptional<number>;
  declare secondFactorFailedSince: CreationOptional<Date | null>;
  /** The second step refuses every code until then. */
  declare secondFactorLockedUntil: CreationOptional<Date | null>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    User.init(
      {
        id: { type: DataTypes.UUID, defaultValue: DataTypes.UUIDV4, primaryKey: true },
        email: { type: DataTypes.STRING(254), allowNull: false, unique: true },
        name: { type: DataTypes.STRING(100), allowNull: false },
        passwordHash: { type: DataTypes.STRING(255), allowNull: false },
        secondFactorSecret: { type: DataTypes.TEXT, allowNull: true },
        secondFactorEnabledAt: { type: DataTypes.DATE, allowNull: true },
        // BIGINT comes back as a string from pg; steps fit a JavaScript number for millennia.
        secondFactorLastStep: { type: DataTypes.BIGINT, allowNull: true },
        secondFactorPendingSecret: { type: DataTypes.TEXT, allowNull: true },
        secondFactorPendingAt: { type: DataTypes.DATE, allowNull: true },
        secondFactorFailures: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
        secondFactorFailedSince: { type: DataTypes.DATE, allowNull: true },
        secondFactorLockedUntil: { type: DataTypes.DATE, allowNull: true },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: "users", underscored: true },
    );
  }
}
