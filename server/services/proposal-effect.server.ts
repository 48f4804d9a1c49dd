// The effect of a proposal, as its page, its JSON route and its change record show it: the
// base revision compiled against the draft compiled on it (an applied proposal: against the
// revision it made), with both revisions' findings, the device's expectations and the author's
// "where I work from" address (server/engine/effect.ts, docs/decisions/011). One small cache,
// keyed by the base revision, what the draft is (its version and the shared objects it was
// read with, or the applied revision) and the expectations, serves the page and the JSON route
// alike, so a draft edit costs one computation however many readers refresh.
import { LRUCache } from "lru-cache";
import { createHash } from "node:crypto";
import { ChangeProposal } from "#models/index.ts";
import { deviceRevisions, type DeviceAtRevision } from "../devices/index.ts";
import { changeEffect, type ChangeEffect, type CompiledModel, type Expectation, type Finding } from "../engine/index.ts";
import { effectPicture, effectView, type EffectPicture, type EffectView } from "../analysis/effect-view.ts";
import { Refusal } from "../errors.ts";
import { EMPTY_LIBRARY, validateDocument } from "../workspace/index.ts";
import { compiledOn } from "./compiled-drafts.server.ts";
import { loadSharedLibrary } from "./devices.server.ts";
import { listExpectations } from "./expectations.server.ts";

export type ProposalEffectRef = { organisationId: string; deviceId: string; proposalId: string };

/** What the effect compares: the base revision and the draft (its version), or the revision applying it made. */
export type EffectBasis = { baseRevision: number; draftVersion: number; appliedRevision: number | null; timezone: string };

export type ProposalEffect = ({ ok: true; view: EffectView } | { ok: false; problems: string[] }) & { basis: EffectBasis };

type Computed = { effect: ChangeEffect; picture: EffectPicture; timezone: string };

/** A few effects: each holds its diff's CIDR lists (for paging sources); the compiled models live in compiled-drafts. */
const effects = new LRUCache<string, Computed>({ max: 24 });

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

const digest = (value: unknown): string => createHash("sha256").update(JSON.stringify(value)).digest("hex");

async function revisionOf(ref: ProposalEffectRef, number: number): Promise<DeviceAtRevision> {
  const found = await deviceRevisions.find(ref.organisationId, ref.deviceId, { revisionNumber: number });
  if (!found) throw new Refusal(`This device has no revision ${number}.`, 404);
  return found;
}

/** The effect of base → after, computed once per key. */
function computed(key: string, base: DeviceAtRevision, after: { compiled: CompiledModel; findings: () => readonly Finding[] }, timezone: string, options: { workFrom: string; expectations: readonly Expectation[] }): Computed {
  const known = effects.get(key);
  if (known) return known;
  const effect = changeEffect(base.analysis.compiled, after.compiled, {
    ...(options.workFrom ? { workFrom: [options.workFrom] } : {}),
    expectations: options.expectations,
    findings: { before: deviceRevisions.findingsOf(base), after: after.findings() },
  });
  const entry = { effect, picture: effectPicture(base.analysis.compiled, after.compiled, effect.cells, timezone), timezone };
  effects.set(key, entry);
  return entry;
}

/**
 * The effect of a proposal of this organisation's device (404 otherwise). `page` asks for
 * another page of one group's sources (`group` is the group's key, "login-mfa>silent").
 */
export async function proposalEffect(ref: ProposalEffectRef, page: { group?: string; offset?: number; limit?: number } = {}): Promise<ProposalEffect> {
  if (!UUID.test(ref.proposalId) || !UUID.test(ref.deviceId)) throw new Refusal("No such proposal on this device.", 404);
  const proposal = await ChangeProposal.findOne({ where: { id: ref.proposalId, organisationId: ref.organisationId, deviceId: ref.deviceId } });
  if (!proposal) throw new Refusal("No such proposal on this device.", 404);
  const applied = proposal.state === "applied" ? proposal.appliedRevisionNumber : null;
  const [base, expectations, library, made] = await Promise.all([
    revisionOf(ref, proposal.baseRevisionNumber),
    listExpectations(ref.organisationId, ref.deviceId).then((stored) => stored.map((entry) => entry.expectation)),
    applied === null ? loadSharedLibrary(ref.organisationId) : null,
    applied === null ? null : revisionOf(ref, applied),
  ]);
  const options = { workFrom: proposal.workFrom, expectations };
  const common = `${proposal.id}|${base.revision.id}|${digest(expectations)}|${proposal.workFrom}`;
  if (made) {
    const timezone = made.effective.device.timezone;
    const basis: EffectBasis = { baseRevision: base.revision.number, draftVersion: proposal.draftVersion, appliedRevision: made.revision.number, timezone };
    const result = computed(`${common}|r${made.revision.id}`, base, { compiled: made.analysis.compiled, findings: () => deviceRevisions.findingsOf(made) }, timezone, options);
    return { ok: true, basis, view: effectView(result.effect, result.picture, timezone, page) };
  }
  // The draft as the engine reads it with the shared objects as they are now (the version alone does not say that).
  const key = `${common}|v${proposal.draftVersion}|${digest(library)}`;
  const known = effects.get(key);
  if (known) return { ok: true, basis: { baseRevision: base.revision.number, draftVersion: proposal.draftVersion, appliedRevision: null, timezone: known.timezone }, view: effectView(known.effect, known.picture, known.timezone, page) };
  const validated = validateDocument(proposal.draftDocument, library ?? EMPTY_LIBRARY);
  const basis: EffectBasis = { baseRevision: base.revision.number, draftVersion: proposal.draftVersion, appliedRevision: null, timezone: base.effective.device.timezone };
  if (!validated.ok) return { ok: false, basis, problems: validated.errors.map((issue) => `${issue.path || "document"}: ${issue.message}`) };
  const timezone = validated.effective.device.timezone;
  const result = computed(key, base, compiledOn(base, validated.effective), timezone, options);
  return { ok: true, basis: { ...basis, timezone }, view: effectView(result.effect, result.picture, timezone, page) };
}
