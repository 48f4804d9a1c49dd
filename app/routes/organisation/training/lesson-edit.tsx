import { Form, Link, redirect, useNavigation, useSearchParams } from "react-router";
import type { Route } from "./+types/lesson-edit";
import { serializeFlash } from "#server/auth/flash.server";
import { actorOf } from "#server/http/actor.server";
import { fieldErrorsOf, formValues, invalidForm, readForm, unknownIntent } from "#server/http/form.server";
import { refusedForm, refusedPage } from "#server/http/refusals.server";
import { clientAddressOf } from "#server/http/request-context.server";
import { deleteLesson, editLessonSteps, findLesson, stepsOf, updateLessonDetails } from "#server/services/training-lessons.server";
import { findScenario } from "#server/services/training-scenarios.server";
import { compileModel, LAYERS, ProbeError, trace, type Layer, type Outcome } from "#server/engine/index";
import { namesByKind } from "#server/analysis/catalogue";
import { requireTrainer } from "#server/training/access.server";
import { MAX_LESSON_STEPS, type LessonStep } from "#server/training/lessons";
import { trainingIdOf, trainingPath } from "#server/training/routes.server";
import { Refusal } from "#server/errors";
import { LessonDetailsSchema, noteField, StepFormSchema, StepIndexSchema, VersionSchema } from "#server/training/schemas";
import { PageErrorBoundary } from "#app/components/error-panel";
import { TextAreaField } from "#app/components/device/editor-kit";
import { VerdictBadge } from "#app/components/training/layer-steps";
import { DeleteCard } from "#app/components/training/delete-card";
import { Button, ButtonLink } from "#app/components/ui/button";
import { Card, PageHeader } from "#app/components/ui/card";
import { FormError, TextField } from "#app/components/ui/field";
import { LAYER_TITLES } from "#app/utils/trace-words";
import { cx } from "#app/components/ui/cx";

// The lesson editor (trainers): the lesson's probes, each with its trace as it is now, so the
// trainer sees which layers it reaches and writes a short note for each.

export const meta: Route.MetaFunction = () => [{ title: "Edit lesson · Training · Sallyport" }];
export const ErrorBoundary = PageErrorBoundary;

type StepTrace = { ok: true; outcome: Outcome; layers: Array<{ layer: Layer; result: "pass" | "stop"; detail: string }> } | { ok: false; message: string };

