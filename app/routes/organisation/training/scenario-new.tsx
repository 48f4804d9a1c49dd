import { Form, redirect, useNavigation, useSearchParams } from "react-router";
import type { Route } from "./+types/scenario-new";
import { serializeFlash } from "#server/auth/flash.server";
import { actorOf } from "#server/http/actor.server";
import { fieldErrorsOf, formValues, invalidForm, readForm } from "#server/http/form.server";
import { refusedForm } from "#server/http/refusals.server";
import { clientAddressOf } from "#server/http/request-context.server";
import { createScenario, listDeviceNames, type ScenarioSource } from "#server/services/training-scenarios.server";
import { requireTrainer } from "#server/training/access.server";
import { TRAINING_EXAMPLES } from "#server/training/examples";
import { trainingPath } from "#server/training/routes.server";
import { ScenarioDetailsSchema, ScenarioSourceSchema } from "#server/training/schemas";
import { LAYER_LABELS } from "#server/engine/vocabulary";
import { PageErrorBoundary } from "#app/components/error-panel";
import { Button } from "#app/components/ui/button";
import { Card, PageHeader } from "#app/components/ui/card";
import { FormError, SelectField, TextField } from "#app/components/ui/field";
import { TextAreaField } from "#app/components/device/editor-kit";

export const meta: Route.MetaFunction = () => [{ title: "New teaching scenario · Sallyport" }];
export const ErrorBoundary = PageErrorBoundary;

export async function loader({ context }: Route.LoaderArgs) {
  const access = requireTrainer(context);
  return {
    trainingPath: trainingPath(access.organisation.slug),
    devices: await listDeviceNames(access.organisation.id),
    examples: TRAINING_EXAMPLES.map((example) => ({ key: example.key, title: example.title, teaches: LAYER_LABELS[example.teaches] })),
  };
}

export async function action({ request, context }: Route.ActionArgs) {
  const access = requireTrainer(context);
  const values = formValues(await readForm(request));
  const details = ScenarioDetailsSchema.safeParse(values);
  const source = ScenarioSourceSchema.safeParse(values);
  if (!details.success || !source.success) return invalidForm({ ...(source.success ? {} : fieldErrorsOf(source.error)), ...(details.success ? {} : fieldErrorsOf(details.error)) }, values);
  const from: ScenarioSource =
    source.data.source === "example" ? { kind: "example", key: source.data.example } : source.data.source === "copy" ? { kind: "copy", deviceId: source.data.deviceId, anonymise: source.data.anonymise } : { kind: "blank" };
  let scenarioId: string;
  try {
    scenarioId = (await createScenario(access.organisation.id, details.data, from, actorOf(access, clientAddressOf(context)))).id;
  } catch (error) {
    return refusedForm(error, values);
  }
  const message = from.kind === "copy" ? `Scenario “${details.data.title}” created as a${from.anonymise ? "n anonymised" : ""} copy; the device is unchanged.` : `Scenario “${details.data.title}” created.`;
  throw redirect(trainingPath(access.organisation.slug, "scenarios", scenarioId), { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message }) } });
}

export default function NewScenario({ loaderData, actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const [searchParams] = useSearchParams();
  const errors: Record<string, string> = actionData?.errors ?? {};
  const values: Record<string, string> = actionData?.values ?? {};
  const preset = searchParams.get("example");
  const source = values.source ?? "example";
  const presetExample = loaderData.examples.find((example) => example.key === (values.example ?? preset));
  return (
    <>
      <PageHeader title="New teaching scenario" description="A device model for teaching, apart from the fleet. Trainees read it; only trainers change it." />
      <Card className="max-w-3xl p-5">
        <FormError message={errors.form} />
        <Form method="post" className="space-y-5" noValidate aria-label="New teaching scenario">
          <TextField label="Title" name="title" required maxLength={100} defaultValue={values.title ?? presetExample?.title ?? ""} error={errors.title} hint="What trainees see in the list, e.g. “Rule order at Marlowe Freight”." />
          <TextAreaField label="What it teaches (optional, Markdown)" name="summary" rows={3} defaultValue={values.summary ?? ""} error={errors.summary} hint="Left empty for an example, its own summary is used." />
          <fieldset className="space-y-4">
            <legend className="text-sm font-medium">Where the model comes from</legend>
            {errors.source ? (
              <p className="text-sm text-danger" role="alert">
                {errors.source}
              </p>
            ) : null}
            <div className="space-y-2">
              <label className="flex items-center gap-2 text-sm">
                <input type="radio" name="source" value="example" defaultChecked={source === "example"} />
                An example shipped with Sallyport
              </label>
              <div className="pl-6">
                <SelectField label="Example" name="example" defaultValue={presetExample?.key ?? loaderData.examples[0]?.key} error={errors.example}>
                  {loaderData.examples.map((example) => (
                    <option key={example.key} value={example.key}>
                      {example.title} — teaches {example.teaches}
                    </option>
                  ))}
                </SelectField>
              </div>
            </div>
            <label className="flex items-center gap-2 text-sm">
              <input type="radio" name="source" value="blank" defaultChecked={source === "blank"} />
              From scratch (an empty device)
            </label>
            <div className="space-y-2">
              <label className="flex items-center gap-2 text-sm">
                <input type="radio" name="source" value="copy" defaultChecked={source === "copy"} />
                A copy of a device of this organisation
              </label>
              <div className="space-y-3 pl-6">
                <SelectField label="Device to copy" name="deviceId" defaultValue={values.deviceId ?? ""} error={errors.deviceId}>
                  <option value="">Choose a device…</option>
                  {loaderData.devices.map((device) => (
                    <option key={device.id} value={device.id}>
                      {device.name}
                    </option>
                  ))}
                </SelectField>
                <div className="flex items-start gap-2 text-sm">
                  <input id="anonymise" type="checkbox" name="anonymise" defaultChecked={values.intent ? values.anonymise === "on" : true} className="mt-1" aria-describedby="anonymise-hint" />
                  <div>
                    <label htmlFor="anonymise" className="font-medium">
                      Anonymise
                    </label>
                    <p id="anonymise-hint" className="text-ink-muted">
                      Public addresses move into the documentation ranges (RFC 5737, RFC 3849), unique-local ones into fd00::/16; object, rule, schedule, interface and account names are replaced and rule notes cleared. Every probe keeps its outcome. The device itself is never changed.
                    </p>
                  </div>
                </div>
                {errors.anonymise ? (
                  <p className="text-sm text-danger" role="alert">
                    {errors.anonymise}
                  </p>
                ) : null}
              </div>
            </div>
          </fieldset>
          <input type="hidden" name="intent" value="create" />
          <Button type="submit" disabled={navigation.state === "submitting"}>
            Create scenario
          </Button>
        </Form>
      </Card>
    </>
  );
}
