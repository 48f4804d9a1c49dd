import { Form, Link, redirect, useNavigation, useSearchParams } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/shared-objects";
import { serializeFlash } from "#server/auth/flash.server";
import { requireRole } from "#server/auth/guard.server";
import { hasAtLeastRole } from "#server/auth/roles";
import { actorOf } from "#server/http/actor.server";
import { fieldErrorsOf, formValues, invalidForm, readForm, unknownIntent } from "#server/http/form.server";
import { ElementNameSchema } from "#server/http/schemas";
import { deleteSharedObject, importSharedObjectsCsv, listSharedObjects, saveSharedObject } from "#server/services/shared-objects.server";
import { TextAreaField } from "#app/components/device/editor-kit";
import { Badge, Card } from "#app/components/ui/card";
import { Button } from "#app/components/ui/button";
import { EmptyState } from "#app/components/ui/empty-state";
import { FormError, LabelledOptions, SelectField, TextField } from "#app/components/ui/field";
import { SHARED_OBJECT_KINDS, type SharedObjectKind } from "#models/shared-address-object";
import { Table, Td, Th } from "#app/components/ui/table";
import { clientAddressOf } from "#server/http/request-context.server";
import { refusedForm } from "#server/http/refusals.server";
import { formatNumber } from "#server/engine/format";

export const meta: Route.MetaFunction = () => [{ title: "Shared objects · Sallyport" }];

export async function loader({ context }: Route.LoaderArgs) {
  const access = requireRole(context);
  return { objects: await listSharedObjects(access.organisation.id), canManage: hasAtLeastRole(access.role, "admin") };
}

const KIND_LABELS: Record<SharedObjectKind, string> = { address: "address object (entries)", group: "group (member names)" };

const SharedObjectSchema = z.object({
  original: z.string().trim().max(63).optional().transform((value) => value || null),
  kind: z.enum(SHARED_OBJECT_KINDS, { message: "Choose address object or group." }),
  name: ElementNameSchema,
  items: z
    .string()
    .max(20_000, "That list is too long.")
    .transform((text) => text.split(/[\s,]+/).filter(Boolean))
    .pipe(z.array(z.string()).min(1, "Enter at least one entry or member.")),
  description: z.string().trim().max(300, "Use at most 300 characters.").default(""),
});

export async function action({ request, context }: Route.ActionArgs) {
  const access = requireRole(context, "admin");
  const actor = actorOf(access, clientAddressOf(context));
  const form = await readForm(request);
  const values = formValues(form);
  const back = async (message: string) => redirect(`/o/${access.organisation.slug}/settings/shared-objects`, { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message }) } });
  try {
    switch (values.intent) {
      case "save": {
        const parsed = SharedObjectSchema.safeParse(values);
        if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
        const { original, ...input } = parsed.data;
        await saveSharedObject(access.organisation.id, original, input, actor);
        return back(`Shared ${input.kind === "group" ? "group" : "address object"} ${input.name} saved.`);
      }
      case "delete": {
        const name = z.string().trim().min(1).max(63).safeParse(values.name);
        if (!name.success) return invalidForm({ form: "Name the object to delete." }, values);
        await deleteSharedObject(access.organisation.id, name.data, actor);
        return back(`Shared object ${name.data} deleted.`);
      }
      case "import-csv": {
        const upload = form.get("file");
        const text = upload && typeof upload !== "string" ? await upload.text() : (values.csv ?? "");
        if (!text.trim()) return invalidForm({ csv: "Choose a CSV file or paste rows." }, values);
        if (text.length > 512 * 1024) return invalidForm({ csv: "The CSV is larger than 512 KiB." }, values);
        return { ok: true as const, report: await importSharedObjectsCsv(access.organisation.id, text, actor) };
      }
      default:
        return unknownIntent(values.intent);
    }
  } catch (error) {
    return refusedForm(error, values);
  }
}

