import { data, Form, Link, redirect, useNavigation } from "react-router";
import type { Route } from "./+types/confirm-email";
import { serializeFlash } from "#server/auth/flash.server";
import { signedInOf } from "#server/auth/guard.server";
import { readForm } from "#server/http/form.server";
import { clientAddressOf } from "#server/http/request-context.server";
import { refusedForm } from "#server/http/refusals.server";
import { confirmEmailChange, findEmailChange } from "#server/services/account.server";
import { Button } from "#app/components/ui/button";
import { FormError } from "#app/components/ui/field";

export const meta: Route.MetaFunction = () => [{ title: "Confirm your new e-mail address · Sallyport" }];

const EXPIRED = "This confirmation link has expired or was used already. Ask for a new one on your account page.";

// Opening the link only asks; the change is a POST, so a mail scanner that fetches links
// cannot spend it. Signing in is not needed: the link itself shows the address is yours.
export async function loader({ params }: Route.LoaderArgs) {
  const change = await findEmailChange(params.token);
  if (!change) throw data({ message: EXPIRED }, { status: 404 });
  return { newEmail: change.newEmail };
}

export async function action({ request, params, context }: Route.ActionArgs) {
  await readForm(request);
  let changed: Awaited<ReturnType<typeof confirmEmailChange>>;
  try {
    changed = await confirmEmailChange(params.token, clientAddressOf(context));
  } catch (error) {
    return refusedForm(error, {});
  }
  if (!changed) return data({ ok: false as const, errors: { form: EXPIRED } }, { status: 404 });
  const signedIn = signedInOf(context);
  const flash = await serializeFlash({ kind: "success", message: `You now sign in with ${changed.to}.` });
  throw redirect(signedIn?.user.id === changed.userId ? "/account" : "/login", { headers: { "Set-Cookie": flash } });
}

export default function ConfirmEmail({ loaderData, actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  return (
    <>
      <h1 className="text-display">Confirm your new e-mail address</h1>
      <p className="mt-2 text-sm text-ink-muted">
        Your Sallyport account will sign in with <strong className="text-ink">{loaderData.newEmail}</strong> from now on. We will tell your old address.
      </p>
      <Form method="post" className="mt-8 space-y-5">
        <FormError message={actionData?.errors.form} />
        {actionData?.errors.form ? (
          <p className="text-sm">
            <Link to="/account" className="underline">
              Go to your account
            </Link>
          </p>
        ) : null}
        <Button type="submit" className="w-full" disabled={navigation.state === "submitting"}>
          Use this address
        </Button>
      </Form>
    </>
  );
}
