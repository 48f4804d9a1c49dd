import { Form, Link, redirect, useNavigation } from "react-router";
import type { Route } from "./+types/drill-attempt";
import { fieldErrorsOf, formValues, invalidForm, readForm, unknownIntent } from "#server/http/form.server";
import { refusedForm, refusedPage } from "#server/http/refusals.server";
import { answerPredict, answerSpot, checkFix, checkOrder, drillScriptOfAttempt, findDrillAttempt, moveRule } from "#server/services/training-drills.server";
import { attemptOwnerName } from "#server/services/training-lessons.server";
import { requireLearner } from "#server/training/access.server";
import { drillScore, drillView, type DrillTrace } from "#server/training/drills";
import { trainingIdOf, trainingPath } from "#server/training/routes.server";
import { MoveRuleSchema, PredictAnswerSchema, SpotAnswerSchema } from "#server/training/schemas";
import { LAYERS, OUTCOME_LABELS, OUTCOMES } from "#server/engine/vocabulary";
import { PageErrorBoundary } from "#app/components/error-panel";
import { DEVICE_SECTIONS, SECTION_TITLES } from "#app/components/device/sections";
import { GoalList, RuleOrderList } from "#app/components/training/drill-parts";
import { Button } from "#app/components/ui/button";
import { Card, PageHeader } from "#app/components/ui/card";
import { cx } from "#app/components/ui/cx";
import { FormError, SelectField } from "#app/components/ui/field";
import { LAYER_TITLES, outcomeSentence } from "#app/utils/trace-words";

// Taking a drill (docs/decisions/016, "Drills"): the page is drawn from `drillView` alone (a
// predict drill's later probes and answers, a spot drill's cause before the pick, and a repair
// drill's answer model are never in its data). After each answer, the explanation in words.

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data && "title" in data ? data.title : "Drill"} · Training · Sallyport` }];
export const ErrorBoundary = PageErrorBoundary;

export async function loader({ params, context }: Route.LoaderArgs) {
  const access = requireLearner(context);
  const attemptId = trainingIdOf(params.attempt, "attempt");
  try {
    const attempt = await findDrillAttempt({ organisationId: access.organisation.id, attemptId }, { userId: access.user.id, trainer: access.trainer });
    const script = drillScriptOfAttempt(attempt);
    const mine = attempt.userId === access.user.id;
    const base = trainingPath(access.organisation.slug);
    return {
      title: attempt.title,
      view: drillView(script),
      score: drillScore(script),
      mine,
      ownerName: mine ? null : await attemptOwnerName(attempt),
      attemptPath: `${base}/drills/attempts/${attempt.id}`,
      drillPath: attempt.drillId ? `${base}/drills/${attempt.drillId}` : base,
    };
  } catch (error) {
    return refusedPage(error);
  }
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const access = requireLearner(context);
  const attemptId = trainingIdOf(params.attempt, "attempt");
  const ref = { organisationId: access.organisation.id, attemptId };
  const viewer = { userId: access.user.id, trainer: access.trainer };
  const values = formValues(await readForm(request));
  const here = trainingPath(access.organisation.slug, "drills", "attempts", attemptId);
  try {
    switch (values.intent) {
      case "predict": {
        const parsed = PredictAnswerSchema.safeParse(values);
        if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
        await answerPredict(ref, viewer, parsed.data.index, { outcome: parsed.data.outcome, layer: parsed.data.layer });
        return redirect(`${here}#answer-${parsed.data.index}`);
      }
      case "spot": {
        const parsed = SpotAnswerSchema.safeParse(values);
        if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
        await answerSpot(ref, viewer, parsed.data.element);
        return redirect(`${here}#result`);
      }
      case "check-fix":
        await checkFix(ref, viewer);
        return redirect(`${here}#result`);
      case "move": {
        const parsed = MoveRuleSchema.safeParse(values);
        if (!parsed.success) return invalidForm({ form: "Move one of the listed rules up or down." }, values);
        await moveRule(ref, viewer, parsed.data.ruleId, parsed.data.direction);
        return redirect(`${here}#rule-${parsed.data.ruleId}`);
      }
      case "check-order":
        await checkOrder(ref, viewer);
        return redirect(`${here}#result`);
      default:
        return unknownIntent(values.intent);
    }
  } catch (error) {
    return refusedForm(error, values);
  }
}

