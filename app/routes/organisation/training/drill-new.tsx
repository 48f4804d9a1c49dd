import { Form, redirect, useNavigation, useSearchParams } from "react-router";
import type { Route } from "./+types/drill-new";
import { serializeFlash } from "#server/auth/flash.server";
import { actorOf } from "#server/http/actor.server";
import { fieldErrorsOf, formValues, invalidForm, readForm } from "#server/http/form.server";
import { refusedForm } from "#server/http/refusals.server";
import { clientAddressOf } from "#server/http/request-context.server";
import { createDrill } from "#server/services/training-drills.server";
import { listScenarios } from "#server/services/training-scenarios.server";
import { requireTrainer } from "#server/training/access.server";
import { trainingPath } from "#server/training/routes.server";
import { NewDrillSchema } from "#server/training/schemas";
import { DRILL_KINDS } from "#models/training-kinds";
import { PageErrorBoundary } from "#app/components/error-panel";
import { TextAreaField } from "#app/components/device/editor-kit";
import { Button, ButtonLink } from "#app/components/ui/button";
import { Card, PageHeader } from "#app/components/ui/card";
import { EmptyState } from "#app/components/ui/empty-state";
import { FormError, SelectField, TextField } from "#app/components/ui/field";
import { DRILL_KIND_HINTS, DRILL_KIND_LABELS } from "#app/utils/drill-words";

export const meta: Route.MetaFunction = () => [{ title: "New drill · Sallyport" }];
export const ErrorBoundary = PageErrorBoundary;

export async function loader({ context }: Route.LoaderArgs) {
  const access = requireTrainer(context);
  const scenarios = await listScenarios(access.organisation.id);
  return { trainingPath: trainingPath(access.organisation.slug), kinds: [...DRILL_KINDS], scenarios: scenarios.map((scenario) => ({ id: scenario.id, title: scenario.title })) };
}

export async function action({ request, context }: Route.ActionArgs) {
  const access = requireTrainer(context);
  const values = formValues(await readForm(request));
  const parsed = NewDrillSchema.safeParse(values);
  if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
  let drillId: string;
  try {
    drillId = (await createDrill(access.organisation.id, parsed.data, actorOf(access, clientAddressOf(context)))).id;
  } catch (error) {
    return refusedForm(error, values);
  }
  const next = parsed.data.kind === "predict" ? "Try it once to see the probes." : "Set its goals and your answer next.";
  throw redirect(trainingPath(access.organisation.slug, "drills", drillId, "edit"), { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message: `Drill “${parsed.data.title}” created. ${next}` }) } });
}

export default function NewDrill({ loaderData, actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const [searchParams] = useSearchParams();
  const errors: Record<string, string> = actionData?.errors ?? {};
  const values: Record<string, string> = actionData?.values ?? {};
  if (loaderData.scenarios.length === 0) {
    return (
      <>
        <PageHeader title="New drill" />
        <EmptyState title="No teaching scenario yet" action={<ButtonLink to={`${loaderData.trainingPath}/scenarios/new`}>New scenario</ButtonLink>}>
          A drill is graded on a teaching scenario: make one first.
        </EmptyState>
      </>
    );
  }
  return (
    <>
      <PageHeader title="New drill" description="An exercise on a teaching scenario that the engine grades by itself: every answer is checked with a trace." />
      <Card className="max-w-3xl p-5">
        <FormError message={errors.form} />
        <Form method="post" className="space-y-5" noValidate aria-label="New drill">
          <TextField label="Title" name="title" required maxLength={100} defaultValue={values.title ?? ""} error={errors.title} />
          <SelectField label="Scenario" name="scenarioId" defaultValue={values.scenarioId ?? searchParams.get("scenario") ?? loaderData.scenarios[0].id} error={errors.scenarioId}>
            {loaderData.scenarios.map((scenario) => (
              <option key={scenario.id} value={scenario.id}>
                {scenario.title}
              </option>
            ))}
          </SelectField>
          <fieldset aria-describedby={errors.kind ? "kind-error" : undefined}>
            <legend className="text-sm font-medium">Kind</legend>
            <div className="mt-2 space-y-2">
              {loaderData.kinds.map((kind) => (
                <div key={kind} className="flex items-start gap-2 text-sm">
                  <input id={`kind-${kind}`} type="radio" name="kind" value={kind} defaultChecked={(values.kind ?? searchParams.get("kind") ?? "predict") === kind} className="mt-1" aria-describedby={`kind-${kind}-hint`} />
                  <div>
                    <label htmlFor={`kind-${kind}`} className="font-medium">
                      {DRILL_KIND_LABELS[kind]}
                    </label>
                    <p id={`kind-${kind}-hint`} className="text-ink-muted">
                      {DRILL_KIND_HINTS[kind]}
                    </p>
                  </div>
                </div>
              ))}
            </div>
            {errors.kind ? (
              <p id="kind-error" className="mt-1 text-sm text-danger" role="alert">
                {errors.kind}
              </p>
            ) : null}
          </fieldset>
          <div className="grid gap-4 sm:grid-cols-2">
            <TextField label="Probes (call the outcome)" name="count" inputMode="numeric" defaultValue={values.count ?? "10"} error={errors.count} hint="1 to 50." />
            <TextField label="Seed (call the outcome)" name="seed" inputMode="numeric" defaultValue={values.seed ?? "1"} error={errors.seed} hint="The same seed gives the same probes." />
          </div>
          <TextAreaField label="Introduction (optional, Markdown)" name="introduction" rows={4} defaultValue={values.introduction ?? ""} error={errors.introduction} hint="Shown before the drill starts." />
          <Button type="submit" disabled={navigation.state === "submitting"}>
            Create drill
          </Button>
        </Form>
      </Card>
    </>
  );
}
