// What the trace page and its JSON route trace a probe on: the device's current revision (the
// default), or one side of a change proposal — `?proposal=<id>&side=draft` its draft (the
// revision it made, once applied), `&side=base` the revision it was drafted on — read-only, for
// those who read proposals (PROPOSAL_READ_ROLE). The proposal's effect links every example
// probe to both sides. One function, so the page and the JSON route agree on the model and the
// refusals: a malformed id or side is a 400, another device's or organisation's proposal a 404,
// a draft that no longer validates a 409.
import type { CompiledModel, DeviceModel } from "../engine/index.ts";
import { hasAtLeastRole, PROPOSAL_READ_ROLE } from "../auth/roles.ts";
import { Refusal } from "../errors.ts";
import { proposalTraceModel } from "../services/proposal-effect.server.ts";
import type { DeviceAccess } from "./device-access.server.ts";
import { proposalIdProblem } from "./proposal-steps.server.ts";

export const TRACE_SIDES = ["draft", "base"] as const;
export type TraceSide = (typeof TRACE_SIDES)[number];

/** What the page says above the probe when it traces a side of a proposal. */
export type TraceSubjectNote = {
  side: TraceSide;
  title: string;
  proposalPath: string;
  baseRevision: number;
  draftVersion: number;
  /** The revision the proposal made, once applied (its draft side is that revision). */
  appliedRevision: number | null;
  /** The device's current revision. */
  current: number;
};

export type TraceSubject = {
  compiled: CompiledModel;
  model: DeviceModel;
  /** The query naming the subject ("" for the current revision): the page keeps it on its fetches, its address and its form. */
  query: string;
  /** Where the traced model's sections are edited (null for a model nobody edits here: a base, an applied revision). */
  modelPath: string | null;
  /** Null for the current revision. */
  note: TraceSubjectNote | null;
  /** The revision traced, for the JSON route's header (null for a draft not applied). */
  revision: number | null;
};

const isSide = (value: string): value is TraceSide => (TRACE_SIDES as readonly string[]).includes(value);

export async function traceSubjectOf(access: DeviceAccess, search: URLSearchParams): Promise<TraceSubject> {
  const devicePath = `/o/${access.organisation.slug}/devices/${access.device.id}`;
  const proposal = search.get("proposal");
  const sideText = search.get("side");
  if (proposal === null) {
    if (sideText !== null) throw new Refusal("A side (base or draft) is a side of a proposal: give the proposal too.", 400);
    return { compiled: access.analysis.compiled, model: access.effective, query: "", modelPath: `${devicePath}/model`, note: null, revision: access.revision.number };
  }
  if (!hasAtLeastRole(access.role, PROPOSAL_READ_ROLE)) throw new Refusal("Your role does not read change proposals, so it cannot trace on them.", 403);
  const problem = proposalIdProblem(proposal);
  if (problem) throw new Refusal(problem.error, 400);
  const side = sideText ?? "draft";
  if (!isSide(side)) throw new Refusal(`“${side.slice(0, 20)}” is not a side of a proposal: trace on its base or its draft.`, 400);
  const traced = await proposalTraceModel({ organisationId: access.organisation.id, deviceId: access.device.id, proposalId: proposal }, side);
  const proposalPath = `${devicePath}/proposals/${proposal}`;
  const { baseRevision, draftVersion, appliedRevision } = traced.basis;
  return {
    compiled: traced.compiled,
    model: traced.compiled.model,
    query: new URLSearchParams({ proposal, side }).toString(),
    // Only a draft not yet applied is edited, in its own sections.
    modelPath: side === "draft" && appliedRevision === null ? `${proposalPath}/draft` : null,
    note: { side, title: traced.title, proposalPath, baseRevision, draftVersion, appliedRevision, current: access.revision.number },
    revision: side === "base" ? baseRevision : appliedRevision,
  };
}
