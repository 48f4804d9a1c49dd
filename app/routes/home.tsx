import { Form, Link, redirect } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/home";
import { requireSignedIn } from "#server/auth/guard.server";
import { fieldErrorsOf, formValues, invalidForm, readForm } from "#server/http/form.server";
import { OrganisationNameSchema } from "#server/http/schemas";
import { createOrganisationForUser, listOrganisationsOfUser } from "#server/services/organisations.server";
import { BrandMark } from "#app/components/brand";
import { Button } from "#app/components/ui/button";
import { TextField } from "#app/components/ui/field";
import { clientAddressOf } from "#server/http/request-context.server";

export const meta: Route.MetaFunction = () => [{ title: "Sallyport" }];

// The start page sends a member to their first organisation; someone in none may create one.
export async function loader({ request, context }: Route.LoaderArgs) {
  const { user } = requireSignedIn(context, request);
  const organisations = await listOrganisationsOfUser(user.id);
  if (organisations.length > 0) throw redirect(`/o/${organisations[0].slug}`);
  return { name: user.name };
}

export async function action({ request, context }: Route.ActionArgs) {
  const { user } = requireSignedIn(context, request);
  const values = formValues(await readForm(request));
  const parsed = z.object({ organisationName: OrganisationNameSchema }).safeParse(values);
  if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
  const organisation = await createOrganisationForUser(user, parsed.data.organisationName, clientAddressOf(context));
  throw redirect(`/o/${organisation.slug}`);
}

export default function Home({ loaderData, actionData }: Route.ComponentProps) {
  return (
    <main className="mx-auto max-w-md px-6 py-20">
      <BrandMark className="size-10 text-harbour" />
      <h1 className="mt-6 text-display">Welcome, {loaderData.name}</h1>
      <p className="mt-2 text-sm text-ink-muted">You are not a member of any organisation. Ask an administrator for an invitation, or create an organisation of your own.</p>
      <Form method="post" className="mt-8 space-y-5" noValidate>
        <TextField label="Organisation" name="organisationName" required maxLength={100} defaultValue={actionData?.values.organisationName} error={actionData?.errors.organisationName} />
        <Button type="submit">Create organisation</Button>
      </Form>
      <Form method="post" action="/logout" className="mt-10 flex items-center gap-4">
        <Button type="submit" variant="ghost" size="sm">
          Sign out
        </Button>
        <Link to="/account" className="text-sm text-ink-muted underline underline-offset-4">
          Your account
        </Link>
      </Form>
    </main>
  );
}
