// The effect of a proposal, as its page, its JSON route and its change record show it: the
// base revision compiled against the draft compiled on it (an applied proposal: against the
// revision it made), with both revisions' findings, the device's expectations and the author's
// "where I work from" address (server/engine/effect.ts, docs/decisions/011). One small cache,
// keyed by the base revision, what the draft is (its version and the shared objects it was
// read with, or the applied revision) and the expectations, serves the page and the JSON route
// alike, so a draft edit costs one computation however many readers refresh.
//
// The draft editor refreshes only the summary — headline, totals, what blocks — after each
// edit. Those do not depend on the findings (effect.ts builds them from the diff, the lockout
// guard, the work-from losses and the expectations), so the summary is computed without the
// draft's findings, the costliest part on a large device; tests/unit/effect-view.test.ts checks
// it equals the full effect's.
import { LRUCache } from "lru-cache";
import { createHash } from "node:crypto";
import { ChangeProposal } from "#models/index.ts";
import { deviceRevisions, type DeviceAtRevision } from "../devices/index.ts";
import { changeEffect, type ChangeEffect, type CompiledModel, type Expectation, type Finding } from "../engine/index.ts";
import { effectPicture, effectView, type EffectPicture, type EffectView } from "../analysis/effect-view.ts";
import { spaceQueryOf } from "../analysis/effect-space-params.ts";
import { choiceOf, effectSpaces, effectSpaceView, type EffectSpace, type EffectSpaceChoice, type EffectSpaceView } from "../analysis/effect-space.ts";
import { Refusal } from "../errors.ts";
import { EMPTY_LIBRARY, validateDocument, type ModelDocument } from "../workspace/index.ts";
import { compiledOn, documentDigest, validatedDraft } from "./compiled-drafts.server.ts";
import { loadSharedLibrary } from "./devices.server.ts";
import { listExpectations } from "./expectations.server.ts";
import { isUuid } from "../validation/ids.ts";

export type ProposalEffectRef = { organisationId: string; deviceId: string; proposalId: string };

/** What the effect compares: the base revision and the draft (its version), or the revision applying it made. */
export type EffectBasis = { baseRevision: number; draftVersion: number; appliedRevision: number | null; timezone: string };

/**
 * The effect as the page shows it: the view, the interface × service × family address spaces
 * where some source moves (`spaces`), and the one asked for at the block asked for (`space`).
 */
export type ProposalEffect = ({ ok: true; view: EffectView; spaces: EffectSpaceChoice[]; space: EffectSpaceView | null } | { ok: false; problems: string[] }) & { basis: EffectBasis };

/** Which address space of the effect to draw, and where in it (the page's query, effect-space-params.ts). */
export type EffectSpaceQuery = ReturnType<typeof spaceQueryOf>;

/** The part of the effect the draft editor refreshes after each edit. */
export const EFFECT_SUMMARY_KEYS = ["headline", "changed", "blocked", "totals", "blocking"] as const;
export type EffectSummary = Pick<ChangeEffect, (typeof EFFECT_SUMMARY_KEYS)[number]>;
export type ProposalEffectSummary = ({ ok: true; summary: EffectSummary } | { ok: false; problems: string[] }) & { basis: EffectBasis };

type Computed = { effect: ChangeEffect; picture: EffectPicture; spaces: EffectSpace[]; timezone: string };

/** A few effects: each holds its diff's CIDR lists (for paging sources); the compiled models live in compiled-drafts. */
const effects = new LRUCache<string, Computed>({ max: 24 });
const summaries = new LRUCache<string, { summary: EffectSummary; timezone: string }>({ max: 48 });


const digest = (value: unknown): string => createHash("sha256").update(JSON.stringify(value)).digest("hex");

const summaryOf = (effect: ChangeEffect): EffectSummary => ({ headline: effect.headline, changed: effect.changed, blocked: effect.blocked, totals: effect.totals, blocking: effect.blocking });

async function revisionOf(ref: ProposalEffectRef, number: number): Promise<DeviceAtRevision> {
  const found = await deviceRevisions.find(ref.organisationId, ref.deviceId, { revisionNumber: number });
  if (!found) throw new Refusal(`This device has no revision ${number}.`, 404);
  return found;
}

/** The model after the change: compiled on the base, its findings when asked for. */
type After = { compiled: CompiledModel; findings: () => readonly Finding[]; timezone: string };

/** Everything the effect depends on, read once; the draft document itself only when no cache has it. */
type Basis = {
  basis: EffectBasis;
  title: string;
  base: DeviceAtRevision;
  options: { workFrom: string; expectations: readonly Expectation[] };
  /** Names exactly this comparison: base revision, the draft (version and shared objects) or the applied revision, the expectations, the work-from address. */
  key: string;
  /** The model after the change, or the draft's problems when it no longer validates. */
  after(): Promise<After | { problems: string[] }>;
};

