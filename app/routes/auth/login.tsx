import { Form, Link, redirect, useNavigation, useSearchParams } from "react-router";
import type { Route } from "./+types/login";
import { authenticateWithPassword } from "#server/auth/authenticator.server";
import { safeRedirectPath, startSession } from "#server/auth/session.server";
import { signedInOf } from "#server/auth/guard.server";
import { formValues, readForm } from "#server/http/form.server";
import { recordAuditEvent } from "#server/services/audit.server";
import { Button } from "#app/components/ui/button";
import { FormError, TextField } from "#app/components/ui/field";
import { clientAddressOf } from "#server/http/request-context.server";
import { refusedForm } from "#server/http/refusals.server";
import { hasSecondFactor } from "#server/services/second-factor.server";

export const meta: Route.MetaFunction = () => [{ title: "Sign in · Sallyport" }];

export async function loader({ request, context }: Route.LoaderArgs) {
  if (signedInOf(context)) throw redirect(safeRedirectPath(new URL(request.url).searchParams.get("redirectTo")));
  return null;
}

export async function action({ request, context }: Route.ActionArgs) {
  const values = formValues(await readForm(request.clone()));
  try {
    const user = await authenticateWithPassword(request, { clientAddress: clientAddressOf(context) });
    if (hasSecondFactor(user)) {
      // The password step alone signs nobody in: a short-lived session waits for the code (docs/decisions/019).
      const pending = await startSession(request, user.id, clientAddressOf(context), { pendingSecondFactor: true });
      const redirectTo = safeRedirectPath(values.redirectTo, "");
      throw redirect(`/login/code${redirectTo ? `?redirectTo=${encodeURIComponent(redirectTo)}` : ""}`, { headers: { "Set-Cookie": pending } });
    }
    const cookie = await startSession(request, user.id, clientAddressOf(context));
    await recordAuditEvent({ userId: user.id, email: user.email, clientAddress: clientAddressOf(context) }, { organisationId: null, action: "user.signed-in", targetType: "user", targetId: user.id });
    throw redirect(safeRedirectPath(values.redirectTo), { headers: { "Set-Cookie": cookie } });
  } catch (error) {
    return refusedForm(error, values);
  }
}

export default function Login({ actionData }: Route.ComponentProps) {
  const [searchParams] = useSearchParams();
  const navigation = useNavigation();
  const values = actionData?.values ?? {};
  return (
    <>
      <h1 className="text-display">Sign in</h1>
      <p className="mt-2 text-sm text-ink-muted">
        New here?{" "}
        <Link to="/signup" className="font-medium text-harbour underline underline-offset-4">
          Create an organisation
        </Link>
      </p>
      <Form method="post" className="mt-8 space-y-5" noValidate>
        <FormError message={actionData?.errors.form} />
        <input type="hidden" name="redirectTo" value={searchParams.get("redirectTo") ?? values.redirectTo ?? ""} />
        <TextField label="E-mail" name="email" type="email" autoComplete="username" required defaultValue={values.email} maxLength={254} />
        <TextField label="Password" name="password" type="password" autoComplete="current-password" required />
        <Button type="submit" className="w-full" disabled={navigation.state === "submitting"}>
          {navigation.state === "submitting" ? "Signing in…" : "Sign in"}
        </Button>
      </Form>
      <p className="mt-6 text-sm">
        <Link to="/forgot-password" className="text-ink-muted underline underline-offset-4 hover:text-ink">
          Forgot your password?
        </Link>
      </p>
    </>
  );
}

export function headers({ actionHeaders }: Route.HeadersArgs) {
  return actionHeaders;
}
