import { Form, Link, useNavigation } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/forgot-password";
import { appOrigin, isOutboxEnabled } from "#server/config.server";
import { fieldErrorsOf, formValues, invalidForm, readForm } from "#server/http/form.server";
import { EmailSchema } from "#server/http/schemas";
import { requestPasswordReset } from "#server/services/users.server";
import { allowRequest, throttledRefusal } from "#server/auth/throttle.server";
import { refusedForm } from "#server/http/refusals.server";
import { Button } from "#app/components/ui/button";
import { TextField } from "#app/components/ui/field";
import { clientAddressOf } from "#server/http/request-context.server";

export const meta: Route.MetaFunction = () => [{ title: "Reset your password · Sallyport" }];

export async function loader() {
  return { outboxEnabled: isOutboxEnabled() };
}

export async function action({ request, context }: Route.ActionArgs) {
  const values = formValues(await readForm(request));
  const parsed = z.object({ email: EmailSchema }).safeParse(values);
  if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
  // Per e-mail and per client address, whether or not the address has an account (so the answer tells nothing).
  const verdict = await allowRequest("reset", parsed.data.email, clientAddressOf(context));
  if (verdict.throttled) return refusedForm(throttledRefusal(verdict, "reset requests", "email"), values);
  await requestPasswordReset(parsed.data.email, appOrigin(), clientAddressOf(context));
  // The same answer whether or not the address has an account.
  return { ok: true as const, email: parsed.data.email };
}

export default function ForgotPassword({ actionData, loaderData }: Route.ComponentProps) {
  const navigation = useNavigation();
  if (actionData?.ok) {
    return (
      <>
        <h1 className="text-display">Check your e-mail</h1>
        <p className="mt-3 text-sm text-ink-muted">
          If <strong className="text-ink">{actionData.email}</strong> has a Sallyport account, a reset link is on its way. It works once and expires in 30 minutes.
        </p>
        {loaderData.outboxEnabled ? (
          <p className="mt-3 text-sm text-ink-muted">
            Running locally: the message is in the{" "}
            <Link to="/outbox" className="font-medium text-harbour underline underline-offset-4">
              local outbox
            </Link>{" "}
            (it opens once you have followed the outbox link <code>npm start</code> printed).
          </p>
        ) : null}
        <p className="mt-8 text-sm">
          <Link to="/login" className="font-medium text-harbour underline underline-offset-4">
            Back to sign-in
          </Link>
        </p>
      </>
    );
  }
  const errors: Record<string, string> = actionData && !actionData.ok ? actionData.errors : {};
  const values: Record<string, string> = actionData && !actionData.ok ? actionData.values : {};
  return (
    <>
      <h1 className="text-display">Reset your password</h1>
      <p className="mt-2 text-sm text-ink-muted">We will e-mail you a single-use link.</p>
      <Form method="post" className="mt-8 space-y-5" noValidate>
        <TextField label="E-mail" name="email" type="email" autoComplete="email" required maxLength={254} defaultValue={values.email} error={errors.email} />
        <Button type="submit" className="w-full" disabled={navigation.state === "submitting"}>
          Send reset link
        </Button>
      </Form>
      <p className="mt-6 text-sm">
        <Link to="/login" className="text-ink-muted underline underline-offset-4 hover:text-ink">
          Back to sign-in
        </Link>
      </p>
    </>
  );
}

export function headers({ actionHeaders }: Route.HeadersArgs) {
  return actionHeaders;
}
