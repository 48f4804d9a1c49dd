import { Form, Link, redirect, useNavigation } from "react-router";
import type { Route } from "./+types/attempt";
import { fieldErrorsOf, formValues, invalidForm, readForm, unknownIntent } from "#server/http/form.server";
import { refusedForm, refusedPage } from "#server/http/refusals.server";
import { attemptOwnerName, findAttempt, predict, predictionsOf, scriptOfAttempt } from "#server/services/training-lessons.server";
import { requireLearner } from "#server/training/access.server";
import { attemptView, PredictionFormSchema, VERDICTS } from "#server/training/lessons";
import { trainingIdOf, trainingPath } from "#server/training/routes.server";
import { OUTCOME_LABELS, OUTCOMES } from "#server/engine/vocabulary";
import { PageErrorBoundary } from "#app/components/error-panel";
import { EvidenceView, ProbeLine, ProbeOutcome, RevealedLayers } from "#app/components/training/layer-steps";
import { Button } from "#app/components/ui/button";
import { Card, PageHeader } from "#app/components/ui/card";
import { FormError } from "#app/components/ui/field";
import { LAYER_TITLES, VERDICT_CHOICES } from "#app/utils/trace-words";
import { cx } from "#app/components/ui/cx";

// Taking a lesson (docs/decisions/016): the page is drawn from `attemptView` alone — the layers
// reached so far and the question for the next one. Later layers are not in its data.

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data && "title" in data ? data.title : "Lesson"} · Training · Sallyport` }];
export const ErrorBoundary = PageErrorBoundary;

/** `?probe=N`, 1-based; anything else is the current probe. */
function probeOf(url: URL): number | undefined {
  const text = url.searchParams.get("probe");
  return text && /^\d{1,3}$/.test(text) ? Number(text) - 1 : undefined;
}

export async function loader({ request, params, context }: Route.LoaderArgs) {
  const access = requireLearner(context);
  const attemptId = trainingIdOf(params.attempt, "attempt");
  try {
    const attempt = await findAttempt({ organisationId: access.organisation.id, attemptId }, { userId: access.user.id, trainer: access.trainer });
    // A drill's attempt has its own page (its script is a drill's).
    if (attempt.kind === "drill") return redirect(trainingPath(access.organisation.slug, "drills", "attempts", attempt.id));
    const view = attemptView(scriptOfAttempt(attempt), await predictionsOf(attempt), probeOf(new URL(request.url)));
    const mine = attempt.userId === access.user.id;
    const ownerName = mine ? null : await attemptOwnerName(attempt);
    const base = trainingPath(access.organisation.slug);
    return {
      title: attempt.title,
      view,
      mine,
      ownerName,
      attemptPath: `${base}/attempts/${attempt.id}`,
      lessonPath: attempt.lessonId ? `${base}/lessons/${attempt.lessonId}` : base,
    };
  } catch (error) {
    return refusedPage(error);
  }
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const access = requireLearner(context);
  const attemptId = trainingIdOf(params.attempt, "attempt");
  const values = formValues(await readForm(request));
  if (values.intent !== "predict") return unknownIntent(values.intent);
  const parsed = PredictionFormSchema.safeParse(values);
  if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
  const { step, layerIndex, verdict, outcome } = parsed.data;
  try {
    await predict({ organisationId: access.organisation.id, attemptId }, { userId: access.user.id, trainer: access.trainer }, { step, layerIndex }, { verdict, outcome });
  } catch (error) {
    return refusedForm(error, values);
  }
  // Back to the probe, at the layer just revealed.
  return redirect(`${trainingPath(access.organisation.slug, "attempts", attemptId)}?probe=${step + 1}#layer-${layerIndex}`);
}

function Question({ question, probe, errors, values }: { question: NonNullable<Route.ComponentProps["loaderData"]["view"]["probe"]["question"]>; probe: number; errors: Record<string, string>; values: Record<string, string> }) {
  const navigation = useNavigation();
  const title = LAYER_TITLES[question.layer];
  const kept = values.step === String(probe) && values.layerIndex === String(question.layerIndex) ? values : {};
  return (
    <li className="rounded-card border-2 border-dashed border-harbour/60 bg-surface p-4" id={`layer-${question.layerIndex}`}>
      <h3 className="text-sm font-semibold">{`${question.layerIndex + 1}. ${title} — your prediction`}</h3>
      <div className="mt-2">
        <EvidenceView evidence={question.evidence} />
      </div>
      <Form method="post" className="mt-4 space-y-4" noValidate aria-label={`Predict: ${title}`} preventScrollReset>
        <input type="hidden" name="intent" value="predict" />
        <input type="hidden" name="step" value={probe} />
        <input type="hidden" name="layerIndex" value={question.layerIndex} />
        <fieldset aria-describedby={errors.verdict ? "verdict-error" : undefined}>
          <legend className="text-sm font-medium">What does this layer do with the probe?</legend>
          <div className="mt-2 flex flex-wrap gap-4">
            {VERDICTS.map((verdict) => (
              <label key={verdict} className="flex items-center gap-2 text-sm">
                <input type="radio" name="verdict" value={verdict} defaultChecked={kept.verdict === verdict} />
                {VERDICT_CHOICES[verdict]}
              </label>
            ))}
          </div>
          {errors.verdict ? (
            <p id="verdict-error" className="mt-1 text-sm text-danger" role="alert">
              {errors.verdict}
            </p>
          ) : null}
        </fieldset>
        <div className="space-y-1.5">
          <label htmlFor="prediction-outcome" className="block text-sm font-medium">
            If it decides here: what does the outsider get?
          </label>
          <select
            id="prediction-outcome"
            name="outcome"
            defaultValue={kept.outcome ?? ""}
            aria-invalid={errors.outcome ? true : undefined}
            aria-describedby={errors.outcome ? "outcome-error" : undefined}
            className={cx("block h-10 w-full max-w-md rounded-control border bg-surface px-3 text-sm", errors.outcome ? "border-danger" : "border-line-strong")}
          >
            <option value="">—</option>
            {OUTCOMES.map((outcome) => (
              <option key={outcome} value={outcome}>
                {OUTCOME_LABELS[outcome]}
              </option>
            ))}
          </select>
          {errors.outcome ? (
            <p id="outcome-error" className="text-sm text-danger" role="alert">
              {errors.outcome}
            </p>
          ) : null}
        </div>
        <Button type="submit" disabled={navigation.state === "submitting"}>
          Reveal
        </Button>
      </Form>
    </li>
  );
}

