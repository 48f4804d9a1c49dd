import { DataTypes, Model, type CreationOptional, type ForeignKey, type InferAttributes, type InferCreationAttributes, type NonAttribute, type Sequelize } from "sequelize";
import type { DeviceModel } from "#server/engine/index.ts";
import type { Device } from "./device.ts";
import type { Organisation } from "./organisation.ts";
import { PROPOSAL_STATES, type ProposalState } from "./proposal-states.ts";

/**
 * A change to one device, drafted on a base revision, reviewed and applied as one revision in
 * its change window (docs/decisions/010). The draft is the device's own document, shared
 * objects staying references, as in a revision.
 */
export class ChangeProposal extends Model<InferAttributes<ChangeProposal>, InferCreationAttributes<ChangeProposal>> {
  declare id: CreationOptional<string>;
  declare organisationId: ForeignKey<Organisation["id"]>;
  declare deviceId: ForeignKey<Device["id"]>;
  declare baseRevisionNumber: number;
  declare draftDocument: DeviceModel;
  declare draftVersion: CreationOptional<number>;
  declare title: string;
  declare reason: string;
  declare ticket: string;
  declare windowStart: Date;
  declare windowEnd: Date;
  declare workFrom: string;
  declare authorUserId: string | null;
  declare authorEmail: string;
  /** A proposal made with a service token: that token, its author (docs/decisions/014). */
  declare authorTokenId: CreationOptional<string | null>;
  declare state: CreationOptional<ProposalState>;
  declare guardAcknowledgement: CreationOptional<string>;
  declare submittedAt: Date | null;
  declare appliedRevisionNumber: number | null;
  declare appliedByUserId: string | null;
  declare appliedByEmail: string | null;
  declare appliedAt: Date | null;
  declare outsideWindowReason: CreationOptional<string>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
  declare device?: NonAttribute<Device>;

  static initModel(sequelize: Sequelize): void {
    ChangeProposal.init(
      {
        id: { type: DataTypes.UUID, defaultValue: DataTypes.UUIDV4, primaryKey: true },
        baseRevisionNumber: { type: DataTypes.INTEGER, allowNull: false },
        draftDocument: { type: DataTypes.JSONB, allowNull: false },
        draftVersion: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 1 },
        title: { type: DataTypes.STRING(200), allowNull: false },
        reason: { type: DataTypes.STRING(4000), allowNull: false, defaultValue: "" },
        ticket: { type: DataTypes.STRING(100), allowNull: false, defaultValue: "" },
        windowStart: { type: DataTypes.DATE, allowNull: false },
        windowEnd: { type: DataTypes.DATE, allowNull: false },
        workFrom: { type: DataTypes.STRING(64), allowNull: false, defaultValue: "" },
        authorUserId: { type: DataTypes.UUID, allowNull: true },
        authorEmail: { type: DataTypes.STRING(254), allowNull: false },
        authorTokenId: { type: DataTypes.UUID, allowNull: true },
        state: { type: DataTypes.STRING(20), allowNull: false, defaultValue: "draft", validate: { isIn: [PROPOSAL_STATES] } },
        guardAcknowledgement: { type: DataTypes.STRING(2000), allowNull: false, defaultValue: "" },
        submittedAt: { type: DataTypes.DATE, allowNull: true },
        appliedRevisionNumber: { type: DataTypes.INTEGER, allowNull: true },
        appliedByUserId: { type: DataTypes.UUID, allowNull: true },
        appliedByEmail: { type: DataTypes.STRING(254), allowNull: true },
        appliedAt: { type: DataTypes.DATE, allowNull: true },
        outsideWindowReason: { type: DataTypes.STRING(2000), allowNull: false, defaultValue: "" },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: "change_proposals", underscored: true },
    );
  }
}
