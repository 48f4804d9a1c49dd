import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from "sequelize";

/** One line of the append-only audit log; the database refuses updates and deletes. */
export class AuditEvent extends Model<InferAttributes<AuditEvent>, InferCreationAttributes<AuditEvent>> {
  declare id: CreationOptional<string>;
  declare organisationId: string | null;
  declare actorUserId: string | null;
  declare actorEmail: string;
  declare action: string;
  declare targetType: string;
  declare targetId: string;
  declare changes: Record<string, unknown>;
  declare clientAddress: string;
  /** The API token the change was made through, if any (docs/decisions/014). */
  declare apiTokenId: CreationOptional<string | null>;
  declare apiTokenName: CreationOptional<string>;
  declare createdAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    AuditEvent.init(
      {
        id: { type: DataTypes.BIGINT, autoIncrement: true, primaryKey: true },
        organisationId: { type: DataTypes.UUID, allowNull: true },
        actorUserId: { type: DataTypes.UUID, allowNull: true },
        actorEmail: { type: DataTypes.STRING(254), allowNull: false, defaultValue: "" },
        action: { type: DataTypes.STRING(64), allowNull: false },
        targetType: { type: DataTypes.STRING(32), allowNull: false },
        targetId: { type: DataTypes.STRING(64), allowNull: false, defaultValue: "" },
        changes: { type: DataTypes.JSONB, allowNull: false, defaultValue: {} },
        clientAddress: { type: DataTypes.STRING(64), allowNull: false, defaultValue: "" },
        apiTokenId: { type: DataTypes.UUID, allowNull: true },
        apiTokenName: { type: DataTypes.STRING(100), allowNull: false, defaultValue: "" },
        createdAt: DataTypes.DATE,
      },
      { sequelize, tableName: "audit_events", underscored: true, updatedAt: false },
    );
  }
}