export default function SharedObjects({ loaderData, actionData }: Route.ComponentProps) {
  const [searchParams] = useSearchParams();
  const navigation = useNavigation();
  const editing = loaderData.objects.find((object) => object.name === searchParams.get("edit"));
  const failed = actionData && "errors" in actionData ? actionData : null;
  const errors: Record<string, string> = failed?.errors ?? {};
  const values: Record<string, string> = failed?.values ?? {};
  const report = actionData && "report" in actionData ? actionData.report : null;
  return (
    <div className="space-y-8">
      <p className="max-w-3xl text-sm text-ink-muted">
        Address objects and groups that every device of this organisation can use by name — such as the operator networks the team administers from. Edit one here and each device's next revision uses the new value; every revision records the values it was saved with.
      </p>
      <FormError message={errors.form} />
      <div className="grid gap-6 xl:grid-cols-[1fr_26rem]">
        {loaderData.objects.length === 0 ? (
          <EmptyState title="No shared objects yet">Add the networks your team administers from once, and use them on every device.</EmptyState>
        ) : (
          <Table>
            <thead>
              <tr>
                <Th>Name</Th>
                <Th>Kind</Th>
                <Th>Entries or members</Th>
                {loaderData.canManage ? <Th className="text-right">Actions</Th> : null}
              </tr>
            </thead>
            <tbody>
              {loaderData.objects.map((object) => (
                <tr key={object.id}>
                  <Td className="font-mono font-medium">
                    {object.name}
                    {object.description ? <div className="font-sans text-xs font-normal text-ink-muted">{object.description}</div> : null}
                  </Td>
                  <Td>
                    <Badge tone={object.kind === "group" ? "brass" : "harbour"}>{object.kind === "group" ? "group" : "address"}</Badge>
                  </Td>
                  <Td className="font-mono text-xs">{object.items.join(", ")}</Td>
                  {loaderData.canManage ? (
                    <Td className="text-right whitespace-nowrap">
                      <Link to={`?edit=${encodeURIComponent(object.name)}`} className="mr-2 text-sm text-harbour underline underline-offset-4" aria-label={`Edit ${object.name}`}>
                        Edit
                      </Link>
                      <Form method="post" className="inline">
                        <input type="hidden" name="intent" value="delete" />
                        <input type="hidden" name="name" value={object.name} />
                        <Button type="submit" size="sm" variant="ghost-danger" aria-label={`Delete ${object.name}`}>
                          Delete
                        </Button>
                      </Form>
                    </Td>
                  ) : null}
                </tr>
              ))}
            </tbody>
          </Table>
        )}
        {loaderData.canManage ? (
          <Card className="p-5">
            <h2 className="mb-4 text-sm font-semibold">{editing ? `Edit ${editing.name}` : "Add a shared object"}</h2>
            <Form method="post" className="space-y-4" noValidate key={editing?.id ?? "new"}>
              <input type="hidden" name="intent" value="save" />
              <input type="hidden" name="original" value={editing?.name ?? ""} />
              <SelectField label="Kind" name="kind" defaultValue={values.kind ?? editing?.kind ?? "address"} error={errors.kind}>
                <LabelledOptions labels={KIND_LABELS} />
              </SelectField>
              <TextField label="Name" name="name" defaultValue={values.name ?? editing?.name} error={errors.name} maxLength={63} />
              <TextAreaField label="Entries or members" name="items" defaultValue={values.items ?? editing?.items.join("\n")} error={errors.items} hint="One per line: CIDRs, addresses or ranges for an object; names for a group." />
              <TextField label="Description" name="description" defaultValue={values.description ?? editing?.description} error={errors.description} maxLength={300} />
              <Button type="submit" disabled={navigation.state === "submitting"}>
                Save
              </Button>
            </Form>
          </Card>
        ) : null}
      </div>
      {loaderData.canManage ? (
        <Card className="p-5">
          <h2 className="text-sm font-semibold">Import address objects from CSV</h2>
          <p className="mt-1 text-sm text-ink-muted">
            Rows of <code>name,entries</code>, entries separated by spaces or semicolons; a header row is optional. Each row stands alone: bad rows are reported, good rows are saved.
          </p>
          <Form method="post" encType="multipart/form-data" className="mt-4 flex flex-wrap items-end gap-3" noValidate>
            <input type="hidden" name="intent" value="import-csv" />
            <label className="text-sm">
              <span className="mb-1 block font-medium">CSV file</span>
              <input type="file" name="file" accept=".csv,text/csv" className="text-sm" />
            </label>
            <Button type="submit" variant="secondary" disabled={navigation.state === "submitting"}>
              Import CSV
            </Button>
            {errors.csv ? (
              <p role="alert" className="w-full text-sm text-danger">
                {errors.csv}
              </p>
            ) : null}
          </Form>
          {report ? (
            <div className="mt-4">
              <Table>
                <caption className="p-2 text-left text-sm font-medium">
                  {formatNumber(report.filter((row) => row.result !== "refused").length)} saved, {formatNumber(report.filter((row) => row.result === "refused").length)} refused
                </caption>
                <thead>
                  <tr>
                    <Th>Row</Th>
                    <Th>Name</Th>
                    <Th>Result</Th>
                    <Th>Detail</Th>
                  </tr>
                </thead>
                <tbody>
                  {report.map((row) => (
                    <tr key={row.row}>
                      <Td className="tabular">{row.row}</Td>
                      <Td className="font-mono">{row.name}</Td>
                      <Td>
                        <Badge tone={row.result === "refused" ? "danger" : "success"}>{row.result}</Badge>
                      </Td>
                      <Td className="text-xs">{row.message}</Td>
                    </tr>
                  ))}
                </tbody>
              </Table>
            </div>
          ) : null}
        </Card>
      ) : null}
    </div>
  );
}
