import { data } from "react-router";
import type { Route } from "./+types/proposal-step";
import { appOrigin } from "#server/config.server";
import { actorOf } from "#server/http/actor.server";
import { requireDevice } from "#server/http/device-access.server";
import { formValues, readForm, readJson } from "#server/http/form.server";
import { issuesOf, parseStep, proposalIdProblem, runProposalStep, STEP_ROLES, stepInputFromForm } from "#server/http/proposal-steps.server";
import { refusedJson } from "#server/http/refusals.server";
import { clientAddressOf } from "#server/http/request-context.server";
import { isProposalStep, PROPOSAL_STEPS } from "#server/http/schemas";

// POST …/proposals/:proposal/:step with a JSON body (or a form) → {"ok": true, "message", …facts}.
// Steps: submit, comment, approve, request-changes, reject, withdraw, bring-up-to-date, apply.
// Refusals are {"error": …} with the refusal's status (issues with paths for malformed input,
// reasons when the gate blocks, conflict when the device moved on); conflicts to settle when
// bringing a draft up to date are a 409 with {"ok": false, "conflicts": […]}.

export async function loader({ context }: Route.LoaderArgs) {
  requireDevice(context);
  throw data({ message: "Proposal steps are taken with POST; the proposal page shows the proposal." }, { status: 405, headers: { Allow: "POST" } });
}

/** The body as JSON when it says so, else as a form; a 400 with the reason when it is neither. */
async function bodyOf(request: Request, step: (typeof PROPOSAL_STEPS)[number]): Promise<unknown> {
  if ((request.headers.get("Content-Type") ?? "").includes("application/json")) return readJson(request);
  return stepInputFromForm(step, formValues(await readForm(request)));
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const step = params.step;
  if (!isProposalStep(step)) {
    requireDevice(context);
    return Response.json({ error: `There is no step “${String(step).slice(0, 40)}”; the steps are ${PROPOSAL_STEPS.join(", ")}.`, issues: [{ path: "step", message: "unknown step" }] }, { status: 404 });
  }
  const access = requireDevice(context, STEP_ROLES[step]);
  const idProblem = proposalIdProblem(params.proposal);
  if (idProblem) return Response.json(idProblem, { status: 400 });
  const proposalId = params.proposal;
  const parsed = parseStep(step, await bodyOf(request, step));
  if (!parsed.ok) return Response.json({ error: "The request is not valid.", issues: issuesOf(parsed.error) }, { status: 400 });
  try {
    const outcome = await runProposalStep(
      parsed.parsed,
      { organisationId: access.organisation.id, deviceId: access.device.id, proposalId },
      actorOf(access, clientAddressOf(context)),
      { appOrigin: appOrigin() },
    );
    // Conflicts to settle (bringing a draft up to date): nothing changed, so not a success.
    if (outcome.facts.ok === false) return Response.json({ error: outcome.message, ...outcome.facts }, { status: 409 });
    return Response.json({ ok: true, message: outcome.message, ...outcome.facts });
  } catch (error) {
    return refusedJson(error);
  }
}
