import { data, Form, Link, redirect, useNavigation } from "react-router";
import type { Route } from "./+types/reset-password";
import { serializeFlash } from "#server/auth/flash.server";
import { findPasswordProblem, PASSWORD_MIN_LENGTH } from "#server/auth/password-rules";
import { fieldErrorsOf, formValues, invalidForm, readForm } from "#server/http/form.server";
import { ResetPasswordSchema } from "#server/http/schemas";
import { completePasswordReset, findUserForResetToken } from "#server/services/users.server";
import { Button } from "#app/components/ui/button";
import { TextField } from "#app/components/ui/field";
import { clientAddressOf } from "#server/http/request-context.server";

export const meta: Route.MetaFunction = () => [{ title: "Choose a new password · Sallyport" }];

const EXPIRED = "This reset link has expired or was used already. Ask for a new one.";

export async function loader({ params }: Route.LoaderArgs) {
  const user = await findUserForResetToken(params.token);
  if (!user) throw data({ message: EXPIRED }, { status: 404 });
  return { email: user.email };
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const values = formValues(await readForm(request));
  const user = await findUserForResetToken(params.token);
  if (!user) return invalidForm({ form: EXPIRED }, values, 404);
  const parsed = ResetPasswordSchema.safeParse(values);
  if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
  const problem = findPasswordProblem(parsed.data.password, { email: user.email, name: user.name });
  if (problem) return invalidForm({ password: problem }, values);
  const updated = await completePasswordReset(params.token, parsed.data.password, clientAddressOf(context));
  if (!updated) return invalidForm({ form: EXPIRED }, values, 404);
  throw redirect("/login", { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message: "Password changed. Every other session was signed out; sign in with the new password." }) } });
}

export default function ResetPassword({ loaderData, actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const errors: Record<string, string> = actionData?.errors ?? {};
  return (
    <>
      <h1 className="text-display">Choose a new password</h1>
      <p className="mt-2 text-sm text-ink-muted">For {loaderData.email}. Every session of this account will be signed out.</p>
      <Form method="post" className="mt-8 space-y-5" noValidate>
        {errors.form ? (
          <p role="alert" className="text-sm text-danger">
            {errors.form} <Link to="/forgot-password" className="underline">Request a new link</Link>
          </p>
        ) : null}
        <input type="text" name="username" autoComplete="username" value={loaderData.email} readOnly hidden />
        <TextField label="New password" name="password" type="password" autoComplete="new-password" required minLength={PASSWORD_MIN_LENGTH} error={errors.password} hint={`At least ${PASSWORD_MIN_LENGTH} characters; spaces and any characters welcome.`} />
        <Button type="submit" className="w-full" disabled={navigation.state === "submitting"}>
          Set new password
        </Button>
      </Form>
    </>
  );
}
