import { data, Form, Link, redirect, useNavigation } from "react-router";
import type { Route } from "./+types/invitation";
import { serializeFlash } from "#server/auth/flash.server";
import { findPasswordProblem, PASSWORD_MIN_LENGTH } from "#server/auth/password-rules";
import { startSession } from "#server/auth/session.server";
import { signedInOf } from "#server/auth/guard.server";
import { fieldErrorsOf, formValues, invalidForm, readForm } from "#server/http/form.server";
import { InvitationSignUpSchema } from "#server/http/schemas";
import { acceptInvitation, findOpenInvitation } from "#server/services/members.server";
import { createUser } from "#server/services/users.server";
import { Button, ButtonLink } from "#app/components/ui/button";
import { FormError, TextField } from "#app/components/ui/field";
import { clientAddressOf } from "#server/http/request-context.server";
import { refusedForm } from "#server/http/refusals.server";

export const meta: Route.MetaFunction = () => [{ title: "Invitation · Sallyport" }];

const CLOSED = "This invitation has expired, was revoked, or was used already. Ask the person who invited you for a new one.";

export async function loader({ params, context }: Route.LoaderArgs) {
  const open = await findOpenInvitation(params.token);
  if (!open) throw data({ message: CLOSED }, { status: 404 });
  const signedIn = signedInOf(context);
  return {
    organisationName: open.organisationName,
    email: open.invitation.email,
    role: open.invitation.role,
    hasAccount: Boolean(open.existingUser),
    signedInAs: signedIn?.user.email ?? null,
  };
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const values = formValues(await readForm(request));
  const open = await findOpenInvitation(params.token);
  if (!open) return invalidForm({ form: CLOSED }, values, 404);
  const signedIn = signedInOf(context);
  try {
    if (signedIn) {
      const slug = await acceptInvitation(open, signedIn.user, clientAddressOf(context));
      throw redirect(`/o/${slug}`, { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message: `You joined ${open.organisationName}.` }) } });
    }
    if (open.existingUser) return invalidForm({ form: "Sign in first, then open the link again." }, values, 401);
    const parsed = InvitationSignUpSchema.safeParse(values);
    if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
    const problem = findPasswordProblem(parsed.data.password, { email: open.invitation.email, name: parsed.data.name });
    if (problem) return invalidForm({ password: problem }, values);
    const user = await createUser({ email: open.invitation.email, name: parsed.data.name, password: parsed.data.password });
    const slug = await acceptInvitation(open, user, clientAddressOf(context));
    const headers = new Headers();
    headers.append("Set-Cookie", await startSession(request, user.id, clientAddressOf(context)));
    headers.append("Set-Cookie", await serializeFlash({ kind: "success", message: `Welcome to ${open.organisationName}.` }));
    throw redirect(`/o/${slug}`, { headers });
  } catch (error) {
    return refusedForm(error, values);
  }
}

export default function InvitationPage({ loaderData, actionData, params }: Route.ComponentProps) {
  const navigation = useNavigation();
  const errors: Record<string, string> = actionData?.errors ?? {};
  const values: Record<string, string> = actionData?.values ?? {};
  const { organisationName, email, role, hasAccount, signedInAs } = loaderData;
  return (
    <>
      <h1 className="text-display">Join {organisationName}</h1>
      <p className="mt-2 text-sm text-ink-muted">
        You are invited as <strong className="text-ink">{role}</strong>, for {email}.
      </p>
      <div className="mt-8 space-y-5">
        <FormError message={errors.form} />
        {signedInAs ? (
          signedInAs === email ? (
            <Form method="post">
              <Button type="submit" className="w-full" disabled={navigation.state === "submitting"}>
                Accept and join
              </Button>
            </Form>
          ) : (
            <p className="text-sm text-ink-muted">
              You are signed in as {signedInAs}. This invitation is for {email}: sign out, then open the link again.
            </p>
          )
        ) : hasAccount ? (
          <ButtonLink to={`/login?redirectTo=${encodeURIComponent(`/invitations/${params.token}`)}`} className="w-full">
            Sign in to accept
          </ButtonLink>
        ) : (
          <Form method="post" className="space-y-5" noValidate>
            <TextField label="Your name" name="name" autoComplete="name" required maxLength={100} defaultValue={values.name} error={errors.name} />
            <input type="text" name="username" autoComplete="username" value={email} readOnly hidden />
            <TextField label="Choose a password" name="password" type="password" autoComplete="new-password" required minLength={PASSWORD_MIN_LENGTH} error={errors.password} hint={`At least ${PASSWORD_MIN_LENGTH} characters.`} />
            <Button type="submit" className="w-full" disabled={navigation.state === "submitting"}>
              Create account and join
            </Button>
          </Form>
        )}
        <p className="text-sm">
          <Link to="/" className="text-ink-muted underline underline-offset-4 hover:text-ink">
            Not now
          </Link>
        </p>
      </div>
    </>
  );
}
