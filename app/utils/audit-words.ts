// The audit log in words: a label for each action and target type, one sentence per entry and
// its recorded values as readable lines. Shared by the audit page and its CSV export. Pure.
import { isAuditAction, isAuditTargetType, type AuditAction, type AuditTargetType } from "#models/audit-actions";
import { formatDay, formatInstant, plural } from "#server/engine/format";

export const AUDIT_ACTION_LABELS: Record<AuditAction, string> = {
  "organisation.created": "Organisation created",
  "organisation.renamed": "Organisation renamed",
  "organisation.change-policy-changed": "Change policy changed",
  "organisation.second-factor-requirement-changed": "Second-factor requirement changed",
  "site.created": "Site added",
  "site.updated": "Site changed",
  "site.deleted": "Site deleted",
  "device.created": "Device created",
  "device.revised": "New revision saved",
  "device.deleted": "Device deleted",
  "device.break-glass-saved": "Break-glass save",
  "device.saved-past-guard": "Saved past the lockout guard",
  "device.break-glass-deleted": "Break-glass deletion",
  "finding.dismissed": "Finding dismissed",
  "finding.restored": "Finding restored",
  "finding.dismissal-requested": "Dismissal asked for",
  "finding.dismissal-confirmed": "Dismissal confirmed",
  "finding.dismissal-declined": "Dismissal declined",
  "finding.dismissal-withdrawn": "Dismissal withdrawn",
  "expectation.added": "Expectation added",
  "expectation.changed": "Expectation changed",
  "expectation.deleted": "Expectation deleted",
  "expectation.reordered": "Expectation moved",
  "expectation.imported": "Expectations imported",
  "field-check.recorded": "Field check recorded",
  "proposal.created": "Proposal created",
  "proposal.draft-edited": "Proposal draft edited",
  "proposal.details-changed": "Proposal details changed",
  "proposal.submitted": "Proposal submitted for review",
  "proposal.commented": "Proposal comment",
  "proposal.changes-requested": "Changes requested",
  "proposal.approved": "Proposal approved",
  "proposal.rejected": "Proposal rejected",
  "proposal.withdrawn": "Proposal withdrawn",
  "proposal.brought-up-to-date": "Proposal brought up to date",
  "proposal.applied": "Proposal applied",
  "training.scenario-created": "Teaching scenario created",
  "training.scenario-edited": "Teaching scenario edited",
  "training.scenario-deleted": "Teaching scenario deleted",
  "training.lesson-created": "Lesson created",
  "training.lesson-changed": "Lesson changed",
  "training.lesson-deleted": "Lesson deleted",
  "training.drill-created": "Drill created",
  "training.drill-changed": "Drill changed",
  "training.drill-deleted": "Drill deleted",
  "training.assigned": "Training assigned",
  "training.assignment-withdrawn": "Assignment withdrawn",
  "shared-object.created": "Shared object created",
  "shared-object.updated": "Shared object changed",
  "shared-object.deleted": "Shared object deleted",
  "invitation.sent": "Invitation sent",
  "invitation.revoked": "Invitation revoked",
  "invitation.accepted": "Invitation accepted",
  "member.role-changed": "Role changed",
  "member.removed": "Member removed",
  "member.trainer-changed": "Trainer capability changed",
  "member.second-factor-reset": "Second factor reset",
  "user.signed-in": "Signed in",
  "user.signed-out-everywhere": "Signed out everywhere",
  "user.renamed": "Name changed",
  "user.email-change-requested": "E-mail change requested",
  "user.email-changed": "E-mail changed",
  "user.password-changed": "Password changed",
  "user.second-factor-enabled": "Second factor turned on",
  "user.second-factor-disabled": "Second factor turned off",
  "user.recovery-codes-regenerated": "Recovery codes replaced",
  "user.second-factor-locked": "Second step locked",
  "password.reset-requested": "Password reset requested",
  "password.reset-completed": "Password reset",
  "api-token.created": "API token created",
  "api-token.revoked": "API token revoked",
  "api.called": "API call",
};

export const AUDIT_TARGET_LABELS: Record<AuditTargetType, string> = {
  organisation: "Organisation",
  site: "Site",
  device: "Device",
  "shared-object": "Shared object",
  invitation: "Invitation",
  membership: "Member",
  user: "Account",
  proposal: "Proposal",
  "api-token": "API token",
  "training-scenario": "Teaching scenario",
  "training-lesson": "Lesson",
  "training-drill": "Drill",
  "training-assignment": "Assignment",
};

