import { data, Form, Link, redirect, useNavigation, useSearchParams } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/shared-objects";
import { serializeFlash } from "#server/auth/flash.server";
import { requireRole } from "#server/auth/guard.server";
import { hasAtLeastRole } from "#server/auth/roles";
import { actorOf } from "#server/http/actor.server";
import { fieldErrorsOf, formFailure, formValues, invalidForm, readForm, unknownIntent } from "#server/http/form.server";
import { appOrigin } from "#server/config.server";
import { ElementNameSchema } from "#server/http/schemas";
import { pageOf } from "#server/analysis/paging";
import { formatNumber } from "#server/engine/format";
import { Pager } from "#app/components/analysis/common";
import { isUuid } from "#server/validation/ids";
import { textProblem } from "#server/validation/text";
import {
  deleteSharedObject,
  importSharedObjectsCsv,
  listSharedObjects,
  previewSharedObjectChange,
  previewSharedObjectsCsv,
  saveSharedObject,
  type SavedSharedChange,
  type SharedChangeConfirmation,
  type SharedChangePreview,
} from "#server/services/shared-objects.server";
import { TextAreaField } from "#app/components/device/editor-kit";
import { SharedChangeReview } from "#app/components/shared-objects/change-preview";
import { CsvReport } from "#app/components/shared-objects/csv-report";
import { Badge, Card } from "#app/components/ui/card";
import { Button } from "#app/components/ui/button";
import { EmptyState } from "#app/components/ui/empty-state";
import { FormError, LabelledOptions, SelectField, TextField } from "#app/components/ui/field";
import { SHARED_OBJECT_KINDS, type SharedObjectKind } from "#models/shared-address-object";
import { Table, Td, Th } from "#app/components/ui/table";
import { clientAddressOf } from "#server/http/request-context.server";
import { refusedForm, refusedWith } from "#server/http/refusals.server";

export const meta: Route.MetaFunction = () => [{ title: "Shared objects · Sallyport" }];

/** Objects listed per page: a library imported from CSV may hold tens of thousands. */
const OBJECTS_PER_PAGE = 100;

