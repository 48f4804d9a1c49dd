import { DataTypes, Model, type CreationOptional, type ForeignKey, type InferAttributes, type InferCreationAttributes, type Sequelize } from "sequelize";
import type { ChangeProposal } from "./change-proposal.ts";
import { REVIEW_VERDICTS, type ReviewVerdict } from "./proposal-states.ts";
import { ROLES, type Role } from "./roles.ts";

/**
 * A reviewer's verdict on one draft version of a proposal: approved, changes requested or
 * rejected, with the reason; never changed afterwards. An approval counts only while the draft
 * is still at the version it names.
 */
export class ProposalReview extends Model<InferAttributes<ProposalReview>, InferCreationAttributes<ProposalReview>> {
  declare id: CreationOptional<string>;
  declare proposalId: ForeignKey<ChangeProposal["id"]>;
  declare reviewerUserId: string | null;
  declare reviewerEmail: string;
  /** The reviewer's role when they gave the verdict. */
  declare reviewerRole: Role;
  declare verdict: ReviewVerdict;
  declare reason: string;
  /** An admin's or owner's reason for approving while the lockout guard blocks. */
  declare guardOverrideReason: string;
  declare draftVersion: number;
  declare createdAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    ProposalReview.init(
      {
        id: { type: DataTypes.UUID, defaultValue: DataTypes.UUIDV4, primaryKey: true },
        reviewerUserId: { type: DataTypes.UUID, allowNull: true },
        reviewerEmail: { type: DataTypes.STRING(254), allowNull: false },
        reviewerRole: { type: DataTypes.STRING(16), allowNull: false, validate: { isIn: [ROLES] } },
        verdict: { type: DataTypes.STRING(20), allowNull: false, validate: { isIn: [REVIEW_VERDICTS] } },
        reason: { type: DataTypes.STRING(2000), allowNull: false, defaultValue: "" },
        guardOverrideReason: { type: DataTypes.STRING(2000), allowNull: false, defaultValue: "" },
        draftVersion: { type: DataTypes.INTEGER, allowNull: false },
        createdAt: DataTypes.DATE,
      },
      { sequelize, tableName: "proposal_reviews", underscored: true, updatedAt: false },
    );
  }
}
