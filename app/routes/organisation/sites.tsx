import { useState } from "react";
import { data, Form, Link, redirect, useNavigation, useSearchParams } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/sites";
import { serializeFlash } from "#server/auth/flash.server";
import { requireRole } from "#server/auth/guard.server";
import { hasAtLeastRole } from "#server/auth/roles";
import { actorOf } from "#server/http/actor.server";
import { fieldErrorsOf, formValues, invalidForm, readForm, unknownIntent } from "#server/http/form.server";
import { IdSchema, SiteSchema } from "#server/http/schemas";
import { createSite, deleteSite, listSites, updateSite, type SiteRow } from "#server/services/sites.server";
import { Button } from "#app/components/ui/button";
import { Card, PageHeader } from "#app/components/ui/card";
import { Dialog } from "#app/components/ui/dialog";
import { EmptyState } from "#app/components/ui/empty-state";
import { FormError, TextField } from "#app/components/ui/field";
import { SortHeader } from "#app/components/ui/sort-header";
import { nameTie, tableRows, urlSort, type ColumnDef } from "#app/components/ui/table-rows";
import { Table, Td, Th } from "#app/components/ui/table";
import { formatNumber } from "#server/engine/format";
import { clientAddressOf } from "#server/http/request-context.server";
import { refusedForm } from "#server/http/refusals.server";
import { PageErrorBoundary } from "#app/components/error-panel";

export const meta: Route.MetaFunction = () => [{ title: "Sites · Sallyport" }];

// A refusal (a role too low, say) shows inside the organisation's frame.
export const ErrorBoundary = PageErrorBoundary;

// Sortable columns (?sort=) and the location, all searched by ?q=.
const COLUMNS = [
  { id: "name", accessorFn: (site) => site.name.toLowerCase(), enableGlobalFilter: true },
  { id: "customer", accessorFn: (site) => site.customer.toLowerCase(), enableGlobalFilter: true },
  { id: "devices", accessorKey: "deviceCount" },
] as const satisfies readonly ColumnDef<SiteRow>[];
const LOCATION = { id: "location", accessorKey: "location", enableGlobalFilter: true } as const satisfies ColumnDef<SiteRow>;

export async function loader({ request, context }: Route.LoaderArgs) {
  const access = requireRole(context);
  const url = new URL(request.url);
  const { sort, descending, sorting } = urlSort(url.searchParams, COLUMNS);
  const sites = tableRows(await listSites(access.organisation.id), [...COLUMNS, LOCATION, nameTie<SiteRow>()], { globalFilter: (url.searchParams.get("q") ?? "").trim().slice(0, 100), sorting });
  return { sites, sort, descending, canEdit: hasAtLeastRole(access.role, "engineer") };
}

export async function action({ request, context }: Route.ActionArgs) {
  const access = requireRole(context, "engineer");
  const actor = actorOf(access, clientAddressOf(context));
  const values = formValues(await readForm(request));
  const organisationId = access.organisation.id;
  const done = async (message: string) =>
    redirect(`/o/${access.organisation.slug}/sites`, { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message }) } });

  switch (values.intent) {
    case "create":
    case "update": {
      const parsed = SiteSchema.safeParse(values);
      if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
      try {
        if (values.intent === "create") {
          await createSite(organisationId, parsed.data, actor);
          return done(`Site "${parsed.data.name}" created.`);
        }
        const siteId = IdSchema.safeParse(values.siteId);
        if (!siteId.success) throw data({ message: "That site identifier is not valid." }, { status: 400 });
        const updated = await updateSite(organisationId, siteId.data, parsed.data, actor);
        if (!updated) throw data({ message: "No such site in this organisation." }, { status: 404 });
        return done(`Site "${parsed.data.name}" saved.`);
      } catch (error) {
        return refusedForm(error, values);
      }
    }
    case "delete": {
      const parsed = z.object({ siteId: IdSchema }).safeParse(values);
      if (!parsed.success) throw data({ message: "That site identifier is not valid." }, { status: 400 });
      try {
        if (!(await deleteSite(organisationId, parsed.data.siteId, actor))) throw data({ message: "No such site in this organisation." }, { status: 404 });
      } catch (error) {
        return refusedForm(error, values);
      }
      return done("Site deleted.");
    }
    default:
      return unknownIntent(values.intent);
  }
}