export async function loader({ params, context }: Route.LoaderArgs) {
  const access = requireTrainer(context);
  const lessonId = trainingIdOf(params.lesson, "lesson");
  try {
    const lesson = await findLesson({ organisationId: access.organisation.id, lessonId });
    const scenario = await findScenario({ organisationId: access.organisation.id, scenarioId: lesson.scenarioId });
    const device = compileModel(scenario.document);
    const steps = stepsOf(lesson).map((step) => {
      let traced: StepTrace;
      try {
        const result = trace(device, step.probe);
        traced = { ok: true, outcome: result.outcome, layers: result.layers.map((layer) => ({ layer: layer.layer, result: layer.result, detail: layer.detail })) };
      } catch (error) {
        if (!(error instanceof ProbeError)) throw error;
        traced = { ok: false, message: error.message };
      }
      return { ...step, trace: traced };
    });
    const base = trainingPath(access.organisation.slug);
    return {
      title: lesson.title,
      introduction: lesson.introduction,
      version: lesson.version,
      lessonPath: `${base}/lessons/${lesson.id}`,
      scenario: { title: scenario.title, path: `${base}/scenarios/${scenario.id}`, timezone: scenario.document.device.timezone },
      interfaces: scenario.document.interfaces.map((entry) => entry.name),
      services: namesByKind(device.catalogue),
      accounts: scenario.document.accounts.map((account) => account.name),
      steps,
      maxSteps: MAX_LESSON_STEPS,
    };
  } catch (error) {
    return refusedPage(error);
  }
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const access = requireTrainer(context);
  const lessonId = trainingIdOf(params.lesson, "lesson");
  const ref = { organisationId: access.organisation.id, lessonId };
  const actor = actorOf(access, clientAddressOf(context));
  const values = formValues(await readForm(request));
  const here = trainingPath(access.organisation.slug, "lessons", lessonId, "edit");
  const done = async (message: string, to = here) => redirect(to, { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message }) } });
  const version = VersionSchema.safeParse(values.version);
  if (!version.success && values.intent !== "delete-lesson") return invalidForm({ form: version.error.issues[0].message }, values);
  const expected = version.success ? version.data : 0;
  const indexOf = () => {
    const parsed = StepIndexSchema.safeParse(values.index);
    if (!parsed.success) throw new Refusal("That probe is not in the lesson.", 400);
    return parsed.data;
  };
  const at = (steps: LessonStep[], index: number) => {
    if (index >= steps.length) throw new Refusal("That probe is not in the lesson: reload the page.", 409);
    return steps[index];
  };
  try {
    switch (values.intent) {
      case "save-details": {
        const parsed = LessonDetailsSchema.safeParse(values);
        if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
        const changed = await updateLessonDetails(ref, expected, parsed.data, actor);
        return done(changed ? "Lesson details saved." : "Nothing changed.");
      }
      case "add-step":
      case "save-step": {
        const parsed = StepFormSchema.safeParse(values);
        if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
        if (values.intent === "add-step") {
          await editLessonSteps(ref, expected, (steps) => [...steps, parsed.data], "added a probe", actor);
          return done("Probe added at the end.", `${here}#add-probe`);
        }
        const index = indexOf();
        await editLessonSteps(ref, expected, (steps) => steps.map((step, position) => (position === index ? (at(steps, index), parsed.data) : step)), `changed probe ${index + 1}`, actor);
        return done(`Probe ${index + 1} saved.`, `${here}#step-${index}`);
      }
      case "move-step": {
        const index = indexOf();
        const to = values.direction === "up" ? index - 1 : index + 1;
        await editLessonSteps(
          ref,
          expected,
          (steps) => {
            at(steps, index);
            if (to < 0 || to >= steps.length) return steps;
            const next = [...steps];
            [next[index], next[to]] = [next[to], next[index]];
            return next;
          },
          `moved probe ${index + 1} ${values.direction === "up" ? "up" : "down"}`,
          actor,
        );
        return done(`Probe moved to position ${Math.max(1, to + 1)}.`, `${here}#step-${Math.max(0, to)}`);
      }
      case "delete-step": {
        const index = indexOf();
        await editLessonSteps(ref, expected, (steps) => (at(steps, index), steps.filter((_, position) => position !== index)), `deleted probe ${index + 1}`, actor);
        return done(`Probe ${index + 1} deleted.`);
      }
      case "delete-lesson": {
        const title = await deleteLesson(ref, actor);
        return done(`Lesson “${title}” deleted.`, trainingPath(access.organisation.slug));
      }
      default:
        return unknownIntent(values.intent);
    }
  } catch (error) {
    return refusedForm(error, values);
  }
}

type LoaderData = Route.ComponentProps["loaderData"];

function ProbeFields({ data, values, errors, probe }: { data: LoaderData; values: Record<string, string>; errors: Record<string, string>; probe?: LessonStep["probe"] }) {
  const field = (name: "from" | "to" | "at") => values[name] ?? probe?.[name] ?? "";
  const control = "block h-10 w-full rounded-control border bg-surface px-3 text-sm";
  const describe = (name: string) => (errors[name] ? `${name}-error` : undefined);
  const message = (name: string) =>
    errors[name] ? (
      <p id={`${name}-error`} className="text-sm text-danger" role="alert">
        {errors[name]}
      </p>
    ) : null;
  return (
    <div className="grid gap-3 sm:grid-cols-2 lg:grid-cols-3">
      <TextField label="From (source)" name="from" className="font-mono" defaultValue={field("from")} error={errors.from} placeholder="203.0.113.50" />
      <div className="space-y-1.5">
        <label className="block text-sm font-medium" htmlFor={`interface-${probe ? "edit" : "new"}`}>
          Interface
        </label>
        <select id={`interface-${probe ? "edit" : "new"}`} name="interface" defaultValue={values.interface ?? probe?.interface} aria-describedby={describe("interface")} className={cx(control, errors.interface ? "border-danger" : "border-line-strong")}>
          {data.interfaces.map((name) => (
            <option key={name}>{name}</option>
          ))}
        </select>
        {message("interface")}
      </div>
      <div className="space-y-1.5">
        <label className="block text-sm font-medium" htmlFor={`service-${probe ? "edit" : "new"}`}>
          Service
        </label>
        <input id={`service-${probe ? "edit" : "new"}`} name="service" list="lesson-services" defaultValue={values.service ?? probe?.service ?? "https"} aria-describedby={describe("service")} className={cx(control, "font-mono", errors.service ? "border-danger" : "border-line-strong")} />
        {message("service")}
      </div>
      <TextField label="To (optional)" name="to" className="font-mono" defaultValue={field("to")} error={errors.to} placeholder="an interface address" />
      <TextField label={`At (optional, ${data.scenario.timezone})`} name="at" className="font-mono" defaultValue={field("at")} error={errors.at} placeholder="2026-12-08T10:00:00Z" hint="Empty: the moment each attempt begins." />
      <div className="space-y-1.5">
        <label className="block text-sm font-medium" htmlFor={`account-${probe ? "edit" : "new"}`}>
          Account (optional)
        </label>
        <select id={`account-${probe ? "edit" : "new"}`} name="account" defaultValue={values.account ?? probe?.account ?? ""} aria-describedby={describe("account")} className={cx(control, errors.account ? "border-danger" : "border-line-strong")}>
          <option value="">any eligible</option>
          {data.accounts.map((name) => (
            <option key={name}>{name}</option>
          ))}
        </select>
        {message("account")}
      </div>
    </div>
  );
}