type Data = Route.ComponentProps["loaderData"];

/** The trace in words: the outcome sentence, then what each layer did. */
function TraceWords({ trace }: { trace: DrillTrace }) {
  return (
    <div className="mt-2 space-y-2 text-sm">
      <p>{outcomeSentence(trace)}</p>
      <ol className="list-decimal space-y-1 pl-5 text-ink-muted">
        {trace.layers.map((layer, index) => (
          <li key={layer.layer}>
            <span className="font-medium text-ink">{LAYER_TITLES[layer.layer]}</span>
            {`: ${layer.result === "pass" ? "passes it on" : "decides"} — ${layer.detail}`}
            {index === trace.layers.length - 1 && index < LAYERS.length - 1 ? " (the layers after it are not reached)" : ""}
          </li>
        ))}
      </ol>
    </div>
  );
}

function probeWords(probe: { from: string; interface: string; service: string; to: string; at: string }): string {
  return `${probe.from} → ${probe.interface} (${probe.to}) ${probe.service}, at ${probe.at.replace("T", " ").replace(/:\d\d(\.\d+)?Z$/, " UTC")}`;
}

function Mark({ ok, children }: { ok: boolean; children: string }) {
  return <span className={cx("rounded-full border px-2 text-xs font-medium", ok ? "border-success text-success" : "border-danger text-danger")}>{`${ok ? "right" : "wrong — it is"}: ${children}`}</span>;
}

function Predict({ data, view, errors, values, busy }: { data: Data; view: Extract<Data["view"], { kind: "predict" }>; errors: Record<string, string>; values: Record<string, string>; busy: boolean }) {
  return (
    <div className="space-y-4">
      <ol className="space-y-3" aria-label="Answered probes">
        {view.answered.map((entry, index) => (
          <li key={index} id={`answer-${index}`}>
            <Card className="p-4">
              <h2 className="text-sm font-semibold">{`Probe ${index + 1} of ${view.count}`}</h2>
              <p className="mt-1 break-words font-mono text-xs sm:text-sm">{probeWords(entry.probe)}</p>
              <div className="mt-2 flex flex-wrap gap-2">
                <Mark ok={entry.grade.outcomeCorrect}>{`outcome ${OUTCOME_LABELS[entry.grade.expected.outcome]}`}</Mark>
                <Mark ok={entry.grade.layerCorrect}>{`decided by ${LAYER_TITLES[entry.grade.expected.layer]}`}</Mark>
              </div>
              {!entry.grade.outcomeCorrect || !entry.grade.layerCorrect ? <p className="mt-1 text-xs text-ink-muted">{`Answered: ${OUTCOME_LABELS[entry.grade.answer.outcome]}, decided by ${LAYER_TITLES[entry.grade.answer.layer]}.`}</p> : null}
              <TraceWords trace={entry.trace} />
            </Card>
          </li>
        ))}
      </ol>
      {view.current && data.mine ? (
        <Card className="border-2 border-dashed border-harbour/60 p-4">
          <h2 className="text-sm font-semibold">{`Probe ${view.current.index + 1} of ${view.count}`}</h2>
          <p className="mt-1 break-words font-mono text-xs sm:text-sm">{probeWords(view.current.probe)}</p>
          <FormError message={errors.form} />
          <Form method="post" className="mt-3 space-y-3" noValidate aria-label={`Answer probe ${view.current.index + 1}`} preventScrollReset>
            <input type="hidden" name="intent" value="predict" />
            <input type="hidden" name="index" value={view.current.index} />
            <div className="grid gap-3 sm:grid-cols-2">
              <SelectField label="What does the outsider get?" name="outcome" defaultValue={values.outcome ?? ""} error={errors.outcome}>
                <option value="">—</option>
                {OUTCOMES.map((outcome) => (
                  <option key={outcome} value={outcome}>
                    {OUTCOME_LABELS[outcome]}
                  </option>
                ))}
              </SelectField>
              <SelectField label="Which layer decides it?" name="layer" defaultValue={values.layer ?? ""} error={errors.layer}>
                <option value="">—</option>
                {LAYERS.map((layer) => (
                  <option key={layer} value={layer}>
                    {LAYER_TITLES[layer]}
                  </option>
                ))}
              </SelectField>
            </div>
            <Button type="submit" disabled={busy}>
              Answer
            </Button>
          </Form>
        </Card>
      ) : null}
    </div>
  );
}

