import { Form, Link, redirect, useNavigation } from "react-router";
import type { Route } from "./+types/drill-edit";
import { serializeFlash } from "#server/auth/flash.server";
import { actorOf } from "#server/http/actor.server";
import { fieldErrorsOf, formValues, invalidForm, readForm, unknownIntent } from "#server/http/form.server";
import { refusedForm, refusedPage } from "#server/http/refusals.server";
import { clientAddressOf } from "#server/http/request-context.server";
import { assertGoal, changeDrill, deleteDrill, findDrill, fixAnswerOf, goalsOf, orderAnswerOf, spotAnswerOf } from "#server/services/training-drills.server";
import { findScenario } from "#server/services/training-scenarios.server";
import { compileModel, expectationWords } from "#server/engine/index";
import { OUTCOME_LABELS, OUTCOMES } from "#server/engine/vocabulary";
import { namesByKind } from "#server/analysis/catalogue";
import { requireTrainer } from "#server/training/access.server";
import { bestExposure, checkGoals, gradeFix, MAX_DRILL_GOALS, moveInOrder, spotElements, spotFindings } from "#server/training/drills";
import { trainingIdOf, trainingPath } from "#server/training/routes.server";
import { Refusal } from "#server/errors";
import { DrillDetailsSchema, GoalFormSchema, GoalIndexSchema, MoveRuleSchema, SpotFindingSchema, VersionSchema } from "#server/training/schemas";
import { PageErrorBoundary } from "#app/components/error-panel";
import { TextAreaField } from "#app/components/device/editor-kit";
import { DeleteCard } from "#app/components/training/delete-card";
import { GoalList, RuleOrderList } from "#app/components/training/drill-parts";
import { Button, ButtonLink } from "#app/components/ui/button";
import { Badge, Card, PageHeader } from "#app/components/ui/card";
import { FormError, SelectField, TextField } from "#app/components/ui/field";
import { DRILL_KIND_HINTS, DRILL_KIND_LABELS } from "#app/utils/drill-words";

// The drill editor (trainers): details, and per kind the finding to spot, the goals, and the
// trainer's answer (a model for a fix drill, an order for an order drill), each checked by the
// engine as it is now, so the trainer sees that the answer meets every goal.

export const meta: Route.MetaFunction = () => [{ title: "Edit drill · Training · Sallyport" }];
export const ErrorBoundary = PageErrorBoundary;

