import { DataTypes, Model, type CreationOptional, type ForeignKey, type InferAttributes, type InferCreationAttributes, type Sequelize } from "sequelize";
import type { ChangeProposal } from "./change-proposal.ts";

/** A comment on a proposal, or on one inbound rule of its draft; never changed afterwards. */
export class ProposalComment extends Model<InferAttributes<ProposalComment>, InferCreationAttributes<ProposalComment>> {
  declare id: CreationOptional<string>;
  declare proposalId: ForeignKey<ChangeProposal["id"]>;
  declare ruleId: string | null;
  declare body: string;
  /** The draft version the comment was written on. */
  declare draftVersion: number;
  declare authorUserId: string | null;
  declare authorEmail: string;
  declare createdAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    ProposalComment.init(
      {
        id: { type: DataTypes.UUID, defaultValue: DataTypes.UUIDV4, primaryKey: true },
        ruleId: { type: DataTypes.STRING(63), allowNull: true },
        body: { type: DataTypes.STRING(4000), allowNull: false },
        draftVersion: { type: DataTypes.INTEGER, allowNull: false },
        authorUserId: { type: DataTypes.UUID, allowNull: true },
        authorEmail: { type: DataTypes.STRING(254), allowNull: false },
        createdAt: DataTypes.DATE,
      },
      { sequelize, tableName: "proposal_comments", underscored: true, updatedAt: false },
    );
  }
}