export default function Attempt({ loaderData, actionData }: Route.ComponentProps) {
  const { view, mine } = loaderData;
  const probe = view.probe;
  const errors: Record<string, string> = actionData?.errors ?? {};
  const values: Record<string, string> = actionData?.values ?? {};
  const nextProbe = view.currentProbe !== null && view.currentProbe > probe.index ? view.currentProbe : null;
  return (
    <>
      <PageHeader
        title={loaderData.title}
        description={
          <>
            {mine ? "Your attempt" : `The attempt of ${loaderData.ownerName ?? "a member"} (read only)`} ·{" "}
            <Link to={loaderData.lessonPath} className="text-harbour underline underline-offset-4">
              back to the lesson
            </Link>
          </>
        }
      />
      <div className="max-w-4xl space-y-5">
        <nav aria-label="Probes" className="flex flex-wrap items-center gap-2 text-sm">
          <span className="font-medium">{`Probe ${probe.index + 1} of ${view.probeCount}`}</span>
          {Array.from({ length: view.probeCount }, (_, index) => index)
            .filter((index) => index <= (view.currentProbe ?? view.probeCount - 1))
            .map((index) => (
              <Link key={index} to={`${loaderData.attemptPath}?probe=${index + 1}`} aria-current={index === probe.index ? "page" : undefined} className={cx("inline-flex size-8 items-center justify-center rounded-control border", index === probe.index ? "border-harbour bg-harbour-soft font-semibold" : "border-line-strong")}>
                {index + 1}
              </Link>
            ))}
          <span className="ml-auto text-ink-muted" aria-live="polite">
            {`Score ${view.score.points} of ${view.score.possible}${view.done ? "" : " so far"}`}
          </span>
        </nav>
        <FormError message={errors.form} />
        <Card className="p-4">
          <ProbeLine view={probe} />
        </Card>
        <RevealedLayers view={probe}>{probe.question && mine ? <Question key={`${probe.index}-${probe.question.layerIndex}`} question={probe.question} probe={probe.index} errors={errors} values={values} /> : null}</RevealedLayers>
        {probe.question && !mine ? <p className="text-sm text-ink-muted">Not answered further yet.</p> : null}
        <ProbeOutcome view={probe} />
        {nextProbe !== null ? (
          <Link to={`${loaderData.attemptPath}?probe=${nextProbe + 1}`} className="inline-flex h-10 items-center rounded-control bg-harbour px-4 text-sm font-medium text-on-harbour">
            Next probe
          </Link>
        ) : null}
        {view.done && view.misses ? (
          <Card className="p-5" role="status" aria-label="Your score">
            <h2 className="text-lg font-semibold">{`${mine ? "You" : (loaderData.ownerName ?? "They")} scored ${view.score.points} of ${view.score.possible}`}</h2>
            {view.misses.length === 0 ? (
              <p className="mt-1 text-sm">Every prediction was right.</p>
            ) : (
              <ul className="mt-2 list-disc space-y-1 pl-5 text-sm">
                {view.misses.map((miss) => (
                  <li key={`${miss.step}-${miss.layerIndex}`}>
                    <Link to={`${loaderData.attemptPath}?probe=${miss.step + 1}#layer-${miss.layerIndex}`} className="text-harbour underline underline-offset-4">
                      {`Probe ${miss.step + 1}, ${LAYER_TITLES[miss.layer]}`}
                    </Link>
                    {`: predicted ${miss.predicted.verdict === "pass" ? "it passes" : `it decides${miss.predicted.outcome ? ` (${OUTCOME_LABELS[miss.predicted.outcome].toLowerCase()})` : ""}`}; it ${miss.actual === "pass" ? "passes" : `decides (${miss.actualOutcome ? OUTCOME_LABELS[miss.actualOutcome].toLowerCase() : ""})`}.`}
                  </li>
                ))}
              </ul>
            )}
          </Card>
        ) : null}
      </div>
    </>
  );
}
