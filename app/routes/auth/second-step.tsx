import { Form, Link, redirect, useNavigation, useSearchParams } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/second-step";
import { signedInOf } from "#server/auth/guard.server";
import { getPendingSignIn, safeRedirectPath, SECOND_STEP_MINUTES, startSession } from "#server/auth/session.server";
import { serializeFlash } from "#server/auth/flash.server";
import { fieldErrorsOf, formValues, invalidForm, readForm } from "#server/http/form.server";
import { refusedForm } from "#server/http/refusals.server";
import { clientAddressOf } from "#server/http/request-context.server";
import { recordAuditEvent } from "#server/services/audit.server";
import { lockedMessage, secondFactorLockedUntil, verifySecondFactor } from "#server/services/second-factor.server";
import { formatDuration } from "#server/engine/format";
import { Button } from "#app/components/ui/button";
import { FormError, TextField } from "#app/components/ui/field";

export const meta: Route.MetaFunction = () => [{ title: "Second step · Sallyport" }];

const CodeSchema = z.object({ code: z.string().trim().min(1, "Enter the code from your authenticator app, or a recovery code.").max(32, "That is longer than any code.") });

const startOver = async (message: string) => redirect("/login", { headers: { "Set-Cookie": await serializeFlash({ kind: "info", message }) } });

export async function loader({ request, context }: Route.LoaderArgs) {
  if (signedInOf(context)) throw redirect(safeRedirectPath(new URL(request.url).searchParams.get("redirectTo")));
  const pending = await getPendingSignIn(request);
  if (!pending) throw await startOver(`Sign in with your password first. The second step waits ${formatDuration(SECOND_STEP_MINUTES, "minute")} at most.`);
  // Reached only after the right password, so saying the step is locked tells nothing new.
  const lockedUntil = await secondFactorLockedUntil(pending.user.id);
  return { email: pending.user.email, locked: lockedUntil ? lockedMessage(lockedUntil) : null };
}

export async function action({ request, context }: Route.ActionArgs) {
  const values = formValues(await readForm(request));
  const pending = await getPendingSignIn(request);
  if (!pending) throw await startOver(`The sign-in took longer than ${formatDuration(SECOND_STEP_MINUTES, "minute")}: enter your password again.`);
  const parsed = CodeSchema.safeParse(values);
  if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
  try {
    const clientAddress = clientAddressOf(context);
    const method = await verifySecondFactor(pending.user, parsed.data.code, clientAddress);
    // A fresh session id now that both steps passed (OWASP ASVS 3.2.1); the pending one ends.
    const cookie = await startSession(request, pending.user.id, clientAddress);
    await recordAuditEvent({ userId: pending.user.id, email: pending.user.email, clientAddress }, { organisationId: null, action: "user.signed-in", targetType: "user", targetId: pending.user.id, changes: { secondFactor: method } });
    const headers = new Headers({ "Set-Cookie": cookie });
    if (method === "recovery code") headers.append("Set-Cookie", await serializeFlash({ kind: "info", message: "Signed in with a recovery code, which no longer works. The count left is on your account page." }));
    throw redirect(safeRedirectPath(values.redirectTo), { headers });
  } catch (error) {
    return refusedForm(error, { ...values, code: "" });
  }
}

export default function SecondStep({ loaderData, actionData }: Route.ComponentProps) {
  const [searchParams] = useSearchParams();
  const navigation = useNavigation();
  const values = actionData?.values ?? {};
  const errors: Record<string, string> = actionData?.errors ?? {};
  return (
    <>
      <h1 className="text-display">Second step</h1>
      <p className="mt-2 text-sm text-ink-muted">
        Your password for <strong className="text-ink">{loaderData.email}</strong> is right. Enter the six-digit code your authenticator app shows now, or one of your recovery codes.
      </p>
      <Form method="post" className="mt-8 space-y-5" noValidate>
        <FormError message={errors.form && !errors.code ? errors.form : !actionData && loaderData.locked ? loaderData.locked : null} />
        <input type="hidden" name="redirectTo" value={searchParams.get("redirectTo") ?? values.redirectTo ?? ""} />
        <TextField
          label="Code"
          name="code"
          autoComplete="one-time-code"
          required
          maxLength={32}
          // eslint-disable-next-line jsx-a11y/no-autofocus -- the only field of the step the user just reached
          autoFocus
          spellCheck={false}
          error={errors.code}
          hint="A recovery code looks like abcde-23456 and works once."
        />
        <Button type="submit" className="w-full" disabled={navigation.state === "submitting"}>
          {navigation.state === "submitting" ? "Checking…" : "Continue"}
        </Button>
      </Form>
      <p className="mt-6 text-sm text-ink-muted">
        Lost your authenticator and your recovery codes? An owner of your organisation cannot read them either; ask the people who run this Sallyport server.{" "}
        <Link to="/login" className="underline underline-offset-4 hover:text-ink">
          Start over
        </Link>
      </p>
    </>
  );
}

export function headers({ actionHeaders }: Route.HeadersArgs) {
  return actionHeaders;
}