export async function loader({ request, context }: Route.LoaderArgs) {
  const access = requireRole(context);
  const all = await listSharedObjects(access.organisation.id);
  const search = new URL(request.url).searchParams;
  const { page, pages, start, end } = pageOf(search.get("page"), all.length, OBJECTS_PER_PAGE);
  const edit = search.get("edit");
  return {
    objects: all.slice(start, end),
    total: all.length,
    page,
    pages,
    first: start + 1,
    editing: edit ? (all.find((object) => object.name === edit) ?? null) : null,
    canManage: hasAtLeastRole(access.role, "admin"),
    organisationPath: `/o/${access.organisation.slug}`,
  };
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

/** The confirm step's fields: the library and device revisions the review showed. */
const ConfirmationSchema = z.object({
  library: z.string().regex(/^[0-9a-f]{64}$/),
  bases: z
    .string()
    .max(400_000)
    .regex(/^([0-9a-f-]{36}:\d{1,9}(,[0-9a-f-]{36}:\d{1,9})*)?$/)
    .refine((bases) => bases === "" || bases.split(",").every((base) => isUuid(base.split(":")[0])), "A device id is not valid."),
});

function confirmationOf(values: Record<string, string>): SharedChangeConfirmation | null {
  if (values.confirm !== "1") return null;
  const parsed = ConfirmationSchema.safeParse(values);
  return parsed.success ? parsed.data : null;
}

/** "quay-edge r4, pier-b r7": which devices the save revised. */
function revisionWords(saved: SavedSharedChange): string {
  if (saved.revisions.length === 0) return "";
  return ` New revisions: ${saved.revisions.map((revision) => `${revision.deviceName} r${revision.number}`).join(", ")}.`;
}

/**
 * Saving a change to the library is two steps when it changes any device: the first submission
 * answers with the review (each device's exposure diff), the confirmation saves — or answers 409
 * with a fresh review when the library or a device changed in between.
 */
export async function action({ request, context }: Route.ActionArgs) {
  const access = requireRole(context, "admin");
  const actor = actorOf(access, clientAddressOf(context));
  // Who saves, and under "changes go through proposals" why it cannot wait (docs/decisions/017).
  const policyOptions = (reason: string | undefined) => ({ role: access.role, name: access.user.name, breakGlassReason: reason, environment: { appOrigin: appOrigin() } });
  const organisationId = access.organisation.id;
  const form = await readForm(request);
  const values = formValues(form);
  const back = async (message: string) => redirect(`/o/${access.organisation.slug}/settings/shared-objects`, { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message }) } });
  const confirmation = confirmationOf(values);
  if (values.confirm === "1" && !confirmation) return invalidForm({ form: "The confirmation is incomplete; review the change again." }, values);
  // A refused confirmation shows the change's effect as it is now, ready to confirm again.
  const refusedWithReview = async (error: unknown, review: () => Promise<SharedChangePreview>, kept: Record<string, string>) => {
    const fresh = confirmation ? await review().catch(() => null) : null;
    return refusedWith(error, (refusal) => ({
      ...formFailure({ form: refusal.message, ...(refusal.field ? { [refusal.field]: refusal.message } : {}) }, kept, { issues: refusal.issues }),
      preview: fresh?.devices.length ? fresh : null,
    }));
  };
  switch (values.intent) {
    case "save": {
      const parsed = SharedObjectSchema.safeParse(values);
      if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
      const { original, ...input } = parsed.data;
      const review = () => previewSharedObjectChange(organisationId, original, input);
      try {
        let saved: SavedSharedChange;
        if (confirmation) saved = await saveSharedObject(organisationId, original, input, actor, confirmation, policyOptions(values.breakGlassReason));
        else {
          const preview = await review();
          if (preview.devices.length > 0) return data({ ok: true as const, preview, values });
          saved = await saveSharedObject(organisationId, original, input, actor, preview.confirmation, policyOptions(undefined));
        }
        // A new object no device uses yet: the reviewed way to change a value under the policy is to propose using it.
        const next = !original && saved.revisions.length === 0 && access.organisation.changesThroughProposals ? " Propose on each device that should use it." : "";
        return back(`Shared ${input.kind === "group" ? "group" : "address object"} ${input.name} saved${saved.breakGlass ? " directly (break-glass); the reviewers were e-mailed" : ""}.${revisionWords(saved)}${next}`);
      } catch (error) {
        return refusedWithReview(error, review, values);
      }
    }
    case "delete": {
      const name = z.string().trim().min(1).max(63).safeParse(values.name);
      if (!name.success) return invalidForm({ form: "Name the object to delete." }, values);
      try {
        await deleteSharedObject(organisationId, name.data, actor);
      } catch (error) {
        return refusedForm(error, values);
      }
      return back(`Shared object ${name.data} deleted.`);
    }
    case "import-csv": {
      const upload = form.get("file");
      const text = upload && typeof upload !== "string" ? await upload.text() : (values.csv ?? "");
      if (!text.trim()) return invalidForm({ csv: "Choose a CSV file or paste rows." }, values);
      if (text.length > 512 * 1024) return invalidForm({ csv: "The CSV is larger than 512 KiB." }, values);
      // The file's text is stored as entries and names: refused whole when it holds what may not be stored.
      const textProblemFound = upload && typeof upload !== "string" ? textProblem(text) : null;
      if (textProblemFound) return invalidForm({ csv: `The file ${textProblemFound}` }, values);
      const review = () => previewSharedObjectsCsv(organisationId, text);
      // The file travels on as text, so the confirmation imports exactly what was reviewed.
      const kept = { intent: "import-csv", csv: text, breakGlassReason: values.breakGlassReason ?? "" };
      try {
        let saved: SavedSharedChange;
        if (confirmation) saved = await importSharedObjectsCsv(organisationId, text, actor, confirmation, policyOptions(values.breakGlassReason));
        else {
          const preview = await review();
          if (preview.devices.length > 0) return data({ ok: true as const, preview, values: kept });
          saved = await importSharedObjectsCsv(organisationId, text, actor, preview.confirmation, policyOptions(undefined));
        }
        return { ok: true as const, report: saved.report ?? { rows: [], created: 0, updated: 0, refused: 0, unlisted: 0 }, revisions: saved.revisions };
      } catch (error) {
        return refusedWithReview(error, review, kept);
      }
    }
    default:
      return unknownIntent(values.intent);
  }
}