function StepCard({ data, step, index, editing, errors, values }: { data: LoaderData; step: LoaderData["steps"][number]; index: number; editing: boolean; errors: Record<string, string>; values: Record<string, string> }) {
  const navigation = useNavigation();
  const reached = new Set(step.trace.ok ? step.trace.layers.map((layer) => layer.layer) : []);
  const hidden = (
    <>
      <input type="hidden" name="version" value={data.version} />
      <input type="hidden" name="index" value={index} />
    </>
  );
  return (
    <Card className="p-5" id={`step-${index}`}>
      <div className="flex flex-wrap items-center justify-between gap-2">
        <h3 className="font-semibold">
          Probe {index + 1}: <span className="font-mono text-sm font-normal break-all">{[step.probe.from, step.probe.interface, step.probe.service, step.probe.to, step.probe.at, step.probe.account].filter(Boolean).join(" · ")}</span>
        </h3>
        <div className="flex flex-wrap gap-1">
          {editing ? null : (
            <Link to={`?step=${index}#step-${index}`} className="inline-flex h-8 items-center px-2 text-sm text-harbour underline underline-offset-4" aria-label={`Edit probe ${index + 1}`}>
              Edit
            </Link>
          )}
          {(["up", "down"] as const).map((direction) => (
            <Form method="post" key={direction}>
              {hidden}
              <input type="hidden" name="intent" value="move-step" />
              <input type="hidden" name="direction" value={direction} />
              <Button type="submit" size="sm" variant="ghost" disabled={direction === "up" ? index === 0 : index === data.steps.length - 1} aria-label={`Move probe ${index + 1} ${direction}`}>
                {direction === "up" ? "↑" : "↓"}
              </Button>
            </Form>
          ))}
          <Form method="post">
            {hidden}
            <input type="hidden" name="intent" value="delete-step" />
            <Button type="submit" size="sm" variant="ghost-danger" aria-label={`Delete probe ${index + 1}`}>
              Delete
            </Button>
          </Form>
        </div>
      </div>
      {step.trace.ok ? (
        <ol className="mt-3 space-y-1 text-sm" aria-label={`What probe ${index + 1} meets`}>
          {step.trace.layers.map((layer) => (
            <li key={layer.layer} className="grid grid-cols-[9rem_auto_1fr] items-baseline gap-3 max-sm:grid-cols-[minmax(0,1fr)_auto] max-sm:[&>:last-child]:col-span-2">
              <span className="font-medium">{LAYER_TITLES[layer.layer]}</span>
              <VerdictBadge result={layer.result} outcome={layer.result === "stop" && step.trace.ok ? step.trace.outcome : null} />
              <span className="text-ink-muted">
                {layer.detail}
                {step.notes[layer.layer] ? <span className="ml-1 text-brass">· note</span> : null}
              </span>
            </li>
          ))}
        </ol>
      ) : (
        <p className="mt-3 text-sm text-danger" role="alert">
          This probe no longer traces on the scenario: {step.trace.message}. Fix it, or trainees cannot begin the lesson.
        </p>
      )}
      {editing ? (
        <Form method="post" className="mt-4 space-y-4 border-t border-line pt-4" noValidate aria-label={`Probe ${index + 1}`}>
          {hidden}
          <input type="hidden" name="intent" value="save-step" />
          <ProbeFields data={data} values={values} errors={errors} probe={step.probe} />
          <h4 className="text-sm font-semibold">Your notes per layer (Markdown, shown when the layer is revealed)</h4>
          {LAYERS.filter((layer) => reached.has(layer)).map((layer) => (
            <TextAreaField key={layer} label={LAYER_TITLES[layer]} name={noteField(layer)} rows={2} defaultValue={values[noteField(layer)] ?? step.notes[layer] ?? ""} error={errors[noteField(layer)]} />
          ))}
          {LAYERS.some((layer) => !reached.has(layer)) ? (
            <details className="rounded-card border border-line p-3">
              <summary className="cursor-pointer text-sm text-ink-muted">Layers this probe does not reach (notes kept for when it does)</summary>
              <div className="mt-3 space-y-3">
                {LAYERS.filter((layer) => !reached.has(layer)).map((layer) => (
                  <TextAreaField key={layer} label={LAYER_TITLES[layer]} name={noteField(layer)} rows={2} defaultValue={values[noteField(layer)] ?? step.notes[layer] ?? ""} error={errors[noteField(layer)]} />
                ))}
              </div>
            </details>
          ) : null}
          <div className="flex gap-2">
            <Button type="submit" disabled={navigation.state === "submitting"}>
              Save probe {index + 1}
            </Button>
            <Link to="." className="inline-flex h-10 items-center px-3 text-sm text-ink-muted underline underline-offset-4">
              Close
            </Link>
          </div>
        </Form>
      ) : null}
    </Card>
  );
}

