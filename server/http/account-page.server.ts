// The account page's loader data and its three forms (name, e-mail, password), shared by the
// page inside an organisation's shell and the bare page for someone in no organisation.
import { data, redirect } from "react-router";
import { serializeFlash } from "../auth/flash.server.ts";
import { findPasswordProblem } from "../auth/password-rules.ts";
import type { SignedInSession } from "../auth/session.server.ts";
import { Membership, Organisation, RecoveryCode, Session } from "#models/index.ts";
import { appOrigin } from "../config.server.ts";
import { plural } from "../engine/format.ts";
import { changePassword, pendingEmailChange, recentAccountActivity, renameUser, requestEmailChange } from "../services/account.server.ts";
import { createApiToken, listPersonalTokens, revokeApiToken } from "../services/api-tokens.server.ts";
import { hasSecondFactor } from "../services/second-factor.server.ts";
import { fieldErrorsOf, formValues, invalidForm, readForm, unknownIntent } from "./form.server.ts";
import { refusedForm } from "./refusals.server.ts";
import { clientAddressOf, type RequestContext } from "./request-context.server.ts";
import { ChangeEmailSchema, ChangeNameSchema, ChangePasswordSchema, PersonalTokenSchema, TokenIdSchema } from "./schemas.ts";

export type AccountPageData = Awaited<ReturnType<typeof accountPageData>>;

export async function accountPageData({ user, session }: SignedInSession) {
  const [sessions, pending, activity, tokens, memberships, recoveryCodesLeft] = await Promise.all([
    // Sessions still waiting for their second step sign nobody in: not listed.
    Session.findAll({ where: { userId: user.id, secondFactorPending: false }, order: [["lastSeenAt", "DESC"]] }),
    pendingEmailChange(user.id),
    recentAccountActivity(user.id),
    listPersonalTokens(user.id),
    Membership.findAll({ where: { userId: user.id }, include: [{ model: Organisation, as: "organisation", required: true, attributes: ["slug", "name"] }], order: [[{ model: Organisation, as: "organisation" }, "name", "ASC"]] }),
    RecoveryCode.count({ where: { userId: user.id, usedAt: null } }),
  ]);
  return {
    user: { name: user.name, email: user.email },
    secondFactor: { enabled: hasSecondFactor(user), recoveryCodesLeft },
    pendingEmail: pending ? { newEmail: pending.newEmail, expiresAt: pending.expiresAt.toISOString() } : null,
    sessions: sessions.map((candidate) => ({
      id: candidate.id,
      current: candidate.id === session.id,
      userAgent: candidate.userAgent,
      clientAddress: candidate.clientAddress,
      lastSeenAt: candidate.lastSeenAt.toISOString(),
    })),
    // Personal API tokens (docs/decisions/014): never their secrets, which were shown once.
    tokens: tokens.map((token) => ({ id: token.id, name: token.name, scope: token.scope, organisation: token.organisation.name, hint: token.hint, createdAt: token.createdAt, expiresAt: token.expiresAt, lastUsedAt: token.lastUsedAt, lastUsedAddress: token.lastUsedAddress, status: token.status })),
    tokenOrganisations: memberships.map((membership) => ({ slug: membership.organisation!.slug, name: membership.organisation!.name, role: membership.role })),
    activity: activity.map((event) => ({ id: String(event.id), at: event.createdAt.toISOString(), action: event.action, changes: event.changes, clientAddress: event.clientAddress })),
    // Relative times count from here, so the server and the browser render the same words.
    now: new Date().toISOString(),
  };
}

/** The account forms: validate, call the service, come back to `selfPath` with a toast. */
export async function accountAction(request: Request, context: RequestContext, { user, session }: SignedInSession, selfPath: string) {
  const values = formValues(await readForm(request));
  const clientAddress = clientAddressOf(context);
  const back = async (message: string) => redirect(selfPath, { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message }) } });
  try {
    switch (values.intent) {
      case "name": {
        const parsed = ChangeNameSchema.safeParse(values);
        if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
        const changed = await renameUser(user, parsed.data.name, clientAddress);
        return back(changed ? `Your name is now ${parsed.data.name}.` : "Your name is unchanged.");
      }
      case "email": {
        const parsed = ChangeEmailSchema.safeParse(values);
        if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
        await requestEmailChange(user, parsed.data, appOrigin(), clientAddress);
        return back(`We sent a confirmation link to ${parsed.data.newEmail}. Your e-mail changes when you follow it.`);
      }
      case "password": {
        const parsed = ChangePasswordSchema.safeParse(values);
        if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
        const problem = findPasswordProblem(parsed.data.newPassword, { email: user.email, name: user.name });
        if (problem) return invalidForm({ newPassword: problem }, values);
        const ended = await changePassword(user, session.id, parsed.data, clientAddress);
        return back(ended ? `Password changed. ${plural(ended, { one: "other session was", other: "other sessions were" })} signed out.` : "Password changed.");
      }
      case "create-token": {
        const parsed = PersonalTokenSchema.safeParse(values);
        if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
        const membership = await Membership.findOne({ where: { userId: user.id }, include: [{ model: Organisation, as: "organisation", required: true, where: { slug: parsed.data.organisation } }] });
        if (!membership?.organisation) return invalidForm({ organisation: "Choose one of your organisations." }, values);
        const { secret, token } = await createApiToken(
          membership.organisation.id,
          { kind: "personal", name: parsed.data.name, scope: parsed.data.scope, lifetimeDays: parsed.data.lifetimeDays },
          { userId: user.id, email: user.email, clientAddress, role: membership.role },
        );
        // Shown once, in this answer only: never redirected through a cookie, never stored.
        return data({ created: { secret, name: token.name, organisation: token.organisation.name, scope: token.scope, expiresAt: token.expiresAt } }, { headers: { "Cache-Control": "no-store" } });
      }
      case "revoke-token": {
        const parsed = TokenIdSchema.safeParse(values);
        if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
        const revoked = await revokeApiToken(parsed.data.tokenId, { userId: user.id, email: user.email, clientAddress }, null);
        return back(revoked.changed ? `The token “${revoked.name}” is revoked: calls with it are refused from now on.` : `The token “${revoked.name}” was revoked already.`);
      }
      default:
        return unknownIntent(values.intent);
    }
  } catch (error) {
    return refusedForm(error, values);
  }
}
