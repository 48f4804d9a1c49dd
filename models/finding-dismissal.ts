import { DataTypes, Model, type CreationOptional, type ForeignKey, type InferAttributes, type InferCreationAttributes, type Sequelize } from "sequelize";
import type { Device } from "./device.ts";
import type { Organisation } from "./organisation.ts";

/**
 * One finding of one device accepted as a risk, with the reason; it applies to the same
 * finding key on later revisions until restored (restoredAt set). A dismissal that needs
 * confirmation applies only once a second person confirmed it (confirmedAt set). Rows are kept
 * after a restore so the history of accepted risks stays readable.
 */
export class FindingDismissal extends Model<InferAttributes<FindingDismissal>, InferCreationAttributes<FindingDismissal>> {
  declare id: CreationOptional<string>;
  declare organisationId: ForeignKey<Organisation["id"]>;
  declare deviceId: ForeignKey<Device["id"]>;
  /** Code + sorted elements: stable across revisions (see server/engine/finding-keys.ts). */
  declare findingKey: string;
  declare code: string;
  declare elements: string[];
  /** Severity and title when dismissed; the engine may report others later. */
  declare severity: string;
  declare title: string;
  /** The revision the finding was dismissed on. */
  declare revisionNumber: number;
  declare reason: string;
  declare dismissedByUserId: string | null;
  declare dismissedByEmail: string;
  declare dismissedAt: CreationOptional<Date>;
  /** Set for a high or critical finding: a second person must confirm before it takes effect. */
  declare needsConfirmation: CreationOptional<boolean>;
  declare confirmedAt: CreationOptional<Date | null>;
  declare confirmedByUserId: CreationOptional<string | null>;
  declare confirmedByEmail: CreationOptional<string | null>;
  declare restoredAt: Date | null;
  declare restoredByUserId: string | null;
  declare restoredByEmail: string | null;

  static initModel(sequelize: Sequelize): void {
    FindingDismissal.init(
      {
        id: { type: DataTypes.UUID, defaultValue: DataTypes.UUIDV4, primaryKey: true },
        findingKey: { type: DataTypes.STRING(1000), allowNull: false },
        code: { type: DataTypes.STRING(40), allowNull: false },
        elements: { type: DataTypes.JSONB, allowNull: false, defaultValue: [] },
        severity: { type: DataTypes.STRING(8), allowNull: false },
        title: { type: DataTypes.STRING(300), allowNull: false },
        revisionNumber: { type: DataTypes.INTEGER, allowNull: false },
        reason: { type: DataTypes.STRING(500), allowNull: false },
        dismissedByUserId: { type: DataTypes.UUID, allowNull: true },
        dismissedByEmail: { type: DataTypes.STRING(254), allowNull: false },
        dismissedAt: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
        needsConfirmation: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
        confirmedAt: { type: DataTypes.DATE, allowNull: true },
        confirmedByUserId: { type: DataTypes.UUID, allowNull: true },
        confirmedByEmail: { type: DataTypes.STRING(254), allowNull: true },
        restoredAt: { type: DataTypes.DATE, allowNull: true },
        restoredByUserId: { type: DataTypes.UUID, allowNull: true },
        restoredByEmail: { type: DataTypes.STRING(254), allowNull: true },
      },
      { sequelize, tableName: "finding_dismissals", underscored: true, timestamps: false },
    );
  }
}
