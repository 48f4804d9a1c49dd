import { Link } from "react-router";
import type { Route } from "./+types/index";
import { requireLearner } from "#server/training/access.server";
import { TRAINING_EXAMPLES } from "#server/training/examples";
import { listDeviceNames, listScenarios } from "#server/services/training-scenarios.server";
import { listLessons } from "#server/services/training-lessons.server";
import { listDrills } from "#server/services/training-drills.server";
import { LAYER_LABELS } from "#server/engine/vocabulary";
import { PageErrorBoundary } from "#app/components/error-panel";
import { ButtonLink } from "#app/components/ui/button";
import { Badge, Card, PageHeader } from "#app/components/ui/card";
import { EmptyState } from "#app/components/ui/empty-state";
import { MarkdownText } from "#app/components/markdown";
import { DRILL_KIND_LABELS } from "#app/utils/drill-words";

export const meta: Route.MetaFunction = () => [{ title: "Training · Sallyport" }];

// A refusal (a role too low, say) shows inside the organisation's frame.
export const ErrorBoundary = PageErrorBoundary;

export async function loader({ context }: Route.LoaderArgs) {
  const access = requireLearner(context);
  const [scenarios, devices, lessons, drills] = await Promise.all([listScenarios(access.organisation.id), listDeviceNames(access.organisation.id), listLessons(access.organisation.id), listDrills(access.organisation.id)]);
  return {
    base: `/o/${access.organisation.slug}`,
    trainer: access.trainer,
    scenarios,
    lessons,
    drills,
    devices: devices.slice(0, 12),
    moreDevices: devices.length > 12,
    examples: TRAINING_EXAMPLES.map((example) => ({ key: example.key, title: example.title, summary: example.summary, teaches: LAYER_LABELS[example.teaches] })),
  };
}

