import type { Sequelize } from "sequelize";
import { ApiToken } from "./api-token.ts";
import { AuditEvent } from "./audit-event.ts";
import { ChangeProposal } from "./change-proposal.ts";
import { Device } from "./device.ts";
import { EmailChange } from "./email-change.ts";
import { DeviceExpectation } from "./device-expectation.ts";
import { DeviceRevision } from "./device-revision.ts";
import { FieldCheckRecord } from "./field-check.ts";
import { FindingDismissal } from "./finding-dismissal.ts";
import { Invitation } from "./invitation.ts";
import { Membership } from "./membership.ts";
import { Organisation } from "./organisation.ts";
import { PasswordReset } from "./password-reset.ts";
import { ProposalComment } from "./proposal-comment.ts";
import { ProposalEdit } from "./proposal-edit.ts";
import { ProposalReview } from "./proposal-review.ts";
import { RecoveryCode } from "./recovery-code.ts";
import { RevisionAnalysisRecord } from "./revision-analysis.ts";
import { Session } from "./session.ts";
import { SharedAddressObject } from "./shared-address-object.ts";
import { SignInAttempt } from "./sign-in-attempt.ts";
import { Site } from "./site.ts";
import { User } from "./user.ts";

export type { RevisionSummaryRecord, SharedObjectsSnapshot } from "./device-revision.ts";
export type { ThrottleScope } from "./sign-in-attempt.ts";
export type { ApiTokenKind, ApiTokenScope } from "./api-token.ts";
export { ChangeProposal, ProposalComment, ProposalEdit, ProposalReview };
export { FIELD_CHECK_SOURCES, type FieldCheckSource } from "./field-check.ts";
export { ApiToken, AuditEvent, Device, DeviceExpectation, DeviceRevision, EmailChange, FieldCheckRecord, FindingDismissal, Invitation, Membership, Organisation, PasswordReset, RecoveryCode, RevisionAnalysisRecord, Session, SharedAddressObject, SignInAttempt, Site, User };

/** Registers every model and association on one Sequelize instance. */
export function initModels(sequelize: Sequelize): void {
  for (const model of [User, Organisation, Membership, Site, Session, AuditEvent, ApiToken, SignInAttempt, PasswordReset, EmailChange, Invitation, Device, DeviceRevision, RevisionAnalysisRecord, SharedAddressObject, FindingDismissal, DeviceExpectation, ChangeProposal, ProposalEdit, ProposalComment, ProposalReview, FieldCheckRecord, RecoveryCode]) {
    model.initModel(sequelize);
  }
  Organisation.hasMany(Membership, { foreignKey: "organisationId", as: "memberships" });
  Membership.belongsTo(Organisation, { foreignKey: "organisationId", as: "organisation" });
  User.hasMany(Membership, { foreignKey: "userId", as: "memberships" });
  Membership.belongsTo(User, { foreignKey: "userId", as: "user" });
  Organisation.hasMany(Site, { foreignKey: "organisationId", as: "sites" });
  Site.belongsTo(Organisation, { foreignKey: "organisationId" });
  Session.belongsTo(User, { foreignKey: "userId", as: "user" });
  PasswordReset.belongsTo(User, { foreignKey: "userId" });
  RecoveryCode.belongsTo(User, { foreignKey: "userId" });
  EmailChange.belongsTo(User, { foreignKey: "userId" });
  Invitation.belongsTo(Organisation, { foreignKey: "organisationId", as: "organisation" });
  Invitation.belongsTo(User, { foreignKey: "invitedById", as: "invitedBy" });
  Device.belongsTo(Organisation, { foreignKey: "organisationId" });
  Device.belongsTo(Site, { foreignKey: "siteId", as: "site" });
  Site.hasMany(Device, { foreignKey: "siteId", as: "devices" });
  Device.hasMany(DeviceRevision, { foreignKey: "deviceId", as: "revisions" });
  DeviceRevision.belongsTo(Device, { foreignKey: "deviceId" });
  DeviceRevision.hasOne(RevisionAnalysisRecord, { foreignKey: "revisionId", as: "analysisRecord" });
  RevisionAnalysisRecord.belongsTo(DeviceRevision, { foreignKey: "revisionId" });
  SharedAddressObject.belongsTo(Organisation, { foreignKey: "organisationId" });
  FindingDismissal.belongsTo(Organisation, { foreignKey: "organisationId" });
  FindingDismissal.belongsTo(Device, { foreignKey: "deviceId" });
  Device.hasMany(FindingDismissal, { foreignKey: "deviceId", as: "findingDismissals" });
  DeviceExpectation.belongsTo(Organisation, { foreignKey: "organisationId" });
  DeviceExpectation.belongsTo(Device, { foreignKey: "deviceId" });
  FieldCheckRecord.belongsTo(Organisation, { foreignKey: "organisationId" });
  FieldCheckRecord.belongsTo(Device, { foreignKey: "deviceId" });
  ChangeProposal.belongsTo(Organisation, { foreignKey: "organisationId" });
  ChangeProposal.belongsTo(Device, { foreignKey: "deviceId", as: "device" });
  Device.hasMany(ChangeProposal, { foreignKey: "deviceId", as: "proposals" });
  ChangeProposal.hasMany(ProposalEdit, { foreignKey: "proposalId", as: "edits" });
  ProposalEdit.belongsTo(ChangeProposal, { foreignKey: "proposalId" });
  ChangeProposal.hasMany(ProposalComment, { foreignKey: "proposalId", as: "comments" });
  ProposalComment.belongsTo(ChangeProposal, { foreignKey: "proposalId" });
  ChangeProposal.hasMany(ProposalReview, { foreignKey: "proposalId", as: "reviews" });
  ProposalReview.belongsTo(ChangeProposal, { foreignKey: "proposalId" });
  ApiToken.belongsTo(Organisation, { foreignKey: "organisationId", as: "organisation" });
  ApiToken.belongsTo(User, { foreignKey: "ownerUserId", as: "owner" });
}
