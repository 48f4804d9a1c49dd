import type { Sequelize } from "sequelize";
import { AuditEvent } from "./audit-event.ts";
import { Invitation } from "./invitation.ts";
import { Membership } from "./membership.ts";
import { Organisation } from "./organisation.ts";
import { PasswordReset } from "./password-reset.ts";
import { Session } from "./session.ts";
import { SignInAttempt } from "./sign-in-attempt.ts";
import { Site } from "./site.ts";
import { User } from "./user.ts";

export { AuditEvent, Invitation, Membership, Organisation, PasswordReset, Session, SignInAttempt, Site, User };

/** Registers every model and association on one Sequelize instance. */
export function initModels(sequelize: Sequelize): void {
  for (const model of [User, Organisation, Membership, Site, Session, AuditEvent, SignInAttempt, PasswordReset, Invitation]) {
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
  Invitation.belongsTo(Organisation, { foreignKey: "organisationId", as: "organisation" });
  Invitation.belongsTo(User, { foreignKey: "invitedById", as: "invitedBy" });
}