function SiteForm({ site, errors, values, intent }: { site?: SiteRow; errors: Record<string, string>; values: Record<string, string>; intent: "create" | "update" }) {
  const navigation = useNavigation();
  return (
    <Form method="post" className="grid gap-4 sm:grid-cols-[1fr_1fr_1fr_auto] sm:items-start" noValidate>
      <input type="hidden" name="intent" value={intent} />
      {site ? <input type="hidden" name="siteId" value={site.id} /> : null}
      <TextField label="Site name" name="name" required maxLength={100} defaultValue={values.name ?? site?.name} error={errors.name} />
      <TextField label="Customer" name="customer" maxLength={100} defaultValue={values.customer ?? site?.customer} error={errors.customer} />
      <TextField label="Location" name="location" maxLength={200} defaultValue={values.location ?? site?.location} error={errors.location} />
      <div className="flex gap-2 sm:pt-7">
        <Button type="submit" disabled={navigation.state === "submitting"}>
          {intent === "create" ? "Add site" : "Save"}
        </Button>
        {site ? (
          <Link to="." className="inline-flex h-10 items-center px-3 text-sm text-ink-muted underline underline-offset-4">
            Cancel
          </Link>
        ) : null}
      </div>
    </Form>
  );
}

export default function Sites({ loaderData, actionData }: Route.ComponentProps) {
  const [searchParams] = useSearchParams();
  const [deleting, setDeleting] = useState<SiteRow | null>(null);
  const editing = loaderData.sites.find((site) => site.id === searchParams.get("edit"));
  const errors: Record<string, string> = actionData?.errors ?? {};
  const values: Record<string, string> = actionData?.values ?? {};
  const submittedIntent = values.intent;
  return (
    <>
      <PageHeader title="Sites" description="Customer locations that group devices. Each device will belong to one site." />
      {loaderData.canEdit ? (
        <Card className="mb-6 p-5">
          <h2 className="mb-4 text-sm font-semibold">{editing ? `Edit ${editing.name}` : "New site"}</h2>
          <FormError message={errors.form} />
          <SiteForm
            key={editing?.id ?? "new"}
            site={editing}
            intent={editing ? "update" : "create"}
            errors={submittedIntent === (editing ? "update" : "create") ? errors : {}}
            values={submittedIntent === (editing ? "update" : "create") ? values : {}}
          />
        </Card>
      ) : null}
      <Form method="get" role="search" className="mb-4 flex items-end gap-3">
        <label className="text-sm">
          <span className="mb-1 block font-medium">Search sites</span>
          <input name="q" defaultValue={searchParams.get("q") ?? ""} placeholder="Site, customer or location" className="h-9 w-72 rounded-control border border-line-strong bg-surface px-3 text-sm" />
        </label>
        <button type="submit" className="h-9 rounded-control border border-line-strong bg-surface px-3 text-sm font-medium hover:bg-surface-sunken">
          Search
        </button>
      </Form>
      {loaderData.sites.length === 0 ? (
        <EmptyState title="No sites yet">{loaderData.canEdit ? "Add the first customer location above." : "An engineer or administrator can add sites."}</EmptyState>
      ) : (
        <Table>
          <caption className="sr-only">Sites of this organisation</caption>
          <thead>
            <tr>
              <SortHeader column="name" label="Site" sort={loaderData.sort} descending={loaderData.descending} />
              <SortHeader column="customer" label="Customer" sort={loaderData.sort} descending={loaderData.descending} />
              <Th>Location</Th>
              <SortHeader column="devices" label="Devices" sort={loaderData.sort} descending={loaderData.descending} />
              {loaderData.canEdit ? <Th className="text-right">Actions</Th> : null}
            </tr>
          </thead>
          <tbody>
            {loaderData.sites.map((site) => (
              <tr key={site.id}>
                <Td className="font-medium">{site.name}</Td>
                <Td>{site.customer}</Td>
                <Td className="text-ink-muted">{site.location}</Td>
                <Td className="tabular">{formatNumber(site.deviceCount)}</Td>
                {loaderData.canEdit ? (
                  <Td className="text-right whitespace-nowrap">
                    <Link to={`?edit=${site.id}`} className="mr-3 text-sm text-harbour underline underline-offset-4" aria-label={`Edit ${site.name}`}>
                      Edit
                    </Link>
                    <button type="button" className="text-sm text-danger underline underline-offset-4" onClick={() => setDeleting(site)} aria-label={`Delete ${site.name}`}>
                      Delete
                    </button>
                  </Td>
                ) : null}
              </tr>
            ))}
          </tbody>
        </Table>
      )}
      <Dialog
        open={deleting !== null}
        onClose={() => setDeleting(null)}
        title={`Delete ${deleting?.name ?? "site"}?`}
        footer={
          <Form method="post" onSubmit={() => setDeleting(null)}>
            <input type="hidden" name="intent" value="delete" />
            <input type="hidden" name="siteId" value={deleting?.id ?? ""} />
            <Button type="submit" variant="danger">
              Delete site
            </Button>
          </Form>
        }
      >
        The site is removed for everyone in this organisation. The audit log keeps a record of it.
      </Dialog>
    </>
  );
}
