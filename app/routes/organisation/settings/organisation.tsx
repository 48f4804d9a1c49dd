import { Form, redirect, useNavigation } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/organisation";
import { serializeFlash } from "#server/auth/flash.server";
import { requireRole } from "#server/auth/guard.server";
import { actorOf } from "#server/http/actor.server";
import { fieldErrorsOf, formValues, invalidForm, readForm } from "#server/http/form.server";
import { OrganisationNameSchema } from "#server/http/schemas";
import { renameOrganisation } from "#server/services/organisations.server";
import { Button } from "#app/components/ui/button";
import { Card } from "#app/components/ui/card";
import { TextField } from "#app/components/ui/field";
import { clientAddressOf } from "#server/http/request-context.server";

export const meta: Route.MetaFunction = () => [{ title: "Organisation · Sallyport" }];

export async function loader({ context }: Route.LoaderArgs) {
  const access = requireRole(context);
  return { name: access.organisation.name, slug: access.organisation.slug, isOwner: access.role === "owner" };
}

export async function action({ request, context }: Route.ActionArgs) {
  const access = requireRole(context, "owner");
  const values = formValues(await readForm(request));
  const parsed = z.object({ name: OrganisationNameSchema }).safeParse(values);
  if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
  await renameOrganisation(access.organisation, parsed.data.name, actorOf(access, clientAddressOf(context)));
  throw redirect(`/o/${access.organisation.slug}/settings/organisation`, { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message: "Organisation renamed." }) } });
}

export default function OrganisationSettings({ loaderData, actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  return (
    <Card className="max-w-xl p-5">
      <h2 className="text-sm font-semibold">Organisation</h2>
      <p className="mt-1 text-sm text-ink-muted">
        Its address stays <code>/o/{loaderData.slug}</code> when renamed, so links keep working.
      </p>
      {loaderData.isOwner ? (
        <Form method="post" className="mt-4 space-y-4" noValidate>
          <TextField label="Name" name="name" required maxLength={100} defaultValue={actionData?.values.name ?? loaderData.name} error={actionData?.errors.name} />
          <Button type="submit" disabled={navigation.state === "submitting"}>
            Rename
          </Button>
        </Form>
      ) : (
        <p className="mt-4 text-sm">
          <span className="font-medium">{loaderData.name}</span> — only an owner can rename the organisation.
        </p>
      )}
    </Card>
  );
}
