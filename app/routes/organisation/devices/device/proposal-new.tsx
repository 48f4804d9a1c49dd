import { Form, redirect, useNavigation } from "react-router";
import type { Route } from "./+types/proposal-new";
import { serializeFlash } from "#server/auth/flash.server";
import { PAGE_ROLES } from "#server/auth/roles";
import { actorOf } from "#server/http/actor.server";
import { requireDevice } from "#server/http/device-access.server";
import { planDeviceEdit, PlannedAttempt } from "#server/http/device-forms.server";
import { formValuesWithLists } from "#server/http/device-forms.server";
import { invalidForm, readForm, unknownIntent } from "#server/http/form.server";
import { readProposalDetails } from "#server/http/proposal-steps.server";
import { refusedForm } from "#server/http/refusals.server";
import { clientAddressOf } from "#server/http/request-context.server";
import { defaultWindowText } from "#server/proposals/change-window";
import { createProposal } from "#server/services/proposals.server";
import { ProposalDetailsFields } from "#app/components/proposals/details-fields";
import { Button } from "#app/components/ui/button";
import { Card } from "#app/components/ui/card";
import { FormError } from "#app/components/ui/field";

export const meta: Route.MetaFunction = () => [{ title: "Propose a change · Sallyport" }];

/** The carried change of the live editor ("make it a proposal"): its form fields, prefixed "edit.". */
function carriedEdit(values: Record<string, string>): Record<string, string> {
  return Object.fromEntries(Object.entries(values).filter(([key]) => key.startsWith("edit.")).map(([key, value]) => [key.slice("edit.".length), value]));
}

export async function loader({ context }: Route.LoaderArgs) {
  const access = requireDevice(context, PAGE_ROLES.proposeChange);
  const timezone = access.effective.device.timezone;
  // An evening window tomorrow, in the device's zone, as a starting point.
  return { timezone, revision: access.revision.number, defaults: defaultWindowText(new Date(), timezone) };
}

export async function action({ request, context }: Route.ActionArgs) {
  const access = requireDevice(context, PAGE_ROLES.proposeChange);
  const values = formValuesWithLists(await readForm(request));
  const edit = carriedEdit(values);
  const planned = edit.intent ? planDeviceEdit(edit.intent, edit) : null;
  if (edit.intent && !planned?.ok) return invalidForm({ form: "The change carried from the editor is not valid any more; make it again in the proposal's draft." }, values);
  const plan = planned?.ok ? planned.plan : null;
  // From the live editor's refusal: the form, filled with the change it carries.
  if (values.intent === "carry-edit") return { ok: true as const, carried: plan?.message ?? null, values };
  if (values.intent !== "create") return unknownIntent(values.intent);
  const read = readProposalDetails(values, access.effective.device.timezone);
  if (!read.ok) return invalidForm(read.errors, values);
  try {
    const proposal = await createProposal(
      { organisationId: access.organisation.id, deviceId: access.device.id },
      read.details,
      plan ? { kind: "edit", attempt: new PlannedAttempt(plan), message: plan.message } : { kind: "revision" },
      actorOf(access, clientAddressOf(context)),
    );
    const path = `/o/${access.organisation.slug}/devices/${access.device.id}/proposals/${proposal.id}`;
    throw redirect(path, { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message: `Proposal created on r${proposal.baseRevisionNumber}. Edit its draft, then submit it for review.` }) } });
  } catch (error) {
    return refusedForm(error, values);
  }
}

export default function ProposeChange({ loaderData, actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const values = actionData?.values ?? {};
  const errors = actionData && !actionData.ok ? actionData.errors : {};
  const carried = actionData?.ok ? actionData.carried : null;
  const carriedFields = Object.entries(values).filter(([key]) => key.startsWith("edit."));
  return (
    <Card className="max-w-2xl p-6">
      <h2 className="text-lg font-semibold">Propose a change</h2>
      <p className="mt-1 text-sm text-ink-muted">
        The draft starts as a copy of revision r{loaderData.revision}. Nothing changes on the device until the proposal is approved and applied inside its change window.
      </p>
      {carried || carriedFields.length > 0 ? (
        <p className="mt-3 rounded-control border border-harbour/30 bg-harbour-soft px-3 py-2 text-sm text-harbour">{`The draft starts with your change from the editor${carried ? `: ${carried}` : ""}.`}</p>
      ) : null}
      <Form method="post" className="mt-5 space-y-5" noValidate>
        <FormError message={errors.form} />
        <input type="hidden" name="intent" value="create" />
        {carriedFields.map(([key, value]) => (
          <input key={key} type="hidden" name={key} value={value} />
        ))}
        <ProposalDetailsFields values={{ ...loaderData.defaults, ...values }} errors={errors} timezone={loaderData.timezone} />
        <Button type="submit" disabled={navigation.state === "submitting"}>
          Create the proposal
        </Button>
      </Form>
    </Card>
  );
}
