import { Form, Link, redirect, useNavigation } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/organisation";
import { serializeFlash } from "#server/auth/flash.server";
import { requireRole } from "#server/auth/guard.server";
import { hasAtLeastRole } from "#server/auth/roles";
import { actorOf } from "#server/http/actor.server";
import { fieldErrorsOf, formValues, invalidForm, readForm } from "#server/http/form.server";
import { ChangePolicySchema, OrganisationNameSchema } from "#server/http/schemas";
import { renameOrganisation, updateChangePolicy } from "#server/services/organisations.server";
import { hasSecondFactor, membersWithoutSecondFactor, setSecondFactorRequirement } from "#server/services/second-factor.server";
import { refusedForm } from "#server/http/refusals.server";
import { Button } from "#app/components/ui/button";
import { Card } from "#app/components/ui/card";
import { FormError, SelectField, TextField } from "#app/components/ui/field";
import { clientAddressOf } from "#server/http/request-context.server";

export const meta: Route.MetaFunction = () => [{ title: "Organisation · Sallyport" }];

export async function loader({ context }: Route.LoaderArgs) {
  const access = requireRole(context);
  const canSetPolicy = hasAtLeastRole(access.role, "admin");
  return {
    secondFactor: {
      required: access.organisation.requireSecondFactor,
      youHaveOne: hasSecondFactor(access.user),
      // Who the setting would send to enrol: names for the admins who decide, nothing for others.
      membersWithout: canSetPolicy ? await membersWithoutSecondFactor(access.organisation.id) : [],
    },
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
  if (values.intent === "second-factor-requirement") {
    const access = requireRole(context, "admin");
    const required = values.requireSecondFactor === "on";
    if (values.requireSecondFactor !== undefined && values.requireSecondFactor !== "on") return invalidForm({ requireSecondFactor: "Tick the box or leave it empty." }, values);
    try {
      const changed = await setSecondFactorRequirement(access.organisation, required, access.user, actorOf(access, clientAddressOf(context)));
      const message = !changed ? "Nothing changed." : required ? "Every member now needs a second factor; those without one are sent to set it up." : "A second factor is no longer required of every member.";
      throw redirect(`/o/${access.organisation.slug}/settings/organisation`, { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message }) } });
    } catch (error) {
      return refusedForm(error, values);
    }
  }
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
  const factorValues = actionData?.values.intent === "second-factor-requirement" ? actionData : null;
  const { secondFactor } = loaderData;
  return (
    <div className="space-y-6">
      <Card className="max-w-xl p-5">
        <h2 className="text-sm font-semibold">Organisation</h2>
        <p className="mt-1 text-sm text-ink-muted">
          Its address stays <code>/o/{loaderData.slug}</code> when renamed, so links keep working.
        </p>
        {loaderData.isOwner ? (
          <Form method="post" className="mt-4 space-y-4" noValidate>
            <TextField label="Name" name="name" required maxLength={100} defaultValue={policyValues || factorValues ? loaderData.name : (actionData?.values.name ?? loaderData.name)} error={policyValues || factorValues ? undefined : actionData?.errors.name} />
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
      <Card className="max-w-xl p-5">
        <h2 className="text-sm font-semibold">Second factor for every member</h2>
        <p className="mt-1 text-sm text-ink-muted">
          When required, signing in to Sallyport takes each member&apos;s password and a code from their authenticator app. Members without a second factor are sent to set one up at their next
          request and can use nothing else until they have. API tokens are not affected.
        </p>
        {loaderData.canSetPolicy ? (
          <Form method="post" className="mt-4 space-y-4" noValidate aria-label="Second factor for every member">
            <input type="hidden" name="intent" value="second-factor-requirement" />
            <FormError message={factorValues?.errors.form} />
            <label className="flex items-start gap-2 text-sm">
              <input
                type="checkbox"
                name="requireSecondFactor"
                value="on"
                className="mt-1"
                defaultChecked={factorValues ? factorValues.values.requireSecondFactor === "on" : secondFactor.required}
                disabled={!secondFactor.required && !secondFactor.youHaveOne}
                aria-describedby="second-factor-cautions"
              />
              <span className="font-medium">Require a second factor of every member.</span>
            </label>
            <div id="second-factor-cautions" className="space-y-2 rounded-control border border-warning/40 bg-warning-soft px-3 py-2 text-sm text-warning">
              {secondFactor.youHaveOne ? null : (
                <p>
                  Set up your own second factor first (
                  <Link to="/account/second-factor" className="underline underline-offset-4">
                    Your account → Second factor
                  </Link>
                  ), so this setting cannot lock you out.
                </p>
              )}
              {secondFactor.membersWithout.length === 0 ? (
                <p>Every member has a second factor.</p>
              ) : (
                <p>
                  Without one now ({secondFactor.membersWithout.length}): {secondFactor.membersWithout.map((member) => `${member.name} (${member.role})`).join(", ")}. They will have to set one up before
                  they can do anything else; tell them first.
                </p>
              )}
              <p>
                A member who loses both their phone and their recovery codes cannot sign in, and nobody in the organisation can reset it for them: keep more than one owner with a second factor, and
                follow your organisation&apos;s access policy.
              </p>
            </div>
            <Button type="submit" disabled={navigation.state === "submitting" || (!secondFactor.required && !secondFactor.youHaveOne)}>
              Save the requirement
            </Button>
          </Form>
        ) : (
          <p className="mt-4 text-sm">{secondFactor.required ? "Required of every member." : "Not required; each member chooses."}</p>
        )}
      </Card>
    </div>
  );
}