function Spot({ data, view, errors, busy }: { data: Data; view: Extract<Data["view"], { kind: "spot" }>; errors: Record<string, string>; busy: boolean }) {
  const labels = new Map(view.elements.map((element) => [element.ref, element.label]));
  return (
    <div className="space-y-4">
      <Card className="p-4">
        <h2 className="text-sm font-semibold">The finding</h2>
        <p className="mt-1 font-medium">{view.finding.title}</p>
        <p className="mt-1 text-sm text-ink-muted">{view.finding.detail}</p>
      </Card>
      {view.answer ? (
        <Card className="p-4" id="result" role="status" aria-label="Your answer">
          <h2 className="text-sm font-semibold">{view.answer.correct ? "Right: that element causes it" : "Not that one"}</h2>
          <p className="mt-1 text-sm">{`Picked: ${labels.get(view.answer.picked) ?? view.answer.picked}.`}</p>
          <p className="mt-1 text-sm">{`The cause, as the engine finds it: ${labels.get(view.answer.cause) ?? view.answer.cause}.`}</p>
        </Card>
      ) : data.mine ? (
        <Form method="post" className="space-y-3" noValidate aria-label="Pick the cause">
          <input type="hidden" name="intent" value="spot" />
          <fieldset aria-describedby={errors.element ? "element-error" : undefined}>
            <legend className="text-sm font-semibold">The model: which element causes the finding?</legend>
            <ul className="mt-2 space-y-1">
              {view.elements.map((element) => (
                <li key={element.ref}>
                  <label className="flex items-start gap-2 rounded-control border border-line p-2 text-sm">
                    <input type="radio" name="element" value={element.ref} className="mt-1" />
                    <span className="min-w-0 break-words">
                      <span className="text-xs uppercase tracking-wide text-ink-muted">{element.kind.replace("-", " ")}</span> {element.label}
                    </span>
                  </label>
                </li>
              ))}
            </ul>
            {errors.element ? (
              <p id="element-error" className="mt-1 text-sm text-danger" role="alert">
                {errors.element}
              </p>
            ) : null}
          </fieldset>
          <FormError message={errors.form} />
          <Button type="submit" disabled={busy}>
            This one
          </Button>
        </Form>
      ) : (
        <p className="text-sm text-ink-muted">Not answered yet.</p>
      )}
    </div>
  );
}

/** The button that has the engine grade the trainee's model as it stands. */
function CheckForm({ intent, label, error, busy }: { intent: string; label: string; error?: string; busy: boolean }) {
  return (
    <Form method="post" className="mt-4">
      <input type="hidden" name="intent" value={intent} />
      <FormError message={error} />
      <Button type="submit" disabled={busy}>
        {label}
      </Button>
    </Form>
  );
}

function Fix({ data, view, errors, busy }: { data: Data; view: Extract<Data["view"], { kind: "fix" }>; errors: Record<string, string>; busy: boolean }) {
  const last = view.checks.at(-1);
  return (
    <div className="space-y-4">
      <Card className="p-4">
        <h2 className="text-sm font-semibold">Goals</h2>
        <p className="mt-1 text-sm text-ink-muted">Edit your sandbox copy of the model until every goal holds. Change nothing else: what you change beyond the fix shows as collateral change.</p>
        <GoalList goals={view.goals.map((words, index) => ({ words, holds: last ? last.goals[index].holds : null, result: last?.goals[index].result }))} holdsLabel="at your last check" />
      </Card>
      <Card className="p-4">
        <h2 className="text-sm font-semibold">Your sandbox copy</h2>
        <nav aria-label="Sandbox sections" className="mt-2 flex flex-wrap gap-2">
          {DEVICE_SECTIONS.map((section) => (
            <Link key={section} to={`${data.attemptPath}/model/${section}`} className="inline-flex h-8 items-center rounded-control border border-line-strong px-3 text-sm hover:bg-surface-sunken">
              {SECTION_TITLES[section]}
            </Link>
          ))}
        </nav>
        {data.mine && !data.score.finished ? (
          <CheckForm intent="check-fix" label="Check my fix" error={errors.form} busy={busy} />
        ) : null}
      </Card>
      {last ? (
        <Card className="p-4" id="result" role="status" aria-label="Result of your last check">
          <h2 className="text-lg font-semibold">{last.pass ? "Pass: every goal holds" : `Not yet: ${last.goals.filter((goal) => !goal.holds).length} of ${last.goals.length} goals do not hold`}</h2>
          <p className="mt-1 text-sm">{last.collateral.changed ? `Collateral change against the trainer's answer: ${last.collateral.headline}` : "No collateral change: your model answers every source exactly as the trainer's answer does."}</p>
          {last.collateral.changed ? <p className="mt-1 text-sm text-ink-muted">{`Sources that get more than with the answer: ${last.collateral.gains}; that get less: ${last.collateral.loses}.`}</p> : null}
          <p className="mt-1 text-sm text-ink-muted">{`Checks so far: ${view.checks.length}.`}</p>
        </Card>
      ) : null}
    </div>
  );
}

