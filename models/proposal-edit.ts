import { DataTypes, Model, type CreationOptional, type ForeignKey, type InferAttributes, type InferCreationAttributes, type Sequelize } from "sequelize";
import type { ChangeProposal } from "./change-proposal.ts";

/**
 * One element edit of a proposal's draft, in order (server/workspace/element-edits.ts gives the
 * shape of `edit`), kept so the draft can be re-applied on a newer revision.
 */
export class ProposalEdit extends Model<InferAttributes<ProposalEdit>, InferCreationAttributes<ProposalEdit>> {
  declare id: CreationOptional<string>;
  declare proposalId: ForeignKey<ChangeProposal["id"]>;
  declare position: number;
  /** An ElementEdit; read it back with parseElementEdits. */
  declare edit: unknown;
  declare message: string;
  declare authorUserId: string | null;
  declare authorEmail: string;
  declare createdAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    ProposalEdit.init(
      {
        id: { type: DataTypes.UUID, defaultValue: DataTypes.UUIDV4, primaryKey: true },
        position: { type: DataTypes.INTEGER, allowNull: false },
        edit: { type: DataTypes.JSONB, allowNull: false },
        message: { type: DataTypes.STRING(500), allowNull: false },
        authorUserId: { type: DataTypes.UUID, allowNull: true },
        authorEmail: { type: DataTypes.STRING(254), allowNull: false },
        createdAt: DataTypes.DATE,
      },
      { sequelize, tableName: "proposal_edits", underscored: true, updatedAt: false },
    );
  }
}