export default function SharedObjects({ loaderData, actionData }: Route.ComponentProps) {
  const [searchParams] = useSearchParams();
  const navigation = useNavigation();
  const editing = loaderData.editing ?? undefined;
  const failed = actionData && "errors" in actionData ? actionData : null;
  const errors: Record<string, string> = failed?.errors ?? {};
  const values: Record<string, string> = actionData && "values" in actionData ? actionData.values : {};
  const report = actionData && "report" in actionData ? actionData.report : null;
  const preview = actionData && "preview" in actionData ? actionData.preview : null;
  // What the confirmation sends again: the change as the user entered it.
  const reviewFields: Record<string, string> = values.intent === "import-csv" ? { intent: "import-csv", csv: values.csv ?? "" } : { intent: "save", original: values.original ?? "", kind: values.kind ?? "", name: values.name ?? "", items: values.items ?? "", description: values.description ?? "" };
  const pagePath = `${loaderData.organisationPath}/settings/shared-objects`;
  return (
    <div className="min-w-0 space-y-8" data-testid="shared-objects-page">
      <p className="max-w-3xl text-sm text-ink-muted">
        Address objects and groups that every device of this organisation can use by name — such as the operator networks the team administers from. Changing one gives every device that uses it a new revision at once, after you have reviewed how each device's exposure changes; every revision records the values it was saved with.
      </p>
      <FormError message={errors.form} />
      {preview ? (
        <SharedChangeReview
          preview={preview}
          fields={reviewFields}
          organisationPath={loaderData.organisationPath}
          cancelPath={values.intent === "save" && values.original ? `${pagePath}?edit=${encodeURIComponent(values.original)}` : pagePath}
          breakGlass={{ value: values.breakGlassReason, error: errors.breakGlassReason }}
          alternative={values.intent === "save" ? { kind: values.kind ?? "address", name: values.name ?? "", items: values.items ?? "", description: values.description ?? "" } : null}
        />
      ) : null}
      <div className="grid gap-6 xl:grid-cols-[1fr_26rem]">
        {loaderData.objects.length === 0 ? (
          <EmptyState title="No shared objects yet">Add the networks your team administers from once, and use them on every device.</EmptyState>
        ) : (
          <div className="min-w-0">
            <Table>
              <caption className="p-2 text-left text-sm text-ink-muted">
                {loaderData.pages > 1 ? `Objects ${formatNumber(loaderData.first)}–${formatNumber(loaderData.first + loaderData.objects.length - 1)} of ${formatNumber(loaderData.total)}, by kind and name` : `${formatNumber(loaderData.total)} shared ${loaderData.total === 1 ? "object" : "objects"}`}
              </caption>
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
                        <Link to={`?${loaderData.page > 1 ? `page=${loaderData.page}&` : ""}edit=${encodeURIComponent(object.name)}`} className="mr-2 text-sm text-harbour underline underline-offset-4" aria-label={`Edit ${object.name}`}>
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
            <Pager param="page" page={loaderData.page} pages={loaderData.pages} search={searchParams} label="Pages of shared objects" />
          </div>
        )}
        {loaderData.canManage ? (
          <Card className="p-5">
            <h2 className="mb-4 text-sm font-semibold">{editing ? `Edit ${editing.name}` : "Add a shared object"}</h2>
            <Form method="post" className="space-y-4" noValidate key={`${editing?.id ?? "new"}:${values.items ?? ""}`}>
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
            <label className="max-w-full min-w-0 text-sm">
              <span className="mb-1 block font-medium">CSV file</span>
              <input type="file" name="file" accept=".csv,text/csv" className="max-w-full text-sm" />
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
              <CsvReport report={report} />
            </div>
          ) : null}
        </Card>
      ) : null}
    </div>
  );
}