/** The label of a stored action; a code this version does not know is shown as it is. */
export function auditActionLabel(action: string): string {
  return isAuditAction(action) ? AUDIT_ACTION_LABELS[action] : action;
}

export function auditTargetLabel(targetType: string): string {
  return isAuditTargetType(targetType) ? AUDIT_TARGET_LABELS[targetType] : targetType;
}

/** What a sentence needs of an entry. */
export type AuditEntryWords = { action: string; targetName: string | null; changes: Record<string, unknown> };

type Changes = Record<string, unknown>;
type FromTo = { from: unknown; to: unknown };

const isFromTo = (value: unknown): value is FromTo => typeof value === "object" && value !== null && !Array.isArray(value) && "from" in value && "to" in value;

/** A recorded value as text: lists joined, "from → to" pairs, numbers and strings as they are. */
export function valueText(value: unknown): string {
  if (value === null || value === undefined || value === "") return "—";
  if (typeof value === "string") return value;
  if (typeof value === "number" || typeof value === "boolean") return String(value);
  if (Array.isArray(value)) return value.length ? value.map(valueText).join(", ") : "none";
  if (isFromTo(value)) return `${valueText(value.from)} → ${valueText(value.to)}`;
  return JSON.stringify(value);
}

const word = (value: unknown, fallback = "?") => (typeof value === "string" && value ? value : typeof value === "number" ? String(value) : fallback);
const quoted = (value: unknown, fallback = "?") => `“${word(value, fallback)}”`;
const listOf = (value: unknown): unknown[] => (Array.isArray(value) ? value : []);

/** "name “a” → “b”, location “x” → “y”" for the { field: { from, to } } pairs that differ. */
function fieldChanges(changes: Changes): string {
  const parts = Object.entries(changes)
    .filter((entry): entry is [string, FromTo] => isFromTo(entry[1]) && JSON.stringify(entry[1].from) !== JSON.stringify(entry[1].to))
    .map(([field, { from, to }]) => `${fieldLabel(field)} ${quoted(valueText(from))} → ${quoted(valueText(to))}`);
  return parts.join(", ");
}

/** " from “a” to “b”" for a recorded { from, to } pair; "" for anything else. */
function fromTo(value: unknown): string {
  return isFromTo(value) ? ` from ${quoted(valueText(value.from))} to ${quoted(valueText(value.to))}` : "";
}

/** "lastRevision" → "last revision". */
export function fieldLabel(field: string): string {
  return field.replace(/([a-z])([A-Z])/g, "$1 $2").replace(/[-_]/g, " ").toLowerCase();
}

/** ", directly though changes go through proposals (break-glass): “why”" for a library change saved so (docs/decisions/017). */
function breakGlassWords(changes: Changes): string {
  return word(changes.breakGlass, "") ? `, directly though changes go through proposals (break-glass): ${quoted(changes.breakGlass)}` : "";
}