async function basisOf(ref: ProposalEffectRef): Promise<Basis> {
  if (!isUuid(ref.proposalId) || !isUuid(ref.deviceId)) throw new Refusal("No such proposal on this device.", 404);
  // The draft document can be large (a 2,000-rule device): read it only when needed.
  const proposal = await ChangeProposal.findOne({ where: { id: ref.proposalId, organisationId: ref.organisationId, deviceId: ref.deviceId }, attributes: { exclude: ["draftDocument"] } });
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
  const basis: EffectBasis = { baseRevision: base.revision.number, draftVersion: proposal.draftVersion, appliedRevision: made?.revision.number ?? null, timezone: (made ?? base).effective.device.timezone };
  if (made) {
    return { basis, title: proposal.title, base, options, key: `${common}|r${made.revision.id}`, after: async () => ({ compiled: made.analysis.compiled, findings: () => deviceRevisions.findingsOf(made), timezone: made.effective.device.timezone }) };
  }
  // The draft as the engine reads it with the shared objects as they are now (the version alone does not say that).
  const libraryDigest = documentDigest(library ?? EMPTY_LIBRARY);
  return {
    basis,
    title: proposal.title,
    base,
    options,
    key: `${common}|v${proposal.draftVersion}|${libraryDigest}`,
    after: async () => {
      let effective: ModelDocument | undefined = validatedDraft(proposal.id, proposal.draftVersion, libraryDigest);
      if (!effective) {
        const row = await ChangeProposal.findByPk(proposal.id, { attributes: ["id", "draftDocument", "draftVersion"] });
        // Edited since the first read: the caller's key names the version it read, so say nothing about another.
        if (!row || row.draftVersion !== proposal.draftVersion) throw new Refusal("The draft changed while its effect was being worked out; ask again.", 409);
        const validated = validateDocument(row.draftDocument, library ?? EMPTY_LIBRARY);
        if (!validated.ok) return { problems: validated.errors.map((issue) => `${issue.path || "document"}: ${issue.message}`) };
        effective = validated.effective;
      }
      const draft = compiledOn(base, effective);
      return { compiled: draft.compiled, findings: draft.findings, timezone: effective.device.timezone };
    },
  };
}

function effectOptions(found: Basis, afterFindings: readonly Finding[]) {
  return {
    ...(found.options.workFrom ? { workFrom: [found.options.workFrom] } : {}),
    expectations: found.options.expectations,
    findings: { before: deviceRevisions.findingsOf(found.base), after: afterFindings },
  };
}

/**
 * The effect of a proposal of this organisation's device (404 otherwise). `page` asks for
 * another page of one group's sources (`group` is the group's key, "login-mfa>silent"); `space`
 * for an address space of the picture and a block in it.
 */
export async function proposalEffect(ref: ProposalEffectRef, page: { group?: string; offset?: number; limit?: number } = {}, space: EffectSpaceQuery = {}): Promise<ProposalEffect> {
  const found = await basisOf(ref);
  let result = effects.get(found.key);
  if (!result) {
    const after = await found.after();
    if ("problems" in after) return { ok: false, basis: found.basis, problems: after.problems };
    // Checked again after the await: a request for the same effect may have computed it meanwhile.
    result = effects.get(found.key);
    if (!result) {
      const effect = changeEffect(found.base.analysis.compiled, after.compiled, effectOptions(found, after.findings()));
      result = { effect, picture: effectPicture(found.base.analysis.compiled, after.compiled, effect.cells, after.timezone), spaces: effectSpaces(after.compiled, effect.cells), timezone: after.timezone };
      effects.set(found.key, result);
      summaries.set(found.key, { summary: summaryOf(effect), timezone: after.timezone });
    }
  }
  return {
    ok: true,
    basis: { ...found.basis, timezone: result.timezone },
    view: effectView(result.effect, result.picture, result.timezone, page),
    spaces: result.spaces.map(choiceOf),
    space: effectSpaceView(result.spaces, space),
  };
}

/** The headline, totals and what blocks, for the draft editor: the same as the full effect's, without the draft's findings. */
export async function proposalEffectSummary(ref: ProposalEffectRef): Promise<ProposalEffectSummary> {
  const found = await basisOf(ref);
  const known = summaries.get(found.key);
  if (known) return { ok: true, basis: { ...found.basis, timezone: known.timezone }, summary: known.summary };
  const after = await found.after();
  if ("problems" in after) return { ok: false, basis: found.basis, problems: after.problems };
  // Findings only shape the rule and finding parts of an effect, none of the summary's.
  const effect = changeEffect(found.base.analysis.compiled, after.compiled, effectOptions(found, deviceRevisions.findingsOf(found.base)));
  const summary = summaryOf(effect);
  summaries.set(found.key, { summary, timezone: after.timezone });
  return { ok: true, basis: { ...found.basis, timezone: after.timezone }, summary };
}

/** What a probe is traced on for a proposal: one side of its change, compiled, with what the page says about it. */
export type ProposalTraceModel = { compiled: CompiledModel; title: string; basis: EffectBasis };

/**
 * One side of a proposal's change, read-only, for tracing a probe on it (the trace page's "trace
 * on base" and "trace on draft"): its base revision, or its draft compiled on the base (an
 * applied proposal: the revision it made) — the same models the effect compares. 404 for another
 * device's or organisation's proposal; 409 when the draft no longer validates (a shared object it
 * uses changed).
 */
export async function proposalTraceModel(ref: ProposalEffectRef, side: "base" | "draft"): Promise<ProposalTraceModel> {
  const found = await basisOf(ref);
  if (side === "base") return { compiled: found.base.analysis.compiled, title: found.title, basis: { ...found.basis, timezone: found.base.effective.device.timezone } };
  const after = await found.after();
  if ("problems" in after) throw new Refusal(`The draft of “${found.title}” is no longer a valid model, so nothing can be traced on it: ${after.problems.slice(0, 3).join(" · ")}. Edit the draft.`, 409);
  return { compiled: after.compiled, title: found.title, basis: { ...found.basis, timezone: after.timezone } };
}
