import { useState } from "react";
import { Form, redirect, useNavigation } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/new";
import { serializeFlash } from "#server/auth/flash.server";
import { requireRole } from "#server/auth/guard.server";
import { PAGE_ROLES } from "#server/auth/roles";
import { actorOf } from "#server/http/actor.server";
import { fieldErrorsOf, formValues, invalidForm, readForm } from "#server/http/form.server";
import { ElementNameSchema, TimeZoneSchema } from "#server/http/schemas";
import { createDevice } from "#server/services/devices.server";
import { siteNames } from "#server/services/sites.server";
import { newDocument } from "#server/workspace/index";
import { Button } from "#app/components/ui/button";
import { Card, PageHeader } from "#app/components/ui/card";
import { FormError, SelectField, TextField } from "#app/components/ui/field";
import { clientAddressOf } from "#server/http/request-context.server";
import { refusedForm } from "#server/http/refusals.server";
import { PageErrorBoundary } from "#app/components/error-panel";

export const meta: Route.MetaFunction = () => [{ title: "New device · Sallyport" }];

// A refusal (a role too low, say) shows inside the organisation's frame.
export const ErrorBoundary = PageErrorBoundary;

export async function loader({ context }: Route.LoaderArgs) {
  const access = requireRole(context, PAGE_ROLES.newDevice);
  return { sites: await siteNames(access.organisation.id) };
}

/** The value of the site choice that creates a new site with the device. */
const NEW_SITE = "new";

const NewDeviceSchema = z
  .object({
    name: ElementNameSchema,
    siteId: z.string({ error: "Choose a site, or name a new one." }).trim().min(1, "Choose a site, or name a new one."),
    siteName: z.string().trim().max(100, "Use at most 100 characters.").default(""),
    timezone: TimeZoneSchema,
  })
  .superRefine((value, context) => {
    if (value.siteId === NEW_SITE && !value.siteName) context.addIssue({ code: "custom", path: ["siteName"], message: "Name the new site, e.g. the customer's office or plant." });
  });

export async function action({ request, context }: Route.ActionArgs) {
  const access = requireRole(context, PAGE_ROLES.newDevice);
  const values = formValues(await readForm(request));
  const parsed = NewDeviceSchema.safeParse(values);
  if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
  try {
    const { siteId, siteName } = parsed.data;
    const site = siteId === NEW_SITE ? { newSite: { name: siteName, customer: "", location: "" }, field: "siteName" } : siteId;
    const device = await createDevice(access.organisation.id, site, newDocument(parsed.data.name, parsed.data.timezone), actorOf(access, clientAddressOf(context)), "Created the device");
    throw redirect(`/o/${access.organisation.slug}/devices/${device.id}/model/interfaces`, {
      headers: { "Set-Cookie": await serializeFlash({ kind: "success", message: `Device ${device.name} created${siteId === NEW_SITE ? ` at the new site ${siteName}` : ""}. Add its interfaces next.` }) },
    });
  } catch (error) {
    return refusedForm(error, values);
  }
}

export default function NewDevice({ loaderData, actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const errors: Record<string, string> = actionData?.errors ?? {};
  const values: Record<string, string> = actionData?.values ?? {};
  const { sites } = loaderData;
  // With no site yet, the first one is named right here; otherwise a new one is one choice away.
  const [siteChoice, setSiteChoice] = useState(values.siteId ?? (sites.length === 0 ? NEW_SITE : ""));
  return (
    <>
      <PageHeader title="New device" description="Name the appliance and choose its site; you then describe its interfaces, accounts and inbound rules." />
      <Card className="max-w-xl p-6">
        <Form method="post" className="space-y-5" noValidate>
          <FormError message={errors.form} />
          <TextField label="Device name" name="name" required maxLength={63} defaultValue={values.name} error={errors.name} hint="As the team calls it, e.g. bwc-edge-02. Letters, digits, dot, underscore, dash." />
          {sites.length === 0 ? (
            <input type="hidden" name="siteId" value={NEW_SITE} />
          ) : (
            <SelectField label="Site" name="siteId" value={siteChoice} onChange={(event) => setSiteChoice(event.currentTarget.value)} error={errors.siteId}>
              <option value="" disabled>
                Choose a site…
              </option>
              {sites.map((site) => (
                <option key={site.id} value={site.id}>
                  {site.name}
                </option>
              ))}
              <option value={NEW_SITE}>A new site…</option>
            </SelectField>
          )}
          {siteChoice === NEW_SITE ? (
            <TextField
              label={sites.length === 0 ? "Site" : "New site's name"}
              name="siteName"
              required
              maxLength={100}
              defaultValue={values.siteName}
              error={errors.siteName}
              hint={
                sites.length === 0
                  ? "Devices are grouped by site, and this organisation has none yet: name the first one (a customer location, or your own office). It is created with the device; add its customer and location on the Sites page."
                  : "Created with the device; add its customer and location on the Sites page."
              }
            />
          ) : null}
          <TextField label="Time zone" name="timezone" defaultValue={values.timezone ?? "UTC"} error={errors.timezone} hint="The device's IANA time zone; schedules are read in it." />
          <Button type="submit" disabled={navigation.state === "submitting"}>
            Create device
          </Button>
        </Form>
      </Card>
    </>
  );
}
