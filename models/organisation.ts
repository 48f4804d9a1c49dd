import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from "sequelize";

export class Organisation extends Model<InferAttributes<Organisation>, InferCreationAttributes<Organisation>> {
  declare id: CreationOptional<string>;
  /** URL segment: /o/:slug/… */
  declare slug: string;
  declare name: string;
  /** Approvals a change proposal needs before it may be applied (1–5). */
  declare approvalsRequired: CreationOptional<number>;
  /** When on, the live editor saves only an admin's break-glass edit; changes go through proposals. */
  declare changesThroughProposals: CreationOptional<boolean>;
  /** When on, every member must have a second factor: members without one are sent to enrol at sign-in. */
  declare requireSecondFactor: CreationOptional<boolean>;
  /** Grows with every change to what the fleet table shows (database triggers; docs/decisions/026). Never set by the app. */
  declare fleetStamp: CreationOptional<string>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    Organisation.init(
      {
        id: { type: DataTypes.UUID, defaultValue: DataTypes.UUIDV4, primaryKey: true },
        slug: { type: DataTypes.STRING(63), allowNull: false, unique: true },
        name: { type: DataTypes.STRING(100), allowNull: false },
        approvalsRequired: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 1 },
        changesThroughProposals: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
        requireSecondFactor: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
        fleetStamp: { type: DataTypes.BIGINT, allowNull: false, defaultValue: "0" },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: "organisations", underscored: true },
    );
  }
}
