import { z } from "zod";
import { findPasswordProblem, PASSWORD_MAX_LENGTH } from "../auth/password-rules.ts";
import { ROLES } from "#models/roles.ts";
import { NAME_PATTERN } from "../engine/vocabulary.ts";
import { timeZoneProblem } from "../workspace/issue-words.ts";
import { REASON_MAX, shortReasonMessage, type DismissalRule } from "../services/dismissal-rules.ts";
import { API_TOKEN_SCOPES, SERVICE_TOKEN_ROLES, TOKEN_LIFETIMES_DAYS } from "#models/api-token-words.ts";
import { IdSchema } from "../validation/ids.ts";
import { refineText } from "../validation/text.ts";

export { IdSchema };

/** A one-line name or title: no control, line-break or bidirectional override characters (server/validation/text.ts). */
const NameText = z.string().superRefine(refineText("name"));

// Field schemas shared by the actions, so each field is validated the same way everywhere.
export const EmailSchema = z
  .string()
  .trim()
  .toLowerCase()
  .min(1, "Enter an e-mail address.")
  .max(254, "An e-mail address has at most 254 characters.")
  .email("Enter a valid e-mail address, like name@example.com.");

export const PersonNameSchema = NameText.trim().min(1, "Enter a name.").max(100, "Use at most 100 characters.");

export const OrganisationNameSchema = NameText.trim().min(2, "Enter the organisation's name (at least 2 characters).").max(100, "Use at most 100 characters.");

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
  name: NameText.trim().min(1, "Enter the site's name.").max(100, "Use at most 100 characters."),
  customer: NameText.trim().max(100, "Use at most 100 characters.").default(""),
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

// ---------------------------------------------------------------------------------------------
// Change proposals (docs/decisions/010). The window's two times are wall-clock times in the
// device's zone ("2026-12-08T22:00", as a datetime-local field sends them); the route turns
// them into instants with the device's zone (server/proposals/change-window.ts).

/** A written reason where one is asked for: an override, an acknowledgement, applying outside the window. */
const WrittenReason = z.string().trim().max(2000, "Use at most 2,000 characters.");

export const ProposalDetailsSchema = z.object({
  title: NameText.trim().min(3, "Give the change a title of at least 3 characters; it becomes the revision's message.").max(200, "Use at most 200 characters."),
  reason: z.string().trim().max(4000, "Use at most 4,000 characters.").default(""),
  ticket: NameText.trim().max(100, "Use at most 100 characters.").default(""),
  windowStart: z.string().trim().min(1, "Enter when the change window starts."),
  windowEnd: z.string().trim().min(1, "Enter when the change window ends."),
  workFrom: z
    .string()
    .trim()
    .max(64)
    .default("")
    .refine((text) => text === "" || z.union([z.ipv4(), z.ipv6()]).safeParse(text).success, "Enter one IPv4 or IPv6 address, like 192.0.2.10 or 2001:db8::10 — or leave it empty."),
});

export const PROPOSAL_STEPS = ["submit", "comment", "approve", "request-changes", "reject", "withdraw", "bring-up-to-date", "apply"] as const;
export type ProposalStep = (typeof PROPOSAL_STEPS)[number];

export function isProposalStep(value: unknown): value is ProposalStep {
  return typeof value === "string" && (PROPOSAL_STEPS as readonly string[]).includes(value);
}

/** What each step of a proposal takes; the same whether it comes as a form or as JSON. */
export const ProposalStepSchemas = {
  submit: z.object({ acknowledgement: WrittenReason.default("") }),
  comment: z.object({
    body: z.string().trim().min(1, "Write the comment.").max(4000, "Use at most 4,000 characters."),
    ruleId: z
      .string()
      .trim()
      .max(63)
      .default("")
      .transform((value) => (value === "" ? null : value)),
  }),
  approve: z.object({ reason: WrittenReason.default(""), guardOverride: WrittenReason.default("") }),
  "request-changes": z.object({ reason: WrittenReason.pipe(z.string().min(3, "Say what should change, so the author knows.")) }),
  reject: z.object({ reason: WrittenReason.pipe(z.string().min(3, "Say why it is rejected, so the author knows.")) }),
  withdraw: z.object({}),
  "bring-up-to-date": z.object({
    draftVersion: z.coerce.number().int().min(1),
    choices: z.record(z.string().max(200), z.enum(["draft", "live"], { message: "Choose the draft's change or the live one." })).default({}),
  }),
  apply: z.object({ outsideWindowReason: WrittenReason.default("") }),
} satisfies Record<ProposalStep, z.ZodType>;

/** A proposal made from a whole document over the API: the window as ISO 8601 instants with an offset. */
export const ProposalDocumentSchema = ProposalDetailsSchema.omit({ windowStart: true, windowEnd: true }).extend({
  windowStart: z.iso.datetime({ offset: true, message: "Give the window's start as an ISO 8601 instant with an offset, like 2026-12-08T21:00:00Z." }),
  windowEnd: z.iso.datetime({ offset: true, message: "Give the window's end as an ISO 8601 instant with an offset, like 2026-12-08T22:30:00Z." }),
  document: z.unknown().refine((value) => typeof value === "object" && value !== null, "Send the model document (schemaVersion 2) as a JSON object."),
});

/** The organisation's change policy (settings page, admins). */
export const ChangePolicySchema = z.object({
  approvalsRequired: z.coerce.number({ message: "Choose how many approvals." }).int("Choose a whole number.").min(1, "At least one approval.").max(5, "At most five approvals."),
  changesThroughProposals: z
    .string()
    .optional()
    .transform((value) => value === "on" || value === "true"),
});

// ---------------------------------------------------------------------------------------------
// API tokens (docs/decisions/014): personal ones on the account page, service tokens in the
// organisation's settings. The name says where a token is used; it is one line of plain text (NameText).

const TokenNameSchema = NameText.trim().min(1, "Name the token after where it is used, e.g. “nightly exposure check”.").max(100, "Use at most 100 characters.");

const TokenScopeSchema = z.enum(API_TOKEN_SCOPES, { message: "Choose read, or read and write." });

const TokenLifetimeSchema = z.coerce
  .number({ message: "Choose how long the token works." })
  .refine((days) => (TOKEN_LIFETIMES_DAYS as readonly number[]).includes(days), `Choose ${TOKEN_LIFETIMES_DAYS.join(", ")} days.`);

export const PersonalTokenSchema = z.object({
  name: TokenNameSchema,
  organisation: z.string().trim().regex(/^[a-z0-9-]{1,63}$/, "Choose one of your organisations."),
  scope: TokenScopeSchema,
  lifetimeDays: TokenLifetimeSchema,
});

export const ServiceTokenSchema = z.object({
  name: TokenNameSchema,
  role: z.enum(SERVICE_TOKEN_ROLES, { message: `Choose the role it acts with: ${SERVICE_TOKEN_ROLES.join(", ")}.` }),
  scope: TokenScopeSchema,
  lifetimeDays: TokenLifetimeSchema,
});

export const TokenIdSchema = z.object({ tokenId: IdSchema });
