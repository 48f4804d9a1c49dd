// Proposals through the API: make one from a whole document on the device's current revision,
// read its effect as a reviewer would, and submit it for review. The proposals service does
// the work and writes the audit entries (with the token's name); the steps' roles are the
// proposal page's (STEP_ROLES).
import { STEP_ROLES } from "../../http/proposal-steps.server.ts";
import { ProposalDocumentSchema } from "../../http/schemas.ts";
import { proposalEffect } from "../../services/proposal-effect.server.ts";
import { createProposal, submitProposal } from "../../services/proposals.server.ts";
import { PAGE_ROLES } from "../../auth/roles.ts";
import { MAX_DOCUMENT_REQUEST_BYTES } from "../../validation/limits.ts";
import { defineEndpoint } from "../endpoint.server.ts";
import { DeviceParams, DocumentField, EffectSchema, ProposalCreatedSchema, ProposalParams, SubmitBody, SubmittedSchema } from "./schemas.ts";

/** The proposal's page in the app, as a path (never built from the request's host). */
const proposalPath = (slug: string, deviceId: string, proposalId: string) => `/o/${slug}/devices/${deviceId}/proposals/${proposalId}`;

export const NewProposalBody = ProposalDocumentSchema.extend({ document: DocumentField }).meta({ id: "NewProposal" });

export const createProposalEndpoint = defineEndpoint({
  method: "post",
  path: "/devices/{device}/proposals",
  operationId: "createProposal",
  summary: "Propose a change from a model document",
  description:
    "A proposal on the device's current revision whose draft is the whole document (validated like an import: problems come back with their document paths). The change window is two ISO 8601 instants with an offset; `workFrom` is the address the author works from, which the lockout guard protects. Nothing changes on the device until the proposal is approved and applied.",
  tag: "Proposals",
  scope: "write",
  role: PAGE_ROLES.proposeChange,
  params: DeviceParams,
  device: true,
  body: NewProposalBody,
  bodyLimit: MAX_DOCUMENT_REQUEST_BYTES,
  refusals: [409, 413, 415],
  response: { status: 201, description: "The new proposal, a draft; Location names its effect.", schema: ProposalCreatedSchema },
  async handle({ principal, actor, device, body }) {
    const { document, windowStart, windowEnd, ...details } = body;
    const proposal = await createProposal(
      { organisationId: principal.organisation.id, deviceId: device.device.id },
      { ...details, window: { start: new Date(windowStart), end: new Date(windowEnd) } },
      { kind: "document", document },
      actor,
    );
    return {
      status: 201,
      body: { id: proposal.id, state: proposal.state, baseRevision: proposal.baseRevisionNumber, url: proposalPath(principal.organisation.slug, device.device.id, proposal.id) },
      headers: { Location: `/api/v1/devices/${device.device.id}/proposals/${proposal.id}/effect` },
    };
  },
});

export const proposalEffectEndpoint = defineEndpoint({
  method: "get",
  path: "/devices/{device}/proposals/{proposal}/effect",
  operationId: "proposalEffect",
  summary: "A proposal's effect",
  description:
    "What the proposal's draft changes against its base revision (an applied proposal: against the revision it made): the headline, who gains and who loses (each group with a probe `trace` replays), what blocks it, and the findings it adds and resolves. `ok` is false, with `problems`, when the draft no longer validates.",
  tag: "Proposals",
  scope: "read",
  role: "trainee",
  params: ProposalParams,
  device: true,
  response: { status: 200, description: "The effect.", schema: EffectSchema },
  async handle({ principal, device, params }) {
    const answer = await proposalEffect({ organisationId: principal.organisation.id, deviceId: device.device.id, proposalId: params.proposal });
    const proposal = { id: params.proposal, baseRevision: answer.basis.baseRevision, draftVersion: answer.basis.draftVersion, appliedRevision: answer.basis.appliedRevision };
    if (!answer.ok) return { body: { proposal, timezone: answer.basis.timezone, ok: false, problems: answer.problems, effect: null } };
    const view = answer.view;
    const line = (finding: (typeof view.findings.new)[number]) => ({ key: finding.key, code: finding.code, severity: finding.severity, title: finding.title, elements: [...finding.elements] });
    return {
      body: {
        proposal,
        timezone: answer.basis.timezone,
        ok: true,
        problems: [],
        effect: {
          headline: view.headline,
          changed: view.changed,
          blocked: view.blocked,
          totals: view.totals,
          blocking: view.blocking.map((entry) => ({ kind: entry.kind, subject: entry.subject, words: entry.words })),
          groups: view.groups.map((group) => ({
            key: group.key,
            before: group.before,
            after: group.after,
            direction: group.direction,
            count: group.count,
            words: group.words,
            witness: { from: group.witness.from, interface: group.witness.interface, service: group.witness.service, to: group.witness.to, at: group.witness.at, when: group.witness.when },
          })),
          findings: { new: view.findings.new.map(line), resolved: view.findings.resolved.map(line), unchanged: view.findings.unchanged },
        },
      },
    };
  },
});

export const submitProposalEndpoint = defineEndpoint({
  method: "post",
  path: "/devices/{device}/proposals/{proposal}/submit",
  operationId: "submitProposal",
  summary: "Submit a proposal for review",
  description:
    "Sends the draft to review and e-mails the reviewers. Only its author can (the token's owner, or the service token that made it). While the lockout guard or an expectation blocks the change it is refused (409, with `reasons`) unless `acknowledgement` says in writing why the change is meant; then only an admin or owner can approve it.",
  tag: "Proposals",
  scope: "write",
  role: STEP_ROLES.submit,
  params: ProposalParams,
  device: true,
  body: SubmitBody,
  refusals: [409, 413, 415],
  response: { status: 200, description: "The proposal's new state, and what the gate said.", schema: SubmittedSchema },
  async handle({ principal, actor, device, params, body }) {
    const result = await submitProposal({ organisationId: principal.organisation.id, deviceId: device.device.id, proposalId: params.proposal }, { acknowledgement: body.acknowledgement }, actor);
    return { body: { id: params.proposal, state: result.state, reasons: result.reasons.map((reason) => ({ kind: reason.kind, words: reason.words, details: [...reason.details] })) } };
  },
});
