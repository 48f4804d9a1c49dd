import { Form, redirect, useNavigation } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/new";
import { serializeFlash } from "#server/auth/flash.server";
import { requireRole } from "#server/auth/guard.server";
import { actorOf } from "#server/http/actor.server";
import { fieldErrorsOf, formValues, invalidForm, readForm } from "#server/http/form.server";
import { ElementNameSchema, TimeZoneSchema } from "#server/http/schemas";
import { createDevice } from "#server/services/devices.server";
import { listSites } from "#server/services/sites.server";
import { newDocument } from "#server/workspace/index";
import { Button } from "#app/components/ui/button";
import { Card, PageHeader } from "#app/components/ui/card";
import { FormError, SelectField, TextField } from "#app/components/ui/field";
import { clientAddressOf } from "#server/http/request-context.server";
import { refusedForm } from "#server/http/refusals.server";

export const meta: Route.MetaFunction = () => [{ title: "New device · Sallyport" }];

export async function loader({ context }: Route.LoaderArgs) {
  const access = requireRole(context, "engineer");
  return { sites: (await listSites(access.organisation.id)).map((site) => ({ id: site.id, name: site.name })) };
}

const NewDeviceSchema = z.object({
  name: ElementNameSchema,
  siteId: z.string().uuid("Choose a site."),
  timezone: TimeZoneSchema,
});

export async function action({ request, context }: Route.ActionArgs) {
  const access = requireRole(context, "engineer");
  const values = formValues(await readForm(request));
  const parsed = NewDeviceSchema.safeParse(values);
  if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
  try {
    const device = await createDevice(access.organisation.id, parsed.data.siteId, newDocument(parsed.data.name, parsed.data.timezone), actorOf(access, clientAddressOf(context)), "Created the device");
    throw redirect(`/o/${access.organisation.slug}/devices/${device.id}/model/interfaces`, {
      headers: { "Set-Cookie": await serializeFlash({ kind: "success", message: `Device ${device.name} created. Add its interfaces next.` }) },
    });
  } catch (error) {
    return refusedForm(error, values);
  }
}

export default function NewDevice({ loaderData, actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const errors: Record<string, string> = actionData?.errors ?? {};
  const values: Record<string, string> = actionData?.values ?? {};
  return (
    <>
      <PageHeader title="New device" description="Name the appliance and choose its site; you then describe its interfaces, accounts and inbound rules." />
      <Card className="max-w-xl p-6">
        <Form method="post" className="space-y-5" noValidate>
          <FormError message={errors.form} />
          <TextField label="Device name" name="name" required maxLength={63} defaultValue={values.name} error={errors.name} hint="As the team calls it, e.g. bwc-edge-02. Letters, digits, dot, underscore, dash." />
          <SelectField label="Site" name="siteId" defaultValue={values.siteId ?? ""} error={errors.siteId}>
            <option value="" disabled>
              Choose a site…
            </option>
            {loaderData.sites.map((site) => (
              <option key={site.id} value={site.id}>
                {site.name}
              </option>
            ))}
          </SelectField>
          <TextField label="Time zone" name="timezone" defaultValue={values.timezone ?? "UTC"} error={errors.timezone} hint="The device's IANA time zone; schedules are read in it." />
          <Button type="submit" disabled={navigation.state === "submitting"}>
            Create device
          </Button>
        </Form>
      </Card>
    </>
  );
}
