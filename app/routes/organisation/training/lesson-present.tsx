import { useEffect, useRef } from "react";
import { Link, useNavigate } from "react-router";
import type { Route } from "./+types/lesson-present";
import { refusedPage } from "#server/http/refusals.server";
import { findLesson, stepsOf } from "#server/services/training-lessons.server";
import { findScenario } from "#server/services/training-scenarios.server";
import { requireTrainer } from "#server/training/access.server";
import { presenterView, scriptOf } from "#server/training/lessons";
import { trainingIdOf, trainingPath } from "#server/training/routes.server";
import { Refusal } from "#server/errors";
import { PageErrorBoundary } from "#app/components/error-panel";
import { EvidenceView, ProbeLine, ProbeOutcome, RevealedLayers } from "#app/components/training/layer-steps";
import { LAYER_TITLES } from "#app/utils/trace-words";

// Presenter mode (docs/decisions/016): one probe at a time for a projector, in large type. The
// position is in the URL (?probe=2&shown=3), so a link opens where it says — and the lesson's
// link opens at the first probe with nothing revealed. → reveals the next layer, ← goes back.
// The page holds only what is revealed, like a trainee's.

export const meta: Route.MetaFunction = () => [{ title: "Presenting · Training · Sallyport" }];
export const ErrorBoundary = PageErrorBoundary;

const positionOf = (text: string | null, fallback: number) => (text && /^\d{1,3}$/.test(text) ? Number(text) : fallback);

export async function loader({ request, params, context }: Route.LoaderArgs) {
  const access = requireTrainer(context);
  const lessonId = trainingIdOf(params.lesson, "lesson");
  try {
    const lesson = await findLesson({ organisationId: access.organisation.id, lessonId });
    const scenario = await findScenario({ organisationId: access.organisation.id, scenarioId: lesson.scenarioId });
    const steps = stepsOf(lesson);
    if (steps.length === 0) throw new Refusal("This lesson has no probes yet: add them in the lesson editor first.", 409);
    const scripted = scriptOf(scenario.document, steps);
    if (!scripted.ok) throw new Refusal(scripted.message, 409);
    const url = new URL(request.url);
    const { view, previous, next } = presenterView(scripted.script, positionOf(url.searchParams.get("probe"), 1) - 1, positionOf(url.searchParams.get("shown"), 0));
    const path = trainingPath(access.organisation.slug, "lessons", lesson.id);
    const href = (position: { probe: number; shown: number } | null) => (position ? `${path}/present?probe=${position.probe + 1}&shown=${position.shown}` : null);
    return { title: lesson.title, probeCount: steps.length, view, previous: href(previous), next: href(next), lessonPath: path };
  } catch (error) {
    return refusedPage(error);
  }
}

export default function Present({ loaderData }: Route.ComponentProps) {
  const { view, previous, next, lessonPath } = loaderData;
  const navigate = useNavigate();
  const dialog = useRef<HTMLDialogElement>(null);

  // Rendered open (so it works without scripts); once hydrated it becomes a modal dialog, which
  // keeps focus and assistive technology inside it and closes with Escape.
  useEffect(() => {
    const element = dialog.current;
    if (!element || element.matches(":modal")) return;
    element.close();
    element.showModal();
  }, []);

  useEffect(() => {
    const onKey = (event: KeyboardEvent) => {
      if (event.altKey || event.ctrlKey || event.metaKey) return;
      if ((event.key === "ArrowRight" || event.key === "PageDown") && next) {
        event.preventDefault();
        navigate(next, { replace: true, preventScrollReset: true });
      } else if ((event.key === "ArrowLeft" || event.key === "PageUp") && previous) {
        event.preventDefault();
        navigate(previous, { replace: true, preventScrollReset: true });
      }
    };
    window.addEventListener("keydown", onKey);
    return () => window.removeEventListener("keydown", onKey);
  }, [navigate, next, previous]);

  return (
    <dialog
      ref={dialog}
      open
      aria-label={`Presenting ${loaderData.title}`}
      onCancel={(event) => {
        event.preventDefault();
        navigate(lessonPath);
      }}
      className="fixed inset-0 z-50 m-0 h-full max-h-none w-full max-w-none overflow-y-auto bg-canvas p-8 text-ink backdrop:bg-black/60 lg:p-14"
    >
      <div className="mx-auto max-w-6xl space-y-8">
        <header className="flex flex-wrap items-baseline justify-between gap-4">
          <h1 className="text-4xl font-semibold">{loaderData.title}</h1>
          <p className="text-2xl text-ink-muted" aria-live="polite">{`Probe ${view.index + 1} of ${loaderData.probeCount}`}</p>
        </header>
        <ProbeLine view={view} size="projector" />
        <RevealedLayers view={view} size="projector">
          {view.question ? (
            <li className="rounded-card border-4 border-dashed border-harbour/60 p-6">
              <h2 className="text-3xl font-semibold">{`${view.question.layerIndex + 1}. ${LAYER_TITLES[view.question.layer]} — what does it do?`}</h2>
              <div className="mt-4">
                <EvidenceView evidence={view.question.evidence} size="projector" />
              </div>
            </li>
          ) : null}
        </RevealedLayers>
        <ProbeOutcome view={view} size="projector" />
        <nav aria-label="Presenter" className="flex flex-wrap items-center gap-4 border-t border-line pt-6 text-2xl">
          {previous ? (
            <Link to={previous} replace preventScrollReset className="rounded-control border border-line-strong px-5 py-3">
              ← Back
            </Link>
          ) : (
            <span className="px-5 py-3 text-ink-faint">← Back</span>
          )}
          {next ? (
            <Link to={next} replace preventScrollReset className="rounded-control bg-harbour px-5 py-3 text-on-harbour">
              {view.question ? "Reveal →" : "Next probe →"}
            </Link>
          ) : (
            <span className="px-5 py-3 text-ink-faint">End of the lesson</span>
          )}
          <Link to={lessonPath} className="ml-auto text-xl text-ink-muted underline underline-offset-4">
            Leave presenter mode (Esc)
          </Link>
        </nav>
      </div>
    </dialog>
  );
}
