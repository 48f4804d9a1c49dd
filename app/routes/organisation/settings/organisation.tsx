import { Form, redirect, useNavigation } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/organisation";
import { serializeFlash } from "#server/auth/flash.server";
import { requireRole } from "#server/auth/guard.server";
import { hasAtLeastRole } from "#server/auth/roles";
import { actorOf } from "#server/http/actor.server";
import { fieldErrorsOf, formValues, invalidForm, readForm } from "#server/http/form.server";
import { ChangePolicySchema, OrganisationNameSchema } from "#server/http/schemas";
import { renameOrganisation, updateChangePolicy } from "#server/services/organisations.server";
import { Button } from "#app/components/ui/button";
import { Card } from "#app/components/ui/card";
import { SelectField, TextField } from "#app/components/ui/field";
import { clientAddressOf } from "#server/http/request-context.server";

export const meta: Route.MetaFunction = () => [{ title: "Organisation · Sallyport" }];

export async function loader({ context }: Route.LoaderArgs) {
  const access = requireRole(context);
  return {
    name: access.organisation.name,
    slug: access.organisation.slug,
    isOwner: access.role === "owner",
    canSetPolicy: hasAtLeastRole(access.role, "admin"),
    policy: { approvalsRequired: access.organisation.approvalsRequired, changesThroughProposals: access.organisation.changesThroughProposals },
  };
}

export async function action({ request, context }: Route.ActionArgs) {
  requireRole(context, "admin");
  const values = formValues(await readForm(request));
  if (values.intent === "change-policy") {
    const access = requireRole(context, "admin");
    const parsed = ChangePolicySchema.safeParse(values);
    if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
    const changed = await updateChangePolicy(access.organisation, parsed.data, actorOf(access, clientAddressOf(context)));
    throw redirect(`/o/${access.organisation.slug}/settings/organisation`, { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message: changed ? "Change policy saved." : "Nothing changed." }) } });
  }
  // Renaming (the form without an intent) stays the owner's.
  const access = requireRole(context, "owner");
  const parsed = z.object({ name: OrganisationNameSchema }).safeParse(values);
  if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
  await renameOrganisation(access.organisation, parsed.data.name, actorOf(access, clientAddressOf(context)));
  throw redirect(`/o/${access.organisation.slug}/settings/organisation`, { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message: "Organisation renamed." }) } });
}

export default function OrganisationSettings({ loaderData, actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const policyValues = actionData?.values.intent === "change-policy" ? actionData : null;
  return (
    <div className="space-y-6">
      <Card className="max-w-xl p-5">
        <h2 className="text-sm font-semibold">Organisation</h2>
        <p className="mt-1 text-sm text-ink-muted">
          Its address stays <code>/o/{loaderData.slug}</code> when renamed, so links keep working.
        </p>
        {loaderData.isOwner ? (
          <Form method="post" className="mt-4 space-y-4" noValidate>
            <TextField label="Name" name="name" required maxLength={100} defaultValue={policyValues ? loaderData.name : (actionData?.values.name ?? loaderData.name)} error={policyValues ? undefined : actionData?.errors.name} />
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
      <Card className="max-w-xl p-5">
        <h2 className="text-sm font-semibold">Change policy</h2>
        <p className="mt-1 text-sm text-ink-muted">How changes to devices are reviewed. Follow your organisation's change policy and any regulation that applies.</p>
        {loaderData.canSetPolicy ? (
          <Form method="post" className="mt-4 space-y-4" noValidate aria-label="Change policy">
            <input type="hidden" name="intent" value="change-policy" />
            <SelectField label="Approvals a proposal needs" name="approvalsRequired" defaultValue={policyValues?.values.approvalsRequired ?? String(loaderData.policy.approvalsRequired)} error={policyValues?.errors.approvalsRequired}>
              {[1, 2, 3, 4, 5].map((count) => (
                <option key={count} value={count}>
                  {count}
                </option>
              ))}
            </SelectField>
            <label className="flex items-start gap-2 text-sm">
              <input type="checkbox" name="changesThroughProposals" value="on" className="mt-1" defaultChecked={policyValues ? policyValues.values.changesThroughProposals === "on" : loaderData.policy.changesThroughProposals} />
              <span>
                <span className="font-medium">Changes go through proposals.</span> The live editor becomes read-only; an admin may still save directly in an emergency (break-glass), with a written reason, and the reviewers are e-mailed.
              </span>
            </label>
            <p className="text-xs text-ink-muted">Either way, a direct save that the lockout guard blocks is refused unless an admin saves it anyway with a reason.</p>
            <Button type="submit" disabled={navigation.state === "submitting"}>
              Save the policy
            </Button>
          </Form>
        ) : (
          <dl className="mt-4 grid grid-cols-[14rem_1fr] gap-2 text-sm">
            <dt className="text-ink-muted">Approvals a proposal needs</dt>
            <dd>{loaderData.policy.approvalsRequired}</dd>
            <dt className="text-ink-muted">Changes go through proposals</dt>
            <dd>{loaderData.policy.changesThroughProposals ? "yes" : "no"}</dd>
          </dl>
        )}
      </Card>
    </div>
  );
}