function Order({ data, view, errors, busy }: { data: Data; view: Extract<Data["view"], { kind: "order" }>; errors: Record<string, string>; busy: boolean }) {
  const last = view.checks.at(-1);
  const editable = data.mine && !data.score.finished;
  return (
    <div className="space-y-4">
      <Card className="p-4">
        <h2 className="text-sm font-semibold">Goals</h2>
        <GoalList goals={view.goals.map((words, index) => ({ words, holds: last ? last.goals[index].holds : null, result: last?.goals[index].result }))} holdsLabel="at your last check" />
      </Card>
      <Card className="p-4">
        <h2 className="text-sm font-semibold">Inbound rules, first match wins</h2>
        <p className="mt-1 text-sm text-ink-muted">Move the rules so every goal holds with as few exposed addresses as possible.</p>
        {editable ? (
          <RuleOrderList rules={view.rules} intent="move" disabled={busy} label="Rule order" />
        ) : (
          <ol className="mt-3 list-decimal space-y-1 pl-6 text-sm" aria-label="Rule order">
            {view.rules.map((rule) => (
              <li key={rule.id}>
                <span className="font-mono font-medium">{rule.id}</span> <span className="text-ink-muted">{rule.words}</span>
              </li>
            ))}
          </ol>
        )}
        {editable ? (
          <CheckForm intent="check-order" label="Check this order" error={errors.form} busy={busy} />
        ) : null}
      </Card>
      {last ? (
        <Card className="p-4" id="result" role="status" aria-label="Result of your last check">
          <h2 className="text-lg font-semibold">{last.pass ? "Pass: every goal holds, as tight as the best order" : last.goals.every((goal) => goal.holds) ? "Every goal holds, but more is exposed than needed" : `Not yet: ${last.goals.filter((goal) => !goal.holds).length} of ${last.goals.length} goals do not hold`}</h2>
          <p className="mt-1 text-sm">{`Exposed addresses with this order: ${last.exposed}; the best order: ${last.best} (sources that get any answer, summed over every interface address, service and slice of the week).`}</p>
          <p className="mt-1 text-sm text-ink-muted">{`Checked order: ${last.order.join(", ")}.`}</p>
        </Card>
      ) : null}
    </div>
  );
}

export default function DrillAttempt({ loaderData, actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const busy = navigation.state === "submitting";
  const errors: Record<string, string> = actionData?.errors ?? {};
  const values: Record<string, string> = actionData?.values ?? {};
  const { view, score } = loaderData;
  return (
    <>
      <PageHeader
        title={loaderData.title}
        description={
          <>
            {loaderData.mine ? "Your attempt" : `The attempt of ${loaderData.ownerName ?? "a member"} (read only)`} ·{" "}
            <Link to={loaderData.drillPath} className="text-harbour underline underline-offset-4">
              back to the drill
            </Link>
          </>
        }
      />
      <div className="max-w-4xl space-y-5">
        <p className="text-sm text-ink-muted" aria-live="polite">
          {`Score ${score.points} of ${score.possible}${score.finished ? " — finished" : " so far"}`}
        </p>
        {view.kind === "predict" ? <Predict data={loaderData} view={view} errors={errors} values={values} busy={busy} /> : null}
        {view.kind === "spot" ? <Spot data={loaderData} view={view} errors={errors} busy={busy} /> : null}
        {view.kind === "fix" ? <Fix data={loaderData} view={view} errors={errors} busy={busy} /> : null}
        {view.kind === "order" ? <Order data={loaderData} view={view} errors={errors} busy={busy} /> : null}
      </div>
    </>
  );
}
