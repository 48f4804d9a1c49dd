import { data, Form, Link, redirect, useNavigation } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/second-factor";
import { requireSignedIn } from "#server/auth/guard.server";
import { serializeFlash } from "#server/auth/flash.server";
import { fieldErrorsOf, formValues, invalidForm, readForm, unknownIntent } from "#server/http/form.server";
import { refusedForm } from "#server/http/refusals.server";
import { clientAddressOf } from "#server/http/request-context.server";
import { confirmEnrolment, disableSecondFactor, ENROLMENT_MINUTES, regenerateRecoveryCodes, secondFactorStatus, startEnrolment } from "#server/services/second-factor.server";
import { formatDuration } from "#server/engine/format";
import { BrandHomeLink } from "#app/components/brand";
import { Button, ButtonLink } from "#app/components/ui/button";
import { Card, PageHeader } from "#app/components/ui/card";
import { FormError, TextField } from "#app/components/ui/field";
import { Time } from "#app/components/ui/time";

export const meta: Route.MetaFunction = () => [{ title: "Second factor · Sallyport" }];

const CodeField = z.string().trim().min(1, "Enter the code your authenticator app shows now, or a recovery code.").max(32, "That is longer than any code.");
const ConfirmSchema = z.object({ code: z.string().trim().regex(/^\d{6}$/, "Enter the six digits your authenticator app shows now.") });
const RegenerateSchema = z.object({ code: CodeField });
const DisableSchema = z.object({ currentPassword: z.string().min(1, "Enter your current password.").max(1024, "That password is too long."), code: CodeField });

// A few codes left: time to make new ones before the last is used.
const FEW_RECOVERY_CODES = 3;

export async function loader({ request, context }: Route.LoaderArgs) {
  const signedIn = requireSignedIn(context, request);
  const status = await secondFactorStatus(signedIn.user);
  return { ...status, email: signedIn.user.email, mustEnrol: signedIn.enrolmentRequired, enrolmentMinutes: ENROLMENT_MINUTES, now: new Date().toISOString() };
}

export async function action({ request, context }: Route.ActionArgs) {
  const { user } = requireSignedIn(context, request);
  const values = formValues(await readForm(request));
  const clientAddress = clientAddressOf(context);
  const back = async (message: string) => redirect("/account/second-factor", { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message }) } });
  // Recovery codes are in this answer only: never redirected through a cookie, never cached.
  const shown = (recoveryCodes: string[], reason: "enrolled" | "replaced") => data({ recoveryCodes, reason }, { headers: { "Cache-Control": "no-store" } });
  try {
    switch (values.intent) {
      case "start":
        await startEnrolment(user);
        return back(`A new secret is ready: add it to your authenticator app within ${formatDuration(ENROLMENT_MINUTES, "minute")}.`);
      case "confirm": {
        const parsed = ConfirmSchema.safeParse(values);
        if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
        return shown(await confirmEnrolment(user, parsed.data.code, clientAddress), "enrolled");
      }
      case "regenerate": {
        const parsed = RegenerateSchema.safeParse(values);
        if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
        return shown(await regenerateRecoveryCodes(user, parsed.data.code, clientAddress), "replaced");
      }
      case "disable": {
        const parsed = DisableSchema.safeParse(values);
        if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
        await disableSecondFactor(user, parsed.data, clientAddress);
        return back("The second factor is off: you sign in with your password alone.");
      }
      default:
        return unknownIntent(values.intent);
    }
  } catch (error) {
    return refusedForm(error, { ...values, code: "" });
  }
}

type Failure = { errors: Record<string, string>; values: Record<string, string> };

function failureFor(result: Route.ComponentProps["actionData"], intent: string): Failure {
  return result && "errors" in result && result.values.intent === intent ? result : { errors: {}, values: {} };
}

