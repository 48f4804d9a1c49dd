// A proposal's steps over HTTP, shared by the proposal page (forms, without JavaScript) and the
// JSON routes (the pages' client-side fetching): which role each step needs, how its input is
// read, and the call into the proposals service. Route modules stay guard → validate → service
// → render; this module holds the parts both kinds of route would otherwise repeat.
import { data } from "react-router";
import type { z } from "zod";
import type { Role } from "../auth/roles.ts";
import { instantInZone } from "../proposals/change-window.ts";
import {
  applyProposal,
  bringProposalUpToDate,
  commentOnProposal,
  reviewProposal,
  submitProposal,
  withdrawProposal,
  type ProposalActor,
  type ProposalDetails,
  type ProposalEnvironment,
  type ProposalRef,
} from "../services/proposals.server.ts";
import { fieldErrorsOf, type FieldErrors } from "./form.server.ts";
import { IdSchema, ProposalDetailsSchema, ProposalStepSchemas, type ProposalStep } from "./schemas.ts";

/** The least role of each step; the service checks the rest (the author, an admin's override). */
export const STEP_ROLES: Record<ProposalStep, Role> = {
  submit: "engineer",
  comment: "reviewer",
  approve: "reviewer",
  "request-changes": "reviewer",
  reject: "reviewer",
  withdraw: "engineer",
  "bring-up-to-date": "engineer",
  apply: "engineer",
};

/** What is wrong with a proposal id from the URL (a UUID), for a 400; null when it is one. */
export function proposalIdProblem(value: string | undefined): { error: string; issues: Array<{ path: string; message: string }> } | null {
  if (IdSchema.safeParse(value ?? "").success) return null;
  return { error: `“${String(value).slice(0, 40)}” is not a proposal id.`, issues: [{ path: "proposal", message: "must be a UUID" }] };
}

/** The proposal id in a page's URL, or a 400 shown in the page's frame. */
export function proposalIdOf(value: string | undefined): string {
  const problem = proposalIdProblem(value);
  if (problem) throw data({ message: problem.error }, { status: 400 });
  return value ?? "";
}

/** Zod's problems with their paths, for a JSON answer. */
export function issuesOf(error: z.ZodError): Array<{ path: string; message: string }> {
  return error.issues.map((issue) => ({ path: issue.path.map(String).join("."), message: issue.message }));
}

/** A form's values as a step's input: "choice:<element>" fields become the conflict choices. */
export function stepInputFromForm(step: ProposalStep, values: Record<string, string>): Record<string, unknown> {
  if (step !== "bring-up-to-date") return values;
  const choices = Object.fromEntries(Object.entries(values).filter(([key]) => key.startsWith("choice:")).map(([key, value]) => [key.slice("choice:".length), value]));
  return { ...values, choices };
}

export type ParsedStep = { [S in ProposalStep]: { step: S; input: z.infer<(typeof ProposalStepSchemas)[S]> } }[ProposalStep];

/** The step's input checked against its schema. */
export function parseStep(step: ProposalStep, input: unknown): { ok: true; parsed: ParsedStep } | { ok: false; error: z.ZodError } {
  const result = ProposalStepSchemas[step].safeParse(input);
  // The schema is the step's own, so the pairing holds.
  return result.success ? { ok: true, parsed: { step, input: result.data } as ParsedStep } : { ok: false, error: result.error };
}

/** What a step did: a sentence for the toast and the facts for a JSON answer. */
export type StepOutcome = { message: string; facts: Record<string, unknown> };

export async function runProposalStep(parsed: ParsedStep, ref: ProposalRef, actor: ProposalActor, environment: ProposalEnvironment): Promise<StepOutcome> {
  switch (parsed.step) {
    case "submit": {
      const result = await submitProposal(ref, { acknowledgement: parsed.input.acknowledgement }, actor, environment);
      return { message: "Submitted for review; the reviewers were e-mailed.", facts: { state: result.state, reasons: result.reasons } };
    }
    case "comment": {
      const comment = await commentOnProposal(ref, { body: parsed.input.body, ruleId: parsed.input.ruleId }, actor, environment);
      return { message: comment.ruleId ? `Comment on rule ${comment.ruleId} added.` : "Comment added.", facts: { comment: { id: comment.id, ruleId: comment.ruleId } } };
    }
    case "approve": {
      const result = await reviewProposal(ref, { verdict: "approved", reason: parsed.input.reason, guardOverride: parsed.input.guardOverride }, actor, environment);
      return { message: result.state === "approved" ? "Approved: it can be applied in its change window." : `Approved (${result.approvals} of ${result.required}).`, facts: result };
    }
    case "request-changes": {
      const result = await reviewProposal(ref, { verdict: "changes_requested", reason: parsed.input.reason }, actor, environment);
      return { message: "Changes requested; the author was e-mailed.", facts: result };
    }
    case "reject": {
      const result = await reviewProposal(ref, { verdict: "rejected", reason: parsed.input.reason }, actor, environment);
      return { message: "Rejected; the author was e-mailed.", facts: result };
    }
    case "withdraw":
      await withdrawProposal(ref, actor, environment);
      return { message: "Proposal withdrawn.", facts: { state: "withdrawn" } };
    case "bring-up-to-date": {
      const result = await bringProposalUpToDate(ref, parsed.input.draftVersion, parsed.input.choices, actor);
      if (!result.ok) return { message: `Not brought up to date: settle ${result.conflicts.length === 1 ? "the conflict" : `the ${result.conflicts.length} conflicts`} first.`, facts: result };
      return { message: `Brought up to date with r${result.baseRevision}; the approvals start again.`, facts: result };
    }
    case "apply": {
      const result = await applyProposal(ref, { outsideWindowReason: parsed.input.outsideWindowReason }, actor, environment);
      return { message: result.alreadyApplied ? `Already applied as revision r${result.revision}.` : `Applied as revision r${result.revision}.`, facts: result };
    }
  }
}

/** The proposal's details from a form: the window's wall-clock times read in the device's zone. */
export function readProposalDetails(values: Record<string, string>, timezone: string): { ok: true; details: ProposalDetails } | { ok: false; errors: FieldErrors } {
  const parsed = ProposalDetailsSchema.safeParse(values);
  if (!parsed.success) return { ok: false, errors: fieldErrorsOf(parsed.error) };
  const start = instantInZone(parsed.data.windowStart, timezone);
  const end = instantInZone(parsed.data.windowEnd, timezone);
  const errors: FieldErrors = {};
  if (!start.ok) errors.windowStart = start.problem;
  if (!end.ok) errors.windowEnd = end.problem;
  if (!start.ok || !end.ok) return { ok: false, errors };
  const { title, reason, ticket, workFrom } = parsed.data;
  return { ok: true, details: { title, reason, ticket, workFrom, window: { start: start.at, end: end.at } } };
}
