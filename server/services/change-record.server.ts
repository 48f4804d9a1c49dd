// The change record of a proposal: what was changed, why, when, by whom, judged by what effect,
// approved by whom and when, what was said about it, how the device's expectations fared, and
// the revision it made. One shape for the printable page and the JSON download, with stable
// keys (`format` and `version` name it, like the expectations file): a team files it with its
// change ticket. Built from the proposal's own view and its effect, nothing recomputed here.
import type { ProposalState } from "#models/proposal-states.ts";
import type { Role } from "../auth/roles.ts";
import type { ExpectationStatus } from "../engine/index.ts";
import { proposalEffect } from "./proposal-effect.server.ts";
import { proposalView, type ProposalRef } from "./proposals.server.ts";

export const CHANGE_RECORD_FORMAT = "sallyport-change-record";
// 2: `applied.by` names the person ({ name, email }) as reviews and comments do; it was the e-mail alone.
export const CHANGE_RECORD_VERSION = 2;

type Person = { name: string | null; email: string };
type ExpectationSide = { status: ExpectationStatus; words: string };

export type ChangeRecord = {
  format: typeof CHANGE_RECORD_FORMAT;
  version: typeof CHANGE_RECORD_VERSION;
  proposal: {
    id: string;
    title: string;
    reason: string;
    ticket: string;
    state: ProposalState;
    stateLabel: string;
    author: Person;
    workFrom: string;
    createdAt: string;
    submittedAt: string | null;
    draftVersion: number;
    baseRevision: number;
    /** The author's written acknowledgement of what blocked the change, when it was submitted past it. */
    blockAcknowledged: string;
  };
  device: { id: string; name: string; timezone: string };
  /** Instants in ISO 8601 UTC; `timezone` is the device's, in which the window was typed. */
  window: { start: string; end: string; timezone: string };
  applied: { revision: number; at: string | null; by: Person | null; outsideWindowReason: string } | null;
  effect:
    | {
        /** "draft": a proposal not applied, its draft on its base revision; "applied": the revision it made on its base. */
        comparedWith: "draft" | "applied";
        fromRevision: number;
        headline: string;
        changed: boolean;
        totals: { gains: string; loses: string };
        groups: Array<{ before: string; after: string; direction: string; count: string; words: string }>;
        rules: {
          added: Array<{ id: string; position: number }>;
          removed: Array<{ id: string; position: number }>;
          moved: Array<{ id: string; from: number; to: number }>;
          changed: Array<{ id: string; fields: string[] }>;
          becomeShadowed: string[];
          stopShadowed: string[];
          becomeRedundant: string[];
          stopRedundant: string[];
        };
        findings: { new: Array<{ code: string; severity: string; title: string }>; resolved: Array<{ code: string; severity: string; title: string }>; unchanged: number };
        lockout: string[];
        workFrom: string[];
        blocking: Array<{ kind: string; subject: string; words: string }>;
      }
    | { problems: string[] };
  expectations: Array<{ id: string; kind: string; expectation: string; before: ExpectationSide; after: ExpectationSide; broken: boolean; fixed: boolean }>;
  reviews: Array<{ verdict: string; by: Person; role: Role; at: string; draftVersion: number; countsNow: boolean; reason: string; approvedPastBlock: string }>;
  comments: Array<{ by: Person; at: string; ruleId: string | null; body: string; draftVersion: number }>;
};

/** The change record of a proposal of this organisation's device (404 otherwise), read by `viewer`. */
export async function changeRecord(ref: ProposalRef, device: { name: string }, viewer: { userId: string; role: Role }): Promise<ChangeRecord> {
  const [view, effect] = await Promise.all([proposalView(ref, viewer), proposalEffect(ref)]);
  const { proposal } = view;
  const applied = proposal.state === "applied" && proposal.appliedRevision !== null;
  return {
    format: CHANGE_RECORD_FORMAT,
    version: CHANGE_RECORD_VERSION,
    proposal: {
      id: proposal.id,
      title: proposal.title,
      reason: proposal.reason,
      ticket: proposal.ticket,
      state: proposal.state,
      stateLabel: proposal.stateLabel,
      author: { name: proposal.authorName, email: proposal.authorEmail },
      workFrom: proposal.workFrom,
      createdAt: proposal.createdAt,
      submittedAt: proposal.submittedAt,
      draftVersion: proposal.draftVersion,
      baseRevision: proposal.baseRevision,
      blockAcknowledged: proposal.guardAcknowledgement,
    },
    device: { id: ref.deviceId, name: device.name, timezone: view.timezone },
    window: { start: proposal.windowStart, end: proposal.windowEnd, timezone: view.timezone },
    applied: applied && proposal.appliedRevision !== null ? { revision: proposal.appliedRevision, at: proposal.appliedAt, by: proposal.appliedByEmail ? { name: proposal.appliedByName, email: proposal.appliedByEmail } : null, outsideWindowReason: proposal.outsideWindowReason } : null,
    effect: effect.ok
      ? {
          comparedWith: effect.basis.appliedRevision === null ? "draft" : "applied",
          fromRevision: effect.basis.baseRevision,
          headline: effect.view.headline,
          changed: effect.view.changed,
          totals: effect.view.totals,
          groups: effect.view.groups.map((group) => ({ before: group.before, after: group.after, direction: group.direction, count: group.count, words: group.words })),
          rules: {
            added: effect.view.rules.added.map(({ id, position }) => ({ id, position })),
            removed: effect.view.rules.removed.map(({ id, position }) => ({ id, position })),
            moved: effect.view.rules.moved.map(({ id, from, to }) => ({ id, from, to })),
            changed: effect.view.rules.changed.map(({ id, fields }) => ({ id, fields: [...fields] })),
            becomeShadowed: [...effect.view.rules.shadowed.becomes],
            stopShadowed: [...effect.view.rules.shadowed.stops],
            becomeRedundant: [...effect.view.rules.redundant.becomes],
            stopRedundant: [...effect.view.rules.redundant.stops],
          },
          findings: {
            new: effect.view.findings.new.map(({ code, severity, title }) => ({ code, severity, title })),
            resolved: effect.view.findings.resolved.map(({ code, severity, title }) => ({ code, severity, title })),
            unchanged: effect.view.findings.unchanged,
          },
          lockout: effect.view.lockout.map((entry) => entry.words),
          workFrom: effect.view.workFrom.map((entry) => entry.words),
          blocking: effect.view.blocking.map(({ kind, subject, words }) => ({ kind, subject, words })),
        }
      : { problems: effect.problems },
    expectations: effect.ok
      ? effect.view.expectations.map((entry) => ({
          id: entry.id,
          kind: entry.kind,
          expectation: entry.expectation,
          before: { status: entry.before.status, words: entry.before.words },
          after: { status: entry.after.status, words: entry.after.words },
          broken: entry.broken,
          fixed: entry.fixed,
        }))
      : [],
    reviews: view.reviews.map((review) => ({
      verdict: review.verdict,
      by: { name: review.byName, email: review.by },
      role: review.role,
      at: review.at,
      draftVersion: review.draftVersion,
      countsNow: review.counts,
      reason: review.reason,
      approvedPastBlock: review.guardOverride,
    })),
    comments: view.comments.map((comment) => ({ by: { name: comment.byName, email: comment.by }, at: comment.at, ruleId: comment.ruleId, body: comment.body, draftVersion: comment.draftVersion })),
  };
}