export async function loader({ params, context }: Route.LoaderArgs) {
  const access = requireTrainer(context);
  const drillId = trainingIdOf(params.drill, "drill");
  try {
    const drill = await findDrill({ organisationId: access.organisation.id, drillId });
    const scenario = await findScenario({ organisationId: access.organisation.id, scenarioId: drill.scenarioId });
    const document = scenario.document;
    const device = compileModel(document);
    const goals = goalsOf(drill);
    const base = trainingPath(access.organisation.slug);
    const onScenario = checkGoals(device, goals);
    let answer: { kind: "fix"; goalsHold: boolean[]; headline: string; changed: boolean } | { kind: "order"; rules: Array<{ id: string; words: string }>; goalsHold: boolean[]; exposed: string } | { kind: "spot"; findings: Array<{ key: string; title: string; cause: string }>; chosen: string | null } | null = null;
    if (drill.kind === "fix") {
      // The answer model graded as a trainee's fix would be, against the scenario: its goals, and what it changes.
      const graded = gradeFix(fixAnswerOf(drill, document), document, goals);
      answer = { kind: "fix", goalsHold: graded.goals.map((goal) => goal.holds), headline: graded.collateral.headline, changed: graded.collateral.changed };
    } else if (drill.kind === "order") {
      const order = orderAnswerOf(drill, document);
      const best = bestExposure(document, order, goals);
      const byId = new Map(document.inboundRules.map((rule) => [rule.id, rule]));
      answer = {
        kind: "order",
        rules: order.map((id) => {
          const rule = byId.get(id)!;
          return { id, words: `${rule.action} ${rule.sources.join(", ")} → ${rule.interface} ${rule.services.join(", ")}` };
        }),
        goalsHold: checkGoals(compileModel({ ...document, inboundRules: order.map((id) => byId.get(id)!) }), goals).map((goal) => goal.holds),
        exposed: best?.exposed.toString() ?? "0",
      };
    } else if (drill.kind === "spot") {
      const labels = new Map(spotElements(document).map((element) => [element.ref, element.label]));
      answer = { kind: "spot", findings: spotFindings(document).map((entry) => ({ key: entry.key, title: entry.finding.title, cause: labels.get(entry.cause) ?? entry.cause })), chosen: spotAnswerOf(drill)?.findingKey ?? null };
    }
    return {
      title: drill.title,
      kind: drill.kind,
      introduction: drill.introduction,
      seed: drill.seed,
      count: drill.count,
      version: drill.version,
      drillPath: `${base}/drills/${drill.id}`,
      scenario: { title: scenario.title, path: `${base}/scenarios/${scenario.id}` },
      goals: goals.map((goal, index) => ({ words: expectationWords(goal), onScenario: onScenario[index].holds })),
      maxGoals: MAX_DRILL_GOALS,
      interfaces: document.interfaces.map((entry) => entry.name),
      services: namesByKind(device.catalogue),
      outcomes: OUTCOMES.map((outcome) => ({ value: outcome, label: OUTCOME_LABELS[outcome] })),
      answer,
    };
  } catch (error) {
    return refusedPage(error);
  }
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const access = requireTrainer(context);
  const drillId = trainingIdOf(params.drill, "drill");
  const ref = { organisationId: access.organisation.id, drillId };
  const actor = actorOf(access, clientAddressOf(context));
  const values = formValues(await readForm(request));
  const here = trainingPath(access.organisation.slug, "drills", drillId, "edit");
  const done = async (message: string, to = here) => redirect(to, { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message }) } });
  const version = VersionSchema.safeParse(values.version);
  if (!version.success && values.intent !== "delete-drill") return invalidForm({ form: version.error.issues[0].message }, values);
  const expected = version.success ? version.data : 0;
  try {
    switch (values.intent) {
      case "save-details": {
        const parsed = DrillDetailsSchema.safeParse(values);
        if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
        const changed = await changeDrill(ref, expected, (drill) => (drill.title === parsed.data.title && drill.introduction === parsed.data.introduction && drill.seed === parsed.data.seed && drill.count === parsed.data.count ? null : parsed.data), "details", actor);
        return done(changed ? "Drill details saved." : "Nothing changed.");
      }
      case "add-goal": {
        const parsed = GoalFormSchema.safeParse(values);
        if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
        await changeDrill(
          ref,
          expected,
          (drill, document) => {
            if (drill.kind !== "fix" && drill.kind !== "order") throw new Refusal("Only repair and order drills have goals.", 400);
            const goals = goalsOf(drill);
            if (goals.length >= MAX_DRILL_GOALS) throw new Refusal(`A drill holds at most ${MAX_DRILL_GOALS} goals.`, 400);
            const goal = { ...parsed.data, id: `goal-${goals.length + 1}` };
            assertGoal(document, goal);
            return { goals: [...goals, goal].map((entry, index) => ({ ...entry, id: `goal-${index + 1}` })) };
          },
          "added a goal",
          actor,
        );
        return done("Goal added.", `${here}#goals`);
      }
      case "delete-goal": {
        const index = GoalIndexSchema.safeParse(values.index);
        if (!index.success) return invalidForm({ form: "That goal is not in the drill." }, values);
        await changeDrill(
          ref,
          expected,
          (drill) => {
            const goals = goalsOf(drill);
            if (index.data >= goals.length) throw new Refusal("That goal is not in the drill: reload the page.", 409);
            return { goals: goals.filter((_, position) => position !== index.data).map((entry, position) => ({ ...entry, id: `goal-${position + 1}` })) };
          },
          `deleted goal ${index.data + 1}`,
          actor,
        );
        return done(`Goal ${index.data + 1} deleted.`, `${here}#goals`);
      }
      case "choose-finding": {
        const parsed = SpotFindingSchema.safeParse(values);
        if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
        await changeDrill(
          ref,
          expected,
          (drill, document) => {
            if (drill.kind !== "spot") throw new Refusal("Only a find-the-cause drill asks about a finding.", 400);
            const found = spotFindings(document).find((entry) => entry.key === parsed.data.findingKey);
            if (!found) throw new Refusal("Choose one of the scenario's findings.", 400, { field: "findingKey" });
            return { answer: { findingKey: found.key, cause: found.cause } };
          },
          "chose the finding",
          actor,
        );
        return done("Finding chosen.");
      }
      case "move-answer": {
        const parsed = MoveRuleSchema.safeParse(values);
        if (!parsed.success) return invalidForm({ form: "Move one of the scenario's rules up or down." }, values);
        await changeDrill(
          ref,
          expected,
          (drill, document) => {
            if (drill.kind !== "order") throw new Refusal("Only an order drill has an answer order.", 400);
            const order = orderAnswerOf(drill, document);
            if (!order.includes(parsed.data.ruleId)) throw new Refusal("That rule is not in the scenario.", 400);
            return { answer: { order: moveInOrder(order, parsed.data.ruleId, parsed.data.direction) } };
          },
          `moved ${parsed.data.ruleId} ${parsed.data.direction} in the answer`,
          actor,
        );
        return done(`Rule ${parsed.data.ruleId} moved ${parsed.data.direction}.`, `${here}#answer`);
      }
      case "delete-drill": {
        const title = await deleteDrill(ref, actor);
        return done(`Drill “${title}” deleted.`, trainingPath(access.organisation.slug));
      }
      default:
        return unknownIntent(values.intent);
    }
  } catch (error) {
    return refusedForm(error, values);
  }
}