export default function Training({ loaderData }: Route.ComponentProps) {
  const { base, trainer, scenarios, lessons, drills, devices, examples } = loaderData;
  return (
    <>
      <PageHeader
        title="Training"
        description="Walk juniors through the layers of defence one at a time: on a device's Trace tab, or in lessons on teaching scenarios that live apart from the fleet."
        actions={
          <>
            <ButtonLink variant="secondary" to={`${base}/training/mine`}>
              My training
            </ButtonLink>
            {trainer ? (
              <>
                <ButtonLink variant="secondary" to={`${base}/training/progress`}>
                  Progress
                </ButtonLink>
                <ButtonLink variant="secondary" to={`${base}/training/assignments`}>
                  Assignments
                </ButtonLink>
                <ButtonLink variant="secondary" to={`${base}/training/scenarios/new`}>
                  New scenario
                </ButtonLink>
                <ButtonLink variant="secondary" to={`${base}/training/drills/new`}>
                  New drill
                </ButtonLink>
                <ButtonLink to={`${base}/training/lessons/new`}>New lesson</ButtonLink>
              </>
            ) : null}
          </>
        }
      />
      <div className="space-y-8">
        <section aria-labelledby="lessons-heading">
          <h2 id="lessons-heading" className="mb-3 text-sm font-semibold">
            Lessons
          </h2>
          {lessons.length === 0 ? (
            <EmptyState title="No lessons yet">{trainer ? "Make a scenario (an example is the quickest start), then a lesson on it." : "A trainer makes them; they appear here."}</EmptyState>
          ) : (
            <ul className="grid gap-3 md:grid-cols-2">
              {lessons.map((lesson) => (
                <li key={lesson.id}>
                  <Card className="h-full p-4">
                    <Link to={`${base}/training/lessons/${lesson.id}`} className="font-medium text-harbour underline underline-offset-4">
                      {lesson.title}
                    </Link>
                    <p className="mt-1 text-sm text-ink-muted">
                      {lesson.probes} {lesson.probes === 1 ? "probe" : "probes"} on {lesson.scenarioTitle}
                    </p>
                  </Card>
                </li>
              ))}
            </ul>
          )}
        </section>

        <section aria-labelledby="drills-heading">
          <h2 id="drills-heading" className="mb-3 text-sm font-semibold">
            Drills
          </h2>
          <p className="mb-3 max-w-3xl text-sm text-ink-muted">Exercises the engine grades by itself: call the outcome of generated probes, find the cause of a finding, repair a model until its goals hold, or put rules in order.</p>
          {drills.length === 0 ? (
            <EmptyState title="No drills yet">{trainer ? "Make one on a teaching scenario with New drill." : "A trainer makes them; they appear here."}</EmptyState>
          ) : (
            <ul className="grid gap-3 md:grid-cols-2">
              {drills.map((drill) => (
                <li key={drill.id}>
                  <Card className="h-full p-4">
                    <Link to={`${base}/training/drills/${drill.id}`} className="font-medium text-harbour underline underline-offset-4">
                      {drill.title}
                    </Link>
                    <p className="mt-1 text-sm text-ink-muted">
                      {DRILL_KIND_LABELS[drill.kind]} on {drill.scenarioTitle}
                    </p>
                  </Card>
                </li>
              ))}
            </ul>
          )}
        </section>

        <Card className="p-5">
          <h2 className="text-sm font-semibold">Walkthrough on a device</h2>
          <p className="mt-1 max-w-3xl text-sm text-ink-muted">
            Every device's <strong>Trace</strong> tab has a walkthrough: type a probe, choose <em>Start walkthrough</em>, predict each layer's verdict, then reveal it. A link to a walkthrough opens at its first step.
          </p>
          {devices.length > 0 ? (
            <ul className="mt-3 flex flex-wrap gap-2" aria-label="Trace tabs">
              {devices.map((device) => (
                <li key={device.id}>
                  <Link to={`${base}/devices/${device.id}/analysis`} className="inline-flex h-8 items-center rounded-control border border-line-strong px-3 font-mono text-sm hover:bg-surface-sunken">
                    {device.name}
                  </Link>
                </li>
              ))}
              {loaderData.moreDevices ? (
                <li>
                  <Link to={`${base}/devices`} className="inline-flex h-8 items-center px-2 text-sm text-harbour underline underline-offset-4">
                    All devices
                  </Link>
                </li>
              ) : null}
            </ul>
          ) : (
            <p className="mt-3 text-sm text-ink-faint">No devices yet.</p>
          )}
        </Card>

        <section aria-labelledby="scenarios-heading">
          <h2 id="scenarios-heading" className="mb-3 text-sm font-semibold">
            Teaching scenarios
          </h2>
          <p className="mb-3 max-w-3xl text-sm text-ink-muted">Device models for teaching. They live here, apart from the fleet: never in fleet counts, findings, proposals or changes.</p>
          {scenarios.length === 0 ? (
            <EmptyState title="No teaching scenarios yet">{trainer ? "Start one from an example below, from scratch, or as a copy of a device." : "A trainer makes them."}</EmptyState>
          ) : (
            <ul className="grid gap-3 md:grid-cols-2">
              {scenarios.map((scenario) => (
                <li key={scenario.id}>
                  <Card className="h-full p-4">
                    <Link to={`${base}/training/scenarios/${scenario.id}`} className="font-medium text-harbour underline underline-offset-4">
                      {scenario.title}
                    </Link>{" "}
                    {scenario.anonymised ? <Badge>anonymised copy</Badge> : scenario.origin === "copy" ? <Badge>copy</Badge> : scenario.origin === "example" ? <Badge tone="brass">example</Badge> : null}
                    <p className="mt-1 font-mono text-xs text-ink-muted">{scenario.deviceName}</p>
                    {scenario.summary ? <MarkdownText className="mt-2 line-clamp-3 text-sm text-ink-muted">{scenario.summary}</MarkdownText> : null}
                  </Card>
                </li>
              ))}
            </ul>
          )}
        </section>

        {trainer ? (
          <section aria-labelledby="examples-heading">
            <h2 id="examples-heading" className="mb-3 text-sm font-semibold">
              Examples shipped with Sallyport
            </h2>
            <p className="mb-3 max-w-3xl text-sm text-ink-muted">Invented small businesses, each teaching one layer. Start a scenario from one, then build a lesson on it.</p>
            <ul className="grid gap-3 md:grid-cols-2 xl:grid-cols-3">
              {examples.map((example) => (
                <li key={example.key}>
                  <Card className="flex h-full flex-col p-4">
                    <p className="font-medium">{example.title}</p>
                    <p className="mt-0.5 text-xs text-ink-muted">Teaches: {example.teaches}</p>
                    <MarkdownText className="mt-2 flex-1 text-sm text-ink-muted">{example.summary}</MarkdownText>
                    <div className="mt-3">
                      <ButtonLink variant="secondary" size="sm" to={`${base}/training/scenarios/new?example=${example.key}`} aria-label={`Use the example ${example.title}`}>
                        Use this example
                      </ButtonLink>
                    </div>
                  </Card>
                </li>
              ))}
            </ul>
          </section>
        ) : null}
      </div>
    </>
  );
}
