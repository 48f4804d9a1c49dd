// The audit log's words: every action a service records and every kind of target, defined once.
// Pure data, so the services (which write them), the audit page and its CSV export share it;
// labels live in app/utils/audit-words.ts as `Record<AuditAction, string>`, so a new action
// fails typecheck until it is worded.

export const AUDIT_ACTIONS = [
  "organisation.created",
  "organisation.renamed",
  "organisation.change-policy-changed",
  "organisation.second-factor-requirement-changed",
  "site.created",
  "site.updated",
  "site.deleted",
  "device.created",
  "device.revised",
  "device.deleted",
  "device.break-glass-saved",
  "device.saved-past-guard",
  "device.break-glass-deleted",
  "finding.dismissed",
  "finding.restored",
  "finding.dismissal-requested",
  "finding.dismissal-confirmed",
  "finding.dismissal-declined",
  "finding.dismissal-withdrawn",
  "expectation.added",
  "expectation.changed",
  "expectation.deleted",
  "expectation.reordered",
  "expectation.imported",
  "field-check.recorded",
  "proposal.created",
  "proposal.draft-edited",
  "proposal.details-changed",
  "proposal.submitted",
  "proposal.commented",
  "proposal.changes-requested",
  "proposal.approved",
  "proposal.rejected",
  "proposal.withdrawn",
  "proposal.brought-up-to-date",
  "proposal.applied",
  "training.scenario-created",
  "training.scenario-edited",
  "training.scenario-deleted",
  "training.lesson-created",
  "training.lesson-changed",
  "training.lesson-deleted",
  "training.drill-created",
  "training.drill-changed",
  "training.drill-deleted",
  "training.assigned",
  "training.assignment-withdrawn",
  "shared-object.created",
  "shared-object.updated",
  "shared-object.deleted",
  "invitation.sent",
  "invitation.revoked",
  "invitation.accepted",
  "member.role-changed",
  "member.removed",
  "member.trainer-changed",
  "member.second-factor-reset",
  "user.signed-in",
  "user.signed-out-everywhere",
  "user.renamed",
  "user.email-change-requested",
  "user.email-changed",
  "user.password-changed",
  "user.second-factor-enabled",
  "user.second-factor-disabled",
  "user.recovery-codes-regenerated",
  "user.second-factor-locked",
  "password.reset-requested",
  "password.reset-completed",
  "api-token.created",
  "api-token.revoked",
  "api.called",
] as const;
export type AuditAction = (typeof AUDIT_ACTIONS)[number];

export function isAuditAction(value: unknown): value is AuditAction {
  return typeof value === "string" && (AUDIT_ACTIONS as readonly string[]).includes(value);
}

export const AUDIT_TARGET_TYPES = ["organisation", "site", "device", "shared-object", "invitation", "membership", "user", "proposal", "api-token", "training-scenario", "training-lesson", "training-drill", "training-assignment"] as const;
export type AuditTargetType = (typeof AUDIT_TARGET_TYPES)[number];

export function isAuditTargetType(value: unknown): value is AuditTargetType {
  return typeof value === "string" && (AUDIT_TARGET_TYPES as readonly string[]).includes(value);
}
