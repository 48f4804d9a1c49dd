import { Form, Link, redirect, useNavigation } from "react-router";
import type { Route } from "./+types/signup";
import { PASSWORD_MIN_LENGTH } from "#server/auth/password-rules";
import { startSession } from "#server/auth/session.server";
import { signedInOf } from "#server/auth/guard.server";
import { fieldErrorsOf, formValues, invalidForm, readForm } from "#server/http/form.server";
import { SignUpSchema } from "#server/http/schemas";
import { createUserWithOrganisation } from "#server/services/organisations.server";
import { allowRequest, throttledRefusal } from "#server/auth/throttle.server";
import { Button } from "#app/components/ui/button";
import { FormError, TextField } from "#app/components/ui/field";
import { clientAddressOf } from "#server/http/request-context.server";
import { refusedForm } from "#server/http/refusals.server";

export const meta: Route.MetaFunction = () => [{ title: "Create an organisation · Sallyport" }];

export async function loader({ context }: Route.LoaderArgs) {
  if (signedInOf(context)) throw redirect("/");
  return null;
}

export async function action({ request, context }: Route.ActionArgs) {
  const values = formValues(await readForm(request));
  const parsed = SignUpSchema.safeParse(values);
  if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
  try {
    const verdict = await allowRequest("signup", parsed.data.email, clientAddressOf(context));
    if (verdict.throttled) throw throttledRefusal(verdict, "sign-ups", "email");
    const { user, organisation } = await createUserWithOrganisation(parsed.data, clientAddressOf(context));
    const cookie = await startSession(request, user.id, clientAddressOf(context));
    throw redirect(`/o/${organisation.slug}`, { headers: { "Set-Cookie": cookie } });
  } catch (error) {
    return refusedForm(error, values);
  }
}

export default function SignUp({ actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const errors: Record<string, string> = actionData?.errors ?? {};
  const values: Record<string, string> = actionData?.values ?? {};
  return (
    <>
      <h1 className="text-display">Create an organisation</h1>
      <p className="mt-2 text-sm text-ink-muted">
        You will be its owner and can invite your team. Already have an account?{" "}
        <Link to="/login" className="font-medium text-harbour underline underline-offset-4">
          Sign in
        </Link>
      </p>
      <Form method="post" className="mt-8 space-y-5" noValidate>
        <FormError message={errors.form} />
        <TextField label="Your name" name="name" autoComplete="name" required maxLength={100} defaultValue={values.name} error={errors.name} />
        <TextField label="Work e-mail" name="email" type="email" autoComplete="email" required maxLength={254} defaultValue={values.email} error={errors.email} />
        <TextField label="Organisation" name="organisationName" required maxLength={100} defaultValue={values.organisationName} error={errors.organisationName} hint="Your company, or the provider you work for." />
        <TextField
          label="Password"
          name="password"
          type="password"
          autoComplete="new-password"
          required
          minLength={PASSWORD_MIN_LENGTH}
          error={errors.password}
          hint={`At least ${PASSWORD_MIN_LENGTH} characters. Spaces and any characters are welcome; a few unrelated words make a strong one.`}
        />
        <Button type="submit" className="w-full" disabled={navigation.state === "submitting"}>
          Create organisation
        </Button>
      </Form>
    </>
  );
}

export function headers({ actionHeaders }: Route.HeadersArgs) {
  return actionHeaders;
}