export default function DrillEdit({ loaderData, actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const data = loaderData;
  const errors: Record<string, string> = actionData?.errors ?? {};
  const values: Record<string, string> = actionData?.values ?? {};
  const intent = values.intent;
  const errorsFor = (name: string) => (intent === name ? errors : {});
  const valuesFor = (name: string) => (intent === name ? values : {});
  const busy = navigation.state === "submitting";
  const answer = data.answer;
  return (
    <>
      <PageHeader
        title={`Edit: ${data.title}`}
        description={
          <>
            <Badge tone="harbour">{DRILL_KIND_LABELS[data.kind]}</Badge> on{" "}
            <Link to={data.scenario.path} className="text-harbour underline underline-offset-4">
              {data.scenario.title}
            </Link>
            . {DRILL_KIND_HINTS[data.kind]}
          </>
        }
        actions={<ButtonLink to={data.drillPath}>Open the drill</ButtonLink>}
      />
      <div className="max-w-4xl space-y-6">
        {intent && !["save-details", "add-goal", "choose-finding"].includes(intent) ? <FormError message={errors.form} /> : null}
        <Card className="p-5">
          <h2 className="text-sm font-semibold">Details</h2>
          <FormError message={errorsFor("save-details").form} />
          <Form method="post" className="mt-3 space-y-4" noValidate aria-label="Drill details">
            <input type="hidden" name="intent" value="save-details" />
            <input type="hidden" name="version" value={data.version} />
            <TextField label="Title" name="title" required maxLength={100} defaultValue={valuesFor("save-details").title ?? data.title} error={errorsFor("save-details").title} />
            {data.kind === "predict" ? (
              <div className="grid gap-4 sm:grid-cols-2">
                <TextField label="Probes" name="count" inputMode="numeric" defaultValue={valuesFor("save-details").count ?? String(data.count)} error={errorsFor("save-details").count} hint="1 to 50, balanced across the outcomes the scenario gives." />
                <TextField label="Seed" name="seed" inputMode="numeric" defaultValue={valuesFor("save-details").seed ?? String(data.seed)} error={errorsFor("save-details").seed} hint="The same seed gives the same probes." />
              </div>
            ) : (
              <>
                <input type="hidden" name="count" value={data.count} />
                <input type="hidden" name="seed" value={data.seed} />
              </>
            )}
            <TextAreaField label="Introduction (optional, Markdown)" name="introduction" rows={4} defaultValue={valuesFor("save-details").introduction ?? data.introduction} error={errorsFor("save-details").introduction} />
            <Button type="submit" disabled={busy}>
              Save details
            </Button>
          </Form>
        </Card>

        {answer?.kind === "spot" ? (
          <Card className="p-5">
            <h2 className="text-sm font-semibold">The finding to explain</h2>
            {answer.findings.length === 0 ? (
              <p className="mt-2 text-sm text-ink-muted">The scenario has no finding with a cause in its model: edit the scenario (a stray listener, a rule below a broader one) first.</p>
            ) : (
              <Form method="post" className="mt-3 space-y-4" noValidate aria-label="The finding to explain">
                <input type="hidden" name="intent" value="choose-finding" />
                <input type="hidden" name="version" value={data.version} />
                <SelectField label="Finding" name="findingKey" defaultValue={valuesFor("choose-finding").findingKey ?? answer.chosen ?? answer.findings[0].key} error={errorsFor("choose-finding").findingKey}>
                  {answer.findings.map((finding) => (
                    <option key={finding.key} value={finding.key}>
                      {`${finding.title} — cause: ${finding.cause}`}
                    </option>
                  ))}
                </SelectField>
                <p className="text-sm text-ink-muted">The cause is the engine's: the earlier rule that decides a shadowed rule's traffic, the listener an exposure finding is about, the account a login finding names.</p>
                <Button type="submit" disabled={busy}>
                  Use this finding
                </Button>
              </Form>
            )}
          </Card>
        ) : null}

        {data.kind === "fix" || data.kind === "order" ? (
          <Card className="p-5" id="goals">
            <h2 className="text-sm font-semibold">Goals</h2>
            <p className="mt-1 text-sm text-ink-muted">Each goal is a probe and the outcome it must get. The trainee passes when every goal holds.</p>
            <GoalList goals={data.goals.map((goal, index) => ({ words: goal.words, holds: answer && "goalsHold" in answer ? (answer.goalsHold[index] ?? false) : false, note: goal.onScenario ? "already holds on the scenario" : "missed by the scenario" }))} holdsLabel="with your answer">
              {(index) => (
                <Form method="post">
                  <input type="hidden" name="intent" value="delete-goal" />
                  <input type="hidden" name="version" value={data.version} />
                  <input type="hidden" name="index" value={index} />
                  <Button type="submit" size="sm" variant="ghost-danger" aria-label={`Delete goal ${index + 1}`} disabled={busy}>
                    Delete
                  </Button>
                </Form>
              )}
            </GoalList>
            {data.goals.length < data.maxGoals ? (
              <Form method="post" className="mt-4 space-y-3 border-t border-line pt-4" noValidate aria-label="Add a goal">
                <h3 className="text-sm font-semibold">Add a goal</h3>
                <FormError message={errorsFor("add-goal").form} />
                <input type="hidden" name="intent" value="add-goal" />
                <input type="hidden" name="version" value={data.version} />
                <div className="grid gap-3 sm:grid-cols-2">
                  <TextField label="From (source address)" name="from" className="font-mono" defaultValue={valuesFor("add-goal").from ?? ""} error={errorsFor("add-goal").from} />
                  <SelectField label="Interface" name="interface" defaultValue={valuesFor("add-goal").interface ?? data.interfaces[0]} error={errorsFor("add-goal").interface}>
                    {data.interfaces.map((name) => (
                      <option key={name} value={name}>
                        {name}
                      </option>
                    ))}
                  </SelectField>
                  <TextField label="Service" name="service" list="drill-services" className="font-mono" defaultValue={valuesFor("add-goal").service ?? "https"} error={errorsFor("add-goal").service} />
                  <TextField label="To (device address, optional)" name="to" className="font-mono" defaultValue={valuesFor("add-goal").to ?? ""} error={errorsFor("add-goal").to} />
                  <TextField label="When" name="when" defaultValue={valuesFor("add-goal").when ?? "all-week"} error={errorsFor("add-goal").when} hint='"all-week", or a week time such as "tue 10:00" on the device clock.' />
                  <SelectField label="Must get" name="expect" defaultValue={valuesFor("add-goal").expect ?? "silent"} error={errorsFor("add-goal").expect}>
                    {data.outcomes.map((outcome) => (
                      <option key={outcome.value} value={outcome.value}>
                        {outcome.label}
                      </option>
                    ))}
                  </SelectField>
                </div>
                <datalist id="drill-services">
                  {data.services.map((name) => (
                    <option key={name} value={name} />
                  ))}
                </datalist>
                <Button type="submit" disabled={busy}>
                  Add goal
                </Button>
              </Form>
            ) : null}
          </Card>
        ) : null}

        {answer?.kind === "fix" ? (
          <Card className="p-5" id="answer">
            <h2 className="text-sm font-semibold">Your answer model</h2>
            <p className="mt-1 text-sm text-ink-muted">
              A copy of the scenario edited to the right fix. A trainee's model is compared with it by effect: any source whose outcome differs is collateral change. Against the scenario: {answer.headline}
            </p>
            <ButtonLink className="mt-3" variant="secondary" to={`${data.drillPath}/answer/model/rules`}>
              Edit the answer model
            </ButtonLink>
          </Card>
        ) : null}

        {answer?.kind === "order" ? (
          <Card className="p-5" id="answer">
            <h2 className="text-sm font-semibold">Your answer order</h2>
            <p className="mt-1 text-sm text-ink-muted">{`The best order you know: trainees must meet every goal with no more exposed addresses than this (${answer.exposed}, summed over every address, service and slice of the week).`}</p>
            <RuleOrderList rules={answer.rules} intent="move-answer" version={data.version} disabled={busy} label="Answer order" />
          </Card>
        ) : null}

        <DeleteCard noun="drill" title={data.title} intent="delete-drill" before="Deleting the drill deletes every attempt at it." after="Every attempt at this drill and its score are deleted with it. This cannot be undone." />
      </div>
    </>
  );
}