export default function SecondFactor({ loaderData, actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const busy = navigation.state === "submitting";
  const shown = actionData && "recoveryCodes" in actionData ? actionData : null;
  const confirm = failureFor(actionData, "confirm");
  const regenerate = failureFor(actionData, "regenerate");
  const disable = failureFor(actionData, "disable");
  const start = failureFor(actionData, "start");
  return (
    <main className="mx-auto max-w-3xl px-4 py-8 sm:px-6 sm:py-10">
      <div className="mb-8 flex flex-wrap items-center justify-between gap-3">
        <BrandHomeLink />
        <div className="flex items-center gap-3 text-sm">
          {loaderData.mustEnrol ? null : (
            <Link to="/account" className="text-ink-muted underline underline-offset-4 hover:text-ink">
              Your account
            </Link>
          )}
          <Form method="post" action="/logout">
            <Button type="submit" variant="secondary" size="sm">
              Sign out
            </Button>
          </Form>
        </div>
      </div>
      <PageHeader
        title="Second factor"
        description={`With a second factor, signing in to Sallyport as ${loaderData.email} takes your password and a six-digit code from an authenticator app on your phone, which changes every 30 seconds.`}
      />

      {loaderData.mustEnrol ? (
        <p className="mb-6 rounded-control border border-warning/40 bg-warning-soft px-4 py-3 text-sm text-warning" role="alert">
          {loaderData.requiredBy.join(", ")} {loaderData.requiredBy.length === 1 ? "requires" : "require"} a second factor of every member. Set one up here to continue; until then this page and
          signing out are all you can use.
        </p>
      ) : null}

      {shown ? (
        <Card className="mb-6 p-5" aria-labelledby="recovery-codes-heading">
          <h2 id="recovery-codes-heading" className="text-sm font-semibold">
            {shown.reason === "enrolled" ? "Second factor on — save your recovery codes" : "New recovery codes"}
          </h2>
          <p className="mt-1 text-sm text-ink-muted">
            If you lose your phone, each of these signs you in once instead of a code. Keep them somewhere other than the phone (a password manager, or printed and locked away). They are not shown
            again{shown.reason === "replaced" ? "; the earlier ones no longer work" : ""}.
          </p>
          <ol className="mt-4 grid grid-cols-2 gap-x-6 gap-y-1 font-mono text-sm sm:grid-cols-5" aria-label="Recovery codes">
            {shown.recoveryCodes.map((code) => (
              <li key={code}>{code}</li>
            ))}
          </ol>
          <ButtonLink to="/" className="mt-5">
            I have saved them — continue
          </ButtonLink>
        </Card>
      ) : null}

      {loaderData.enabled ? (
        <div className="grid gap-6">
          <Card className="p-5">
            <h2 className="text-sm font-semibold">On</h2>
            <p className="mt-1 text-sm text-ink-muted">
              On since <Time at={loaderData.enabledAt!} now={loaderData.now} />. Recovery codes left:{" "}
              <strong className={loaderData.recoveryCodesLeft <= FEW_RECOVERY_CODES ? "text-warning" : "text-ink"}>{loaderData.recoveryCodesLeft}</strong>
              {loaderData.recoveryCodesLeft <= FEW_RECOVERY_CODES ? " — make new ones before the last is used." : "."}
            </p>
          </Card>
          <Card className="p-5">
            <h2 className="text-sm font-semibold">New recovery codes</h2>
            <p className="mt-1 text-sm text-ink-muted">Ten new codes replace every earlier one, used or not.</p>
            <Form method="post" className="mt-4 space-y-4" noValidate aria-label="Make new recovery codes">
              <input type="hidden" name="intent" value="regenerate" />
              <FormError message={regenerate.errors.form && !regenerate.errors.code ? regenerate.errors.form : null} />
              <TextField label="Current code" className="max-w-xs" name="code" autoComplete="one-time-code" required maxLength={32} spellCheck={false} error={regenerate.errors.code} />
              <Button type="submit" variant="secondary" disabled={busy}>
                Make new recovery codes
              </Button>
            </Form>
          </Card>
          <Card className="p-5">
            <h2 className="text-sm font-semibold">Turn the second factor off</h2>
            <p className="mt-1 text-sm text-ink-muted">
              Your password alone will sign you in. To move to a new phone, turn it off and set it up again.
              {loaderData.requiredBy.length > 0 ? ` ${loaderData.requiredBy.join(", ")} ${loaderData.requiredBy.length === 1 ? "requires" : "require"} one: you will be asked to set it up again at once.` : ""}
            </p>
            <Form method="post" className="mt-4 space-y-4" noValidate aria-label="Turn the second factor off">
              <input type="hidden" name="intent" value="disable" />
              <input type="text" name="username" autoComplete="username" value={loaderData.email} readOnly hidden />
              <FormError message={disable.errors.form && !disable.errors.code && !disable.errors.currentPassword ? disable.errors.form : null} />
              <TextField label="Current password" className="max-w-xs" name="currentPassword" type="password" autoComplete="current-password" required error={disable.errors.currentPassword} />
              <TextField label="Code from the app, or a recovery code" className="max-w-xs" name="code" autoComplete="one-time-code" required maxLength={32} spellCheck={false} error={disable.errors.code} />
              <Button type="submit" variant="danger" disabled={busy}>
                Turn off
              </Button>
            </Form>
          </Card>
        </div>
      ) : loaderData.offer ? (
        <Card className="p-5">
          <h2 className="text-sm font-semibold">Set up your authenticator app</h2>
          <ol className="mt-3 list-decimal space-y-2 pl-5 text-sm text-ink-muted">
            <li>In an authenticator app on your phone, add an account by scanning this code.</li>
            <li>Or type the secret below into the app (time-based, six digits, 30 seconds).</li>
            <li>Enter the code the app then shows, to confirm it works.</li>
          </ol>
          <div className="mt-5 flex flex-col gap-5 sm:flex-row sm:items-start">
            {/* Drawn on the server by the qrcode package from our own otpauth:// address; a white
                field keeps it readable by cameras in the dark theme too. */}
            <div
              className="size-48 shrink-0 rounded-control bg-white p-1 [&>svg]:size-full"
              role="img"
              aria-label="QR code of the secret for your authenticator app"
              dangerouslySetInnerHTML={{ __html: loaderData.offer.qrSvg }}
            />
            <div className="min-w-0 space-y-2 text-sm">
              <p className="text-ink-muted">Secret</p>
              <code className="block font-mono text-base break-all text-ink" data-testid="totp-secret" data-secret={loaderData.offer.secret}>
                {loaderData.offer.grouped}
              </code>
              <p className="text-xs text-ink-muted">
                Drawn <Time at={loaderData.offer.startedAt} now={loaderData.now} />; confirm it within {formatDuration(loaderData.enrolmentMinutes, "minute")}. Anyone who sees it can make your codes: do not share
                a screenshot of this page.
              </p>
            </div>
          </div>
          <Form method="post" className="mt-5 space-y-4" noValidate aria-label="Confirm the second factor">
            <input type="hidden" name="intent" value="confirm" />
            <FormError message={confirm.errors.form && !confirm.errors.code ? confirm.errors.form : null} />
            <TextField label="Code from the app" className="max-w-xs" name="code" inputMode="numeric" autoComplete="one-time-code" required maxLength={6} spellCheck={false} error={confirm.errors.code} />
            <div className="flex flex-wrap gap-3">
              <Button type="submit" disabled={busy}>
                Confirm and turn on
              </Button>
            </div>
          </Form>
          <Form method="post" className="mt-3">
            <input type="hidden" name="intent" value="start" />
            <Button type="submit" variant="ghost" size="sm" disabled={busy}>
              Draw a new secret instead
            </Button>
          </Form>
        </Card>
      ) : (
        <Card className="p-5">
          <h2 className="text-sm font-semibold">Off</h2>
          <p className="mt-1 text-sm text-ink-muted">
            You sign in with your password alone. Turning a second factor on takes an authenticator app (any app for time-based codes, RFC 6238) and a minute. You also get ten single-use recovery
            codes for the day the phone is lost.
          </p>
          <Form method="post" className="mt-4" noValidate>
            <input type="hidden" name="intent" value="start" />
            <FormError message={start.errors.form} />
            <Button type="submit" disabled={busy}>
              Set up a second factor
            </Button>
          </Form>
        </Card>
      )}
      <p className="mt-6 text-xs text-ink-muted">
        Someone who loses both the phone and the recovery codes cannot sign in until an admin or owner of their organisation resets the second factor, after making sure by a way other than
        e-mail that the request is theirs. Follow your organisation&apos;s policy for keeping them.
      </p>
    </main>
  );
}

// A refused or throttled code answers 400/429 with Retry-After on the page itself.
export function headers({ actionHeaders }: Route.HeadersArgs) {
  return actionHeaders;
}