const SENTENCES: Record<AuditAction, (changes: Changes, target: string) => string> = {
  "organisation.created": (c, target) => `Created the organisation ${quoted(c.name, target)}`,
  "organisation.renamed": (c) => `Renamed the organisation${fromTo(c.name)}`,
  "organisation.change-policy-changed": (c) => `Changed the change policy: ${fieldChanges(c) || "no difference"}`,
  "organisation.second-factor-requirement-changed": (c) =>
    isFromTo(c.requireSecondFactor) && c.requireSecondFactor.to === true
      ? `Required a second factor of every member${typeof c.membersWithout === "number" ? ` (${plural(c.membersWithout, { one: "member", other: "members" })} without one then, sent to enrol)` : ""}`
      : "Stopped requiring a second factor of every member",
  "site.created": (c) => `Added site ${quoted(c.name)}${word(c.customer, "") ? ` for ${word(c.customer)}` : ""}${word(c.location, "") ? ` at ${word(c.location)}` : ""}`,
  "site.updated": (c, target) => `Changed site ${quoted(target)}: ${fieldChanges(c)}`,
  "site.deleted": (c, target) => `Deleted site ${quoted(c.name, target)}`,
  "device.created": (c, target) => `Created device ${quoted(c.name, target)} as r${word(c.revision, "1")}${word(c.message, "") ? `: ${quoted(c.message)}` : ""}`,
  "device.revised": (c, target) =>
    `Saved r${word(c.revision)} of ${quoted(target)}${word(c.message, "") ? `: ${quoted(c.message)}` : ""} (${plural(listOf(c.changes).length, { one: "change", other: "changes" })})`,
  "device.deleted": (c, target) => `Deleted device ${quoted(c.name, target)} and its revisions (last r${word(c.lastRevision)})`,
  "device.break-glass-saved": (c, target) => `Saved r${word(c.revision)} of ${quoted(target)} directly, though changes go through proposals (break-glass): ${quoted(c.reason)}`,
  "device.break-glass-deleted": (c, target) => `Deleted device ${quoted(c.name, target)} (last r${word(c.lastRevision)}) though changes go through proposals (break-glass): ${quoted(c.reason)}`,
  "device.saved-past-guard": (c, target) => `Saved r${word(c.revision)} of ${quoted(target)} though the lockout guard blocked it: ${quoted(c.reason)}`,
  "finding.dismissed": (c, target) => `Dismissed ${word(c.code)} on ${quoted(c.device, target)} (r${word(c.revision)}) as an accepted risk: ${quoted(c.reason)}`,
  "finding.restored": (c, target) => `Restored ${word(c.code)} on ${quoted(c.device, target)} to the active findings`,
  "finding.dismissal-requested": (c, target) =>
    `Asked to dismiss ${word(c.code)}${word(c.severity, "") ? ` (${word(c.severity)})` : ""} on ${quoted(c.device, target)} (r${word(c.revision)}) as an accepted risk, awaiting a second person's confirmation: ${quoted(c.reason)}`,
  "finding.dismissal-confirmed": (c, target) => `Confirmed the dismissal of ${word(c.code)} on ${quoted(c.device, target)} asked for by ${word(c.dismissedBy, "another member")}: ${quoted(c.reason)}`,
  "finding.dismissal-declined": (c, target) => `Declined the dismissal of ${word(c.code)} on ${quoted(c.device, target)} asked for by ${word(c.dismissedBy, "another member")}; the finding stays active`,
  "finding.dismissal-withdrawn": (c, target) => `Withdrew the dismissal of ${word(c.code)} on ${quoted(c.device, target)} before it was confirmed`,
  "expectation.added": (c, target) => `Added expectation ${quoted(c.id)} on ${quoted(c.device, target)}: ${word(c.words, "")}`,
  "expectation.changed": (c, target) => `Changed expectation ${quoted(c.id)} on ${quoted(c.device, target)}: ${word(c.words, "")}`,
  "expectation.deleted": (c, target) => `Deleted expectation ${quoted(c.id)} on ${quoted(c.device, target)}: ${word(c.words, "")}`,
  "expectation.reordered": (c, target) => `Moved expectation ${quoted(c.id)} on ${quoted(c.device, target)}${fromTo(c.position)}`,
  "expectation.imported": (c, target) =>
    `Imported ${plural(typeof c.count === "number" ? c.count : 0, { one: "expectation", other: "expectations" })} into ${quoted(c.device, target)} (${c.mode === "replace" ? "replacing the list" : "added to the list"})`,
  "field-check.recorded": (c, target) =>
    `Recorded a field check of ${quoted(c.device, target)}${word(c.fileName, "") ? ` from ${quoted(c.fileName)}` : ""}: ${plural(Number(c.rows) || 0, { one: "observation", other: "observations" })}, ${word(c.agreements, "0")} agree, ${word(c.differences, "0")} differ, ${word(c.invalid, "0")} not checked`,
  "proposal.created": (c, target) => `Proposed ${quoted(c.name, target)} for ${quoted(c.device)} on r${word(c.baseRevision)}`,
  "proposal.draft-edited": (c, target) => `Edited the draft of ${quoted(target)}: ${word(c.edit)}`,
  "proposal.details-changed": (c, target) => `Changed the details of ${quoted(target)}${fieldChanges(c) ? `: ${fieldChanges(c)}` : ""}`,
  "proposal.submitted": (c, target) => `Submitted ${quoted(target)} for review${word(c.acknowledgement, "") ? `, acknowledging the lockout guard: ${quoted(c.acknowledgement)}` : ""}`,
  "proposal.commented": (c, target) => `Commented on ${word(c.ruleId, "") ? `inbound rule ${word(c.ruleId)} of ` : ""}${quoted(target)}: ${quoted(c.comment)}`,
  "proposal.changes-requested": (c, target) => `Asked for changes to ${quoted(target)}: ${quoted(c.reason)}`,
  "proposal.approved": (c, target) =>
    `Approved ${quoted(target)} (${word(c.approvals)} of ${word(c.required)} needed)${word(c.guardOverride, "") ? `, past the lockout guard: ${quoted(c.guardOverride)}` : ""}`,
  "proposal.rejected": (c, target) => `Rejected ${quoted(target)}: ${quoted(c.reason)}`,
  "proposal.withdrawn": (c, target) => `Withdrew ${quoted(c.name, target)}`,
  "proposal.brought-up-to-date": (c, target) => `Brought ${quoted(target)} up to date${fromTo(c.baseRevision)}${listOf(c.settled).length ? `, settling ${plural(listOf(c.settled).length, { one: "conflict", other: "conflicts" })}` : ""}`,
  "proposal.applied": (c, target) => `Applied ${quoted(target)} as r${word(c.revision)}${word(c.outsideWindowReason, "") ? `, outside its change window: ${quoted(c.outsideWindowReason)}` : ""}`,
  "training.scenario-created": (c, target) =>
    `Created teaching scenario ${quoted(c.title, target)}${c.origin === "example" ? ` from the example ${quoted(c.example)}` : c.origin === "copy" ? ` as a${c.anonymised === true ? "n anonymised" : ""} copy of ${quoted(c.device)}` : " from scratch"}`,
  "training.scenario-edited": (c, target) => `Edited teaching scenario ${quoted(c.title, target)}: ${word(c.edit)}`,
  "training.scenario-deleted": (c, target) => `Deleted teaching scenario ${quoted(c.title, target)}`,
  "training.lesson-created": (c, target) => `Created lesson ${quoted(c.title, target)} on ${quoted(c.scenario)} with ${plural(typeof c.probes === "number" ? c.probes : 0, { one: "probe", other: "probes" })}`,
  "training.lesson-changed": (c, target) => `Changed lesson ${quoted(isFromTo(c.title) ? c.title.to : c.title, target)}: ${word(c.edit)}`,
  "training.lesson-deleted": (c, target) => `Deleted lesson ${quoted(c.title, target)} and its ${plural(typeof c.attempts === "number" ? c.attempts : 0, { one: "attempt", other: "attempts" })}`,
  "training.drill-created": (c, target) => `Created drill ${quoted(c.title, target)} (${word(c.kind)}) on ${quoted(c.scenario)}`,
  "training.drill-changed": (c, target) => `Changed drill ${quoted(isFromTo(c.title) ? c.title.to : c.title, target)}: ${word(c.edit)}`,
  "training.drill-deleted": (c, target) => `Deleted drill ${quoted(c.title, target)} and its ${plural(typeof c.attempts === "number" ? c.attempts : 0, { one: "attempt", other: "attempts" })}`,
  "training.assigned": (c) => `Assigned the ${c.kind === "drill" ? "drill" : "lesson"} ${quoted(c.title)} to ${word(c.assignee)}, due ${typeof c.due === "string" ? formatInstant(c.due) : "?"}`,
  "training.assignment-withdrawn": (c) => `Withdrew the ${c.kind === "drill" ? "drill" : "lesson"} ${quoted(c.title)} from ${word(c.assignee)}`,
  "shared-object.created": (c, target) => `Created shared ${c.kind === "group" ? "group" : "address object"} ${quoted(target)}: ${valueText(c.items)}${breakGlassWords(c)}`,
  "shared-object.updated": (c, target) => {
    const changed = fieldChanges(c);
    return `Changed shared object ${quoted(target)}${changed ? `: ${changed}` : " (no difference)"}${breakGlassWords(c)}`;
  },
  "shared-object.deleted": (c, target) => `Deleted shared object ${quoted(target)} (${valueText(c.items)})`,
  "invitation.sent": (c) => `Invited ${word(c.email)} as ${word(c.role)}`,
  "invitation.revoked": (c) => `Revoked the invitation for ${word(c.email)}`,
  "invitation.accepted": (c) => `${word(c.email)} joined as ${word(c.role)}`,
  "member.role-changed": (c, target) => (isFromTo(c.role) ? `Changed the role of ${target} from ${word(c.role.from)} to ${word(c.role.to)}` : `Changed the role of ${target}`),
  "member.trainer-changed": (c, target) => (isFromTo(c.trainer) && c.trainer.to === true ? `Made ${target} a trainer` : `Took the trainer capability from ${target}`),
  "member.second-factor-reset": (c, target) =>
    `Reset the second factor of ${target}: the authenticator and ${plural(typeof c.recoveryCodesRemoved === "number" ? c.recoveryCodesRemoved : 0, { one: "recovery code", other: "recovery codes" })} removed, ${plural(typeof c.sessionsEnded === "number" ? c.sessionsEnded : 0, { one: "session", other: "sessions" })} ended`,
  "member.removed": (c, target) => `Removed ${target}${word(c.role, "") ? ` (${word(c.role)})` : ""} from the organisation`,
  "user.signed-in": (c) => (word(c.secondFactor, "") ? `Signed in with the password and ${c.secondFactor === "recovery code" ? "a recovery code" : "the authenticator app"}` : "Signed in"),
  "user.signed-out-everywhere": () => "Signed out on every device",
  "user.renamed": (c) => `Changed their name${fromTo(c.name)}`,
  "user.email-change-requested": (c) => `Asked to change their e-mail to ${word(c.newEmail)}; a confirmation link went to that address`,
  "user.email-changed": (c) => `Changed their e-mail${fromTo(c.email)}`,
  "user.password-changed": (c) => `Changed their password${typeof c.otherSessionsEnded === "number" ? ` and signed out ${plural(c.otherSessionsEnded, { one: "other session", other: "other sessions" })}` : ""}`,
  "user.second-factor-enabled": (c) => `Turned on a second factor (authenticator app)${typeof c.recoveryCodes === "number" ? ` with ${plural(c.recoveryCodes, { one: "recovery code", other: "recovery codes" })}` : ""}`,
  "user.second-factor-disabled": () => "Turned off the second factor",
  "user.recovery-codes-regenerated": () => "Replaced the recovery codes; the earlier ones no longer work",
  "user.second-factor-locked": (c) =>
    `The second step was locked after ${plural(typeof c.failures === "number" ? c.failures : 0, { one: "wrong code", other: "wrong codes" })} in a row${word(c.lockedUntil, "") ? `, until ${formatInstant(word(c.lockedUntil))}` : ""}`,
  "password.reset-requested": () => "Asked for a password reset link",
  "password.reset-completed": () => "Set a new password from a reset link and signed out everywhere",
  "api-token.created": (c, target) =>
    `Created the ${word(c.kind, "")} API token ${quoted(c.name, target)} (${word(c.scope)} scope${word(c.role, "") ? `, acts as ${word(c.role)}` : ""}, until ${formatDay(word(c.expiresAt))})`,
  "api-token.revoked": (c, target) => `Revoked the API token ${quoted(c.name, target)}`,
  "api.called": (c) => `Called ${word(c.endpoint)} through the API (${word(c.status)})${word(c.query, "") ? ` with ${word(c.query)}` : ""}`,
};

/** One sentence for an entry, naming the target as it is now (or was). */
export function auditSentence(entry: AuditEntryWords): string {
  const target = entry.targetName ?? "a deleted item";
  if (isAuditAction(entry.action)) return SENTENCES[entry.action](entry.changes, target);
  const changed = Object.entries(entry.changes).map(([field, value]) => `${fieldLabel(field)}: ${valueText(value)}`);
  return `${entry.action} ${target}${changed.length ? ` (${changed.join("; ")})` : ""}`;
}

/** The recorded values as readable lines, for the expandable details. */
export function auditDetails(changes: Record<string, unknown>): { field: string; lines: string[] }[] {
  return Object.entries(changes).map(([field, value]) => ({
    field: fieldLabel(field),
    // A list of changes (a revision's) reads best one per line.
    lines: Array.isArray(value) && value.every((item) => typeof item === "string") && value.length > 1 ? value.map(valueText) : [valueText(value)],
  }));
}
