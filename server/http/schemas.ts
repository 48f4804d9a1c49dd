import { z } from "zod";
import { findPasswordProblem, PASSWORD_MAX_LENGTH } from "../auth/password-rules.ts";
import { ROLES } from "#models/roles.ts";
import { NAME_PATTERN } from "../engine/vocabulary.ts";
import { timeZoneProblem } from "../workspace/issue-words.ts";
import { REASON_MAX, shortReasonMessage, type DismissalRule } from "../services/dismissal-rules.ts";

// Field schemas shared by the actions, so each field is validated the same way everywhere.
export const EmailSchema = z
  .string()
  .trim()
  .toLowerCase()
  .min(1, "Enter an e-mail address.")
  .max(254, "An e-mail address has at most 254 characters.")
  .email("Enter a valid e-mail address, like name@example.com.");

export const PersonNameSchema = z.string().trim().min(1, "Enter a name.").max(100, "Use at most 100 characters.");

export const OrganisationNameSchema = z.string().trim().min(2, "Enter the organisation's name (at least 2 characters).").max(100, "Use at most 100 characters.");

export const RoleSchema = z.enum(ROLES, { message: `Choose one of: ${ROLES.join(", ")}.` });

/** The name of a device, a device element or a shared object (PRODUCT.md §4: 1–63 of A-Z a-z 0-9 . _ -). */
export const ElementNameSchema = z.string().trim().regex(NAME_PATTERN, "Use 1–63 characters: letters, digits, dot, underscore, dash.");

/** A device's IANA time zone; an unknown one is refused with the zone it nearly names. */
export const TimeZoneSchema = z
  .string()
  .trim()
  .min(1, "Enter an IANA time zone such as Europe/Amsterdam.")
  .max(64, "Use at most 64 characters.")
  .superRefine((zone, context) => {
    const problem = timeZoneProblem(zone);
    if (problem) context.addIssue({ code: "custom", message: problem });
  });

export const IdSchema = z.string().uuid("That identifier is not valid.");

/** The import page's last step for a new revision of a device: its effect was read (the box ticked). */
export const ImportEffectReadSchema = z.object({
  effectRead: z.literal("yes", { message: "Read the effect of this import above, then tick “I have read the effect” to import it." }),
});

/** Why a finding is accepted as a risk: as long as the finding's dismissal rule asks (20 characters for high and critical). */
export function dismissalReasonSchema(rule: Exclude<DismissalRule, { kind: "refused" }>) {
  return z
    .string()
    .trim()
    .max(REASON_MAX, `Keep the reason to at most ${REASON_MAX} characters.`)
    .superRefine((reason, context) => {
      if (reason.length < rule.minReason) context.addIssue({ code: "custom", message: shortReasonMessage(rule, reason.length) });
    });
}

/** Adds the password-rule message (NIST SP 800-63B, reason said) to the "password" field. */
export function refineNewPassword(value: { password: string; email?: string; name?: string }, refinement: z.RefinementCtx): void {
  const problem = findPasswordProblem(value.password, { email: value.email, name: value.name });
  if (problem) refinement.addIssue({ code: "custom", path: ["password"], message: problem });
}

const PasswordInputSchema = z.string().max(PASSWORD_MAX_LENGTH * 4, "That password is far too long.");

export const SignUpSchema = z
  .object({
    name: PersonNameSchema,
    email: EmailSchema,
    organisationName: OrganisationNameSchema,
    password: PasswordInputSchema,
  })
  .superRefine(refineNewPassword);

export const ResetPasswordSchema = z.object({ password: PasswordInputSchema });

export const InvitationSignUpSchema = z.object({ name: PersonNameSchema, password: PasswordInputSchema });

export const SiteSchema = z.object({
  name: z.string().trim().min(1, "Enter the site's name.").max(100, "Use at most 100 characters."),
  customer: z.string().trim().max(100, "Use at most 100 characters.").default(""),
  location: z.string().trim().max(200, "Use at most 200 characters.").default(""),
});

// The account page's three forms. The current password is checked by the service; the new
// one against the password rules with the user's own name and e-mail.
export const ChangeNameSchema = z.object({ name: PersonNameSchema });

export const ChangeEmailSchema = z.object({
  newEmail: EmailSchema,
  currentPassword: z.string().min(1, "Enter your current password to confirm it is you.").max(PASSWORD_MAX_LENGTH * 4, "That password is far too long."),
});

export const ChangePasswordSchema = z.object({
  currentPassword: z.string().min(1, "Enter your current password.").max(PASSWORD_MAX_LENGTH * 4, "That password is far too long."),
  newPassword: PasswordInputSchema,
});