export default function EditLesson({ loaderData, actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const [searchParams] = useSearchParams();
  const errors: Record<string, string> = actionData?.errors ?? {};
  const values: Record<string, string> = actionData?.values ?? {};
  const editingStep = values.intent === "save-step" ? Number(values.index) : Number(searchParams.get("step") ?? -1);
  const addErrors = values.intent === "add-step" ? errors : {};
  return (
    <>
      <PageHeader
        title={`Edit: ${loaderData.title}`}
        description={
          <>
            On the scenario{" "}
            <Link to={loaderData.scenario.path} className="text-harbour underline underline-offset-4">
              {loaderData.scenario.title}
            </Link>
            . Trainees see a layer's note only once it is revealed.
          </>
        }
        actions={
          <>
            <ButtonLink variant="secondary" to={loaderData.lessonPath}>
              Lesson page
            </ButtonLink>
            <ButtonLink variant="secondary" to={`${loaderData.lessonPath}/present`}>
              Present
            </ButtonLink>
          </>
        }
      />
      <datalist id="lesson-services">
        {loaderData.services.map((name) => (
          <option key={name} value={name} />
        ))}
      </datalist>
      <div className="max-w-4xl space-y-6">
        <FormError message={errors.form} />
        <Card className="p-5">
          <h2 className="text-sm font-semibold">Details</h2>
          <Form method="post" className="mt-3 space-y-4" noValidate aria-label="Lesson details">
            <input type="hidden" name="intent" value="save-details" />
            <input type="hidden" name="version" value={loaderData.version} />
            <TextField label="Title" name="title" required maxLength={100} defaultValue={values.intent === "save-details" ? values.title : loaderData.title} error={values.intent === "save-details" ? errors.title : undefined} />
            <TextAreaField label="Introduction (Markdown)" name="introduction" rows={4} defaultValue={values.intent === "save-details" ? values.introduction : loaderData.introduction} error={values.intent === "save-details" ? errors.introduction : undefined} />
            <Button type="submit" size="sm" disabled={navigation.state === "submitting"}>
              Save details
            </Button>
          </Form>
        </Card>

        <section aria-labelledby="probes-heading" className="space-y-4">
          <h2 id="probes-heading" className="text-sm font-semibold">
            Probes, in order ({loaderData.steps.length} of at most {loaderData.maxSteps})
          </h2>
          {loaderData.steps.length === 0 ? <p className="text-sm text-ink-muted">No probes yet: add the first below.</p> : null}
          {loaderData.steps.map((step, index) => (
            <StepCard key={`${index}-${step.probe.from}-${step.probe.interface}-${step.probe.service}`} data={loaderData} step={step} index={index} editing={index === editingStep} errors={index === editingStep ? errors : {}} values={index === editingStep ? values : {}} />
          ))}
        </section>

        {loaderData.steps.length < loaderData.maxSteps ? (
          <Card className="p-5" id="add-probe">
            <h2 className="text-sm font-semibold">Add a probe</h2>
            <Form method="post" className="mt-3 space-y-4" noValidate aria-label="Add a probe">
              <input type="hidden" name="intent" value="add-step" />
              <input type="hidden" name="version" value={loaderData.version} />
              <ProbeFields data={loaderData} values={values.intent === "add-step" ? values : {}} errors={addErrors} />
              <Button type="submit" disabled={navigation.state === "submitting"}>
                Add probe
              </Button>
            </Form>
          </Card>
        ) : null}

        <DeleteCard noun="lesson" title={loaderData.title} intent="delete-lesson" before="Its attempts and scores go with it." after="The lesson, every attempt at it and every score are removed. The audit log keeps a record of it." />
      </div>
    </>
  );
}
