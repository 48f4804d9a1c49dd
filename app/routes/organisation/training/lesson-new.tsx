import { Form, redirect, useNavigation, useSearchParams } from "react-router";
import type { Route } from "./+types/lesson-new";
import { serializeFlash } from "#server/auth/flash.server";
import { actorOf } from "#server/http/actor.server";
import { fieldErrorsOf, formValues, invalidForm, readForm } from "#server/http/form.server";
import { refusedForm } from "#server/http/refusals.server";
import { clientAddressOf } from "#server/http/request-context.server";
import { createLesson } from "#server/services/training-lessons.server";
import { listScenarios } from "#server/services/training-scenarios.server";
import { requireTrainer } from "#server/training/access.server";
import { trainingPath } from "#server/training/routes.server";
import { NewLessonSchema } from "#server/training/schemas";
import { PageErrorBoundary } from "#app/components/error-panel";
import { TextAreaField } from "#app/components/device/editor-kit";
import { Button, ButtonLink } from "#app/components/ui/button";
import { Card, PageHeader } from "#app/components/ui/card";
import { EmptyState } from "#app/components/ui/empty-state";
import { FormError, SelectField, TextField } from "#app/components/ui/field";

export const meta: Route.MetaFunction = () => [{ title: "New lesson · Sallyport" }];
export const ErrorBoundary = PageErrorBoundary;

export async function loader({ context }: Route.LoaderArgs) {
  const access = requireTrainer(context);
  const scenarios = await listScenarios(access.organisation.id);
  return { trainingPath: trainingPath(access.organisation.slug), scenarios: scenarios.map((scenario) => ({ id: scenario.id, title: scenario.title, fromExample: scenario.origin === "example" })) };
}

export async function action({ request, context }: Route.ActionArgs) {
  const access = requireTrainer(context);
  const values = formValues(await readForm(request));
  const parsed = NewLessonSchema.safeParse(values);
  if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
  let lessonId: string;
  try {
    lessonId = (await createLesson(access.organisation.id, parsed.data, actorOf(access, clientAddressOf(context)))).id;
  } catch (error) {
    return refusedForm(error, values);
  }
  throw redirect(trainingPath(access.organisation.slug, "lessons", lessonId, "edit"), { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message: `Lesson “${parsed.data.title}” created: add or adjust its probes and notes.` }) } });
}

export default function NewLesson({ loaderData, actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const [searchParams] = useSearchParams();
  const errors: Record<string, string> = actionData?.errors ?? {};
  const values: Record<string, string> = actionData?.values ?? {};
  if (loaderData.scenarios.length === 0) {
    return (
      <>
        <PageHeader title="New lesson" />
        <EmptyState title="No teaching scenario yet" action={<ButtonLink to={`${loaderData.trainingPath}/scenarios/new`}>New scenario</ButtonLink>}>
          A lesson walks through probes on a teaching scenario: make one first.
        </EmptyState>
      </>
    );
  }
  return (
    <>
      <PageHeader title="New lesson" description="An ordered list of probes on one teaching scenario, with your short notes per layer. Trainees predict each layer before it is revealed." />
      <Card className="max-w-3xl p-5">
        <FormError message={errors.form} />
        <Form method="post" className="space-y-5" noValidate aria-label="New lesson">
          <TextField label="Title" name="title" required maxLength={100} defaultValue={values.title ?? ""} error={errors.title} />
          <SelectField label="Scenario" name="scenarioId" defaultValue={values.scenarioId ?? searchParams.get("scenario") ?? loaderData.scenarios[0].id} error={errors.scenarioId}>
            {loaderData.scenarios.map((scenario) => (
              <option key={scenario.id} value={scenario.id}>
                {scenario.title}
                {scenario.fromExample ? " (example)" : ""}
              </option>
            ))}
          </SelectField>
          <div className="flex items-start gap-2 text-sm">
            <input id="with-example-probes" type="checkbox" name="withExampleProbes" defaultChecked={values.title === undefined || values.withExampleProbes === "on"} className="mt-1" />
            <label htmlFor="with-example-probes">Start with the example's probes and notes (for a scenario made from an example)</label>
          </div>
          <TextAreaField label="Introduction (optional, Markdown)" name="introduction" rows={4} defaultValue={values.introduction ?? ""} error={errors.introduction} hint="Shown before the first probe: what the trainee should look for." />
          <Button type="submit" disabled={navigation.state === "submitting"}>
            Create lesson
          </Button>
        </Form>
      </Card>
    </>
  );
}
