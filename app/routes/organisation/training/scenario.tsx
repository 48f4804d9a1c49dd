import { Form, Link, redirect, useNavigation } from "react-router";
import type { Route } from "./+types/scenario";
import { serializeFlash } from "#server/auth/flash.server";
import { actorOf } from "#server/http/actor.server";
import { fieldErrorsOf, formValues, invalidForm, readForm, unknownIntent } from "#server/http/form.server";
import { refusedForm, refusedPage } from "#server/http/refusals.server";
import { clientAddressOf } from "#server/http/request-context.server";
import { deleteScenario, findScenario, sourceDeviceOf, updateScenarioDetails } from "#server/services/training-scenarios.server";
import { requireLearner, requireTrainer } from "#server/training/access.server";
import { trainingExample } from "#server/training/examples";
import { trainingIdOf, trainingPath } from "#server/training/routes.server";
import { ScenarioDetailsSchema } from "#server/training/schemas";
import { countElements } from "#server/workspace/index";
import { plural } from "#server/engine/format";
import { PageErrorBoundary } from "#app/components/error-panel";
import { MarkdownText } from "#app/components/markdown";
import { ScenarioBanner, ScenarioNav } from "#app/components/training/scenario-nav";
import { TextAreaField } from "#app/components/device/editor-kit";
import { DeleteCard } from "#app/components/training/delete-card";
import { Button } from "#app/components/ui/button";
import { Card, PageHeader } from "#app/components/ui/card";
import { FormError, TextField } from "#app/components/ui/field";
import { Table, Td, Th } from "#app/components/ui/table";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data && "title" in data ? data.title : "Scenario"} · Training · Sallyport` }];
export const ErrorBoundary = PageErrorBoundary;

export async function loader({ params, context }: Route.LoaderArgs) {
  const access = requireLearner(context);
  const scenarioId = trainingIdOf(params.scenario, "scenario");
  try {
    const scenario = await findScenario({ organisationId: access.organisation.id, scenarioId });
    // Where a copy came from is for its trainers; an anonymised copy does not tell trainees.
    const source = access.trainer ? await sourceDeviceOf(scenario) : null;
    const document = scenario.document;
    return {
      id: scenario.id,
      title: scenario.title,
      summary: scenario.summary,
      version: scenario.version,
      origin: scenario.origin,
      anonymised: scenario.anonymised,
      example: scenario.exampleKey ? (trainingExample(scenario.exampleKey)?.title ?? scenario.exampleKey) : null,
      source: source ? { name: source.name, path: `/o/${access.organisation.slug}/devices/${source.id}`, revision: scenario.sourceRevision } : null,
      trainer: access.trainer,
      trainingPath: trainingPath(access.organisation.slug),
      scenarioPath: trainingPath(access.organisation.slug, "scenarios", scenario.id),
      deviceName: document.device.name,
      counts: countElements(document),
      interfaces: document.interfaces.map((entry) => ({ name: entry.name, role: entry.role, addresses: entry.addresses, listeners: entry.listeners })),
    };
  } catch (error) {
    return refusedPage(error);
  }
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const access = requireTrainer(context);
  const scenarioId = trainingIdOf(params.scenario, "scenario");
  const ref = { organisationId: access.organisation.id, scenarioId };
  const actor = actorOf(access, clientAddressOf(context));
  const values = formValues(await readForm(request));
  const flash = async (to: string, message: string) => redirect(to, { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message }) } });
  try {
    switch (values.intent) {
      case "save-details": {
        const parsed = ScenarioDetailsSchema.safeParse(values);
        if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
        const changed = await updateScenarioDetails(ref, parsed.data, actor);
        return flash(trainingPath(access.organisation.slug, "scenarios", scenarioId), changed ? "Scenario details saved." : "Nothing changed.");
      }
      case "delete": {
        const title = await deleteScenario(ref, actor);
        return flash(trainingPath(access.organisation.slug), `Scenario “${title}” deleted.`);
      }
      default:
        return unknownIntent(values.intent);
    }
  } catch (error) {
    return refusedForm(error, values);
  }
}

export default function Scenario({ loaderData, actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const errors: Record<string, string> = actionData?.errors ?? {};
  const values: Record<string, string> = actionData?.values ?? {};
  const { counts } = loaderData;
  return (
    <>
      <ScenarioBanner title={loaderData.title} deviceName={loaderData.deviceName} trainingPath={loaderData.trainingPath} />
      <PageHeader
        title={loaderData.title}
        description={
          loaderData.origin === "example"
            ? `From the example “${loaderData.example}”.`
            : loaderData.origin === "copy"
              ? `${loaderData.anonymised ? "An anonymised copy" : "A copy"} of a fleet device${loaderData.source ? ` (${loaderData.source.name}, r${loaderData.source.revision})` : ""}; the device itself was not changed.`
              : "Made from scratch."
        }
      />
      <ScenarioNav scenarioPath={loaderData.scenarioPath} />
      <div className="grid gap-6 lg:grid-cols-[2fr_1fr]">
        <div className="space-y-6">
          {loaderData.summary ? (
            <Card className="p-5">
              <h2 className="text-sm font-semibold">What it teaches</h2>
              <MarkdownText className="mt-2 text-sm">{loaderData.summary}</MarkdownText>
            </Card>
          ) : null}
          <section aria-labelledby="interfaces-heading">
            <h2 id="interfaces-heading" className="mb-2 text-sm font-semibold">
              Interfaces
            </h2>
            <Table>
              <thead>
                <tr>
                  <Th>Name</Th>
                  <Th>Role</Th>
                  <Th>Addresses</Th>
                  <Th>Listening</Th>
                </tr>
              </thead>
              <tbody>
                {loaderData.interfaces.map((entry) => (
                  <tr key={entry.name}>
                    <Td className="font-mono">{entry.name}</Td>
                    <Td>{entry.role}</Td>
                    <Td className="font-mono text-xs break-all">{entry.addresses.join(", ") || "none"}</Td>
                    <Td className="font-mono text-xs">{entry.listeners.join(", ") || "nothing"}</Td>
                  </tr>
                ))}
              </tbody>
            </Table>
            <p className="mt-2 text-sm text-ink-muted">
              {[plural(counts.inboundRules, { one: "inbound rule", other: "inbound rules" }), plural(counts.accounts, { one: "account", other: "accounts" }), plural(counts.addressObjects, { one: "address object or group", other: "address objects and groups" })].join(" · ")}
            </p>
          </section>
          {loaderData.source ? (
            <p className="text-sm text-ink-muted">
              Copied from{" "}
              <Link to={loaderData.source.path} className="text-harbour underline underline-offset-4">
                {loaderData.source.name}
              </Link>{" "}
              at r{loaderData.source.revision} (shown to trainers only).
            </p>
          ) : null}
        </div>
        {loaderData.trainer ? (
          <div className="space-y-6">
            <Card className="p-5">
              <h2 className="text-sm font-semibold">Details</h2>
              <FormError message={errors.form} />
              <Form method="post" className="mt-3 space-y-4" noValidate aria-label="Scenario details">
                <input type="hidden" name="intent" value="save-details" />
                <TextField label="Title" name="title" required maxLength={100} defaultValue={values.title ?? loaderData.title} error={errors.title} />
                <TextAreaField label="What it teaches (Markdown)" name="summary" rows={5} defaultValue={values.summary ?? loaderData.summary} error={errors.summary} />
                <Button type="submit" size="sm" disabled={navigation.state === "submitting"}>
                  Save details
                </Button>
              </Form>
            </Card>
            <DeleteCard noun="scenario" title={loaderData.title} intent="delete" before="It is removed for everyone; the fleet is not touched. A scenario a lesson is built on is kept until the lesson goes." after="The scenario is removed for everyone in this organisation. The audit log keeps a record of it." />
          </div>
        ) : null}
      </div>
    </>
  );
}
