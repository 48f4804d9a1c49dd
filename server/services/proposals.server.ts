// Change proposals (docs/decisions/010): a change to one device drafted on a base revision,
// reviewed by someone other than its author, and applied as one revision inside its change
// window. Every step locks the proposal's row, checks the step against the state machine
// (server/proposals/state.ts) and writes the audit log in the same transaction; e-mails go out
// after the commit. The clock and the mail sender can be handed in (tests enforce the window).
import { LRUCache } from "lru-cache";
import { createHash } from "node:crypto";
import { Op, UniqueConstraintError, type Transaction, type WhereOptions } from "sequelize";
import { ChangeProposal, Device, Membership, Organisation, ProposalComment, ProposalEdit, ProposalReview, User } from "#models/index.ts";
import type { ProposalState, ReviewVerdict } from "#models/proposal-states.ts";
import { hasAtLeastRole, type Role } from "../auth/roles.ts";
import { getDatabase } from "../db/database.server.ts";
import { deviceRevisions, type DeviceAtRevision } from "../devices/index.ts";
import { changeEffect, type CompiledModel, type Expectation } from "../engine/index.ts";
import { formatCount, formatInstant, pluralWord } from "../engine/format.ts";
import { Refusal, type RefusalEffect } from "../errors.ts";
import { sendMail, type OutgoingMail } from "../mail/mailer.server.ts";
import { proposalMail } from "../mail/messages.server.ts";
import { bringUpToDate, type Conflict, type ConflictChoice } from "../proposals/bring-up-to-date.ts";
import { windowCalendar } from "../proposals/calendar.server.ts";
import { isInsideWindow, windowProblem, windowWords, type ChangeWindow } from "../proposals/change-window.ts";
import { gateBlocks, gateReasons, gateSubject, type GateReason } from "../proposals/gate.server.ts";
import { isOpenState, nextState, notOpenWords, OPEN_PROPOSAL_STATES, PROPOSAL_STATE_LABELS, WRITTEN_REASON_MIN, type ProposalAction } from "../proposals/state.ts";
import {
  canonicalJson,
  describeElementEdit,
  diffDocuments,
  editsBetween,
  parseElementEdits,
  validateDocument,
  type DocumentChange,
  type ElementEdit,
  type ElementKey,
  type ModelDocument,
  type SharedLibrary,
} from "../workspace/index.ts";
import { recordAuditEvent, type AuditActor } from "./audit.server.ts";
import { compiledOn, documentDigest, rememberValidatedDraft } from "./compiled-drafts.server.ts";
import { listExpectations } from "./expectations.server.ts";
import { invalidModel, loadSharedLibrary, saveEdit, writeRevision, type SaveGuard, type SaveGuardNote } from "./devices.server.ts";
import { revisionAnalysisQueue } from "../jobs/revision-analysis.server.ts";
import { lockSharedLibrary } from "./shared-library-lock.server.ts";
import { proposalEffectSummary } from "./proposal-effect.server.ts";
import { isUuid } from "../validation/ids.ts";

/** Who acts: the audit actor with their role in the organisation and their name. */
export type ProposalActor = AuditActor & { role: Role; name: string };

/** The world a step runs in: the clock, the mail sender and the address links in e-mails start with. */
export type ProposalEnvironment = { now?: Date; send?: (mail: OutgoingMail) => Promise<void>; appOrigin?: string };

/** A proposal of an organisation's device, as the URL names it. */
export type ProposalRef = { organisationId: string; deviceId: string; proposalId: string };

export { WRITTEN_REASON_MIN };

export type ProposalDetails = { title: string; reason: string; ticket: string; window: ChangeWindow; workFrom: string };

/** One try of an element edit on a document (PlannedAttempt in the device forms is one). */
export type EditAttempt = { apply(document: ModelDocument): ModelDocument; readonly resolved: ElementEdit };

/** Where a new proposal's draft comes from: the current revision, a whole document (import, API), or a first edit. */
export type ProposalSource = { kind: "revision" } | { kind: "document"; document: unknown } | { kind: "edit"; attempt: EditAttempt; message: string };


const noSuchProposal = () => new Refusal("No such proposal on this device.", 404);

function nowOf(environment: ProposalEnvironment): Date {
  return environment.now ?? new Date();
}

/** The proposal's row, locked for the rest of the transaction; 404 when it is not this organisation's device's. */
async function lockedProposal(ref: ProposalRef, transaction: Transaction): Promise<ChangeProposal> {
  if (!isUuid(ref.proposalId) || !isUuid(ref.deviceId)) throw noSuchProposal();
  const proposal = await ChangeProposal.findOne({ where: { id: ref.proposalId, organisationId: ref.organisationId, deviceId: ref.deviceId }, transaction, lock: transaction.LOCK.UPDATE });
  if (!proposal) throw noSuchProposal();
  return proposal;
}

/** A service token acts for no person: the proposals it makes name it as their author (docs/decisions/014). */
function authorTokenOf(actor: AuditActor): string | null {
  return actor.userId === null && actor.apiToken ? actor.apiToken.id : null;
}

function isAuthor(proposal: ChangeProposal, actor: AuditActor): boolean {
  if (proposal.authorUserId !== null) return proposal.authorUserId === actor.userId;
  return proposal.authorTokenId !== null && proposal.authorTokenId === authorTokenOf(actor);
}

function assertAuthor(proposal: ChangeProposal, actor: AuditActor, what: string): void {
  if (!isAuthor(proposal, actor)) throw new Refusal(`Only the author of this proposal (${proposal.authorEmail}) can ${what}.`, 403);
}

function assertRole(actor: ProposalActor, minimum: Role, what: string): void {
  if (!hasAtLeastRole(actor.role, minimum)) throw new Refusal(`To ${what} you need the ${minimum} role or higher; you are ${actor.role}.`, 403);
}

/** The state after the step, or a 409 that says why the step is not open now. */
function stepTo(proposal: ChangeProposal, action: ProposalAction): ProposalState {
  const next = nextState(proposal.state, action);
  if (!next) throw new Refusal(notOpenWords(proposal.state, action), 409);
  return next;
}

function assertVersion(proposal: ChangeProposal, expected: number | undefined): void {
  if (expected !== undefined && proposal.draftVersion !== expected) {
    throw new Refusal(`The draft changed since you opened it (now version ${proposal.draftVersion}). Reload it, then make your change again.`, 409);
  }
}

function assertWrittenReason(text: string, field: string, what: string, reasons: readonly GateReason[] = []): string {
  const trimmed = text.trim();
  if (trimmed.length < WRITTEN_REASON_MIN) throw new Refusal(`${what} needs a written reason of at least ${WRITTEN_REASON_MIN} characters, so the next reader knows why.`, 400, { field, reasons });
  return trimmed;
}

// ---------------------------------------------------------------------------------------------
// The gate, once per draft version (compiling the draft is the costly part).

const gateCache = new LRUCache<string, readonly GateReason[]>({ max: 500 });

/** The draft validated with the organisation's shared objects as they are now; a 409 when it no longer validates. */
function validatedDraft(proposal: ChangeProposal, library: SharedLibrary) {
  const validated = validateDocument(proposal.draftDocument, library);
  if (!validated.ok) throw invalidModel(validated.errors, "The draft is no longer a valid model (a shared object it uses changed). Edit the draft:", validated.tooLarge);
  return validated;
}

/** A digest of the device's expectations, so a cached answer is never one for another list. */
export function expectationsDigest(expectations: readonly Expectation[]): string {
  return createHash("sha256").update(JSON.stringify(expectations)).digest("hex");
}

/** The device's expectations, read in the caller's transaction (they are part of what a gate decides). */
async function expectationsOf(ref: { organisationId: string; deviceId: string }, transaction?: Transaction): Promise<Expectation[]> {
  return (await listExpectations(ref.organisationId, ref.deviceId, transaction)).map((stored) => stored.expectation);
}

/** The blocking reasons for the draft against a revision (the base, or the live one when applying), with the device's expectations. */
function gateOf(proposal: ChangeProposal, before: DeviceAtRevision, draftEffective: ModelDocument, expectations: readonly Expectation[]): readonly GateReason[] {
  const digest = documentDigest(draftEffective);
  const key = `${before.revision.id}|${proposal.workFrom}|${digest}|${expectationsDigest(expectations)}`;
  const known = gateCache.get(key);
  if (known) return known;
  const after: CompiledModel = compiledOn(before, draftEffective, digest).compiled;
  const reasons = gateReasons({ before: before.analysis.compiled, after, workFrom: proposal.workFrom, expectations });
  gateCache.set(key, reasons);
  return reasons;
}

/** A refusal by the gate: `lead` says what was refused and what to do; the message adds each reason's words (for the API). */
function gateRefusal(reasons: readonly GateReason[], lead: string, status: 403 | 409, field?: string, effect?: RefusalEffect): Refusal {
  return new Refusal(`${lead} ${reasons.map((reason) => reason.words).join(" ")}`, status, { reasons, field, effect, lead });
}

/** "The lockout guard blocks this change", "A failing expectation blocks this change" …, capitalised. */
function blocksThisChange(reasons: readonly GateReason[]): string {
  const words = `${gateBlocks(reasons)} this change`;
  return words.charAt(0).toUpperCase() + words.slice(1);
}

async function revisionOf(ref: { organisationId: string; deviceId: string }, number: number, transaction?: Transaction): Promise<DeviceAtRevision> {
  const found = await deviceRevisions.find(ref.organisationId, ref.deviceId, { revisionNumber: number, transaction });
  if (!found) throw new Refusal(`This device has no revision ${number}.`, 404);
  return found;
}

async function currentOf(ref: { organisationId: string; deviceId: string }, transaction?: Transaction, lock = false): Promise<DeviceAtRevision> {
  const found = await deviceRevisions.find(ref.organisationId, ref.deviceId, { transaction, lock });
  if (!found) throw new Refusal("No such device in this organisation.", 404);
  return found;
}

// ---------------------------------------------------------------------------------------------
// Approvals

/** Distinct reviewers who approved the draft's current version. */
async function currentApprovals(proposal: ChangeProposal, transaction?: Transaction): Promise<ProposalReview[]> {
  const approvals = await ProposalReview.findAll({ where: { proposalId: proposal.id, verdict: "approved", draftVersion: proposal.draftVersion }, order: [["createdAt", "ASC"]], transaction });
  const seen = new Set<string>();
  return approvals.filter((approval) => {
    const who = approval.reviewerUserId ?? approval.reviewerEmail;
    if (seen.has(who)) return false;
    seen.add(who);
    return true;
  });
}

async function approvalsRequired(organisationId: string, transaction?: Transaction): Promise<number> {
  const organisation = await Organisation.findByPk(organisationId, { attributes: ["id", "approvalsRequired"], transaction });
  return organisation?.approvalsRequired ?? 1;
}

// ---------------------------------------------------------------------------------------------
// E-mail, after the commit

type Recipient = { email: string; name: string };

/** Members who may review (reviewer or higher), but not these people. */
async function reviewersOf(organisationId: string, except: ReadonlyArray<string | null>): Promise<Recipient[]> {
  const memberships = await Membership.findAll({ where: { organisationId, role: { [Op.in]: ["reviewer", "engineer", "admin", "owner"] } }, include: [{ model: User, as: "user", required: true, attributes: ["id", "email", "name"] }] });
  return memberships.filter((membership) => !except.includes(membership.userId)).map((membership) => ({ email: membership.user!.email, name: membership.user!.name }));
}

async function usersByIds(ids: ReadonlyArray<string | null>): Promise<Recipient[]> {
  const wanted = [...new Set(ids.filter((id): id is string => id !== null))];
  if (wanted.length === 0) return [];
  return (await User.findAll({ where: { id: wanted }, attributes: ["id", "email", "name"] })).map((user) => ({ email: user.email, name: user.name }));
}

type MailContext = { proposal: ChangeProposal; deviceName: string; slug: string; timezone: string };

async function mailContext(proposal: ChangeProposal): Promise<MailContext> {
  const [organisation, device] = await Promise.all([
    Organisation.findByPk(proposal.organisationId, { attributes: ["id", "slug"] }),
    deviceRevisions.find(proposal.organisationId, proposal.deviceId),
  ]);
  return { proposal, deviceName: device?.device.name ?? "a device", slug: organisation?.slug ?? "", timezone: device?.effective.device.timezone ?? "UTC" };
}

function proposalLink(context: MailContext, environment: ProposalEnvironment): string {
  return `${(environment.appOrigin ?? "").replace(/\/+$/, "")}/o/${context.slug}/devices/${context.proposal.deviceId}/proposals/${context.proposal.id}`;
}

/** Sends each message; a failed one is logged, never undoes the committed step. */
async function deliver(environment: ProposalEnvironment, mails: OutgoingMail[]): Promise<void> {
  const send = environment.send ?? sendMail;
  for (const mail of mails) {
    try {
      await send(mail);
    } catch (error) {
      console.error(`proposal e-mail to ${mail.to} (${mail.subject}) could not be sent:`, error);
    }
  }
}

function uniqueRecipients(recipients: Recipient[], except: ReadonlyArray<string>): Recipient[] {
  const seen = new Set(except);
  return recipients.filter((recipient) => {
    if (seen.has(recipient.email)) return false;
    seen.add(recipient.email);
    return true;
  });
}

async function notify(environment: ProposalEnvironment, proposal: ChangeProposal, recipients: Recipient[], subject: (context: MailContext) => string, paragraphs: (context: MailContext) => string[], calendar = false): Promise<void> {
  if (recipients.length === 0) return;
  const context = await mailContext(proposal);
  const link = proposalLink(context, environment);
  const window = { start: proposal.windowStart, end: proposal.windowEnd };
  const ics = calendar
    ? windowCalendar({
        uid: `change-proposal-${proposal.id}@sallyport`,
        title: `Change window: ${proposal.title} (${context.deviceName})`,
        description: `${proposal.title}\n${proposal.reason}\n${link}`,
        url: link.startsWith("http") ? link : undefined,
        window,
        sequence: proposal.draftVersion,
      })
    : undefined;
  await deliver(
    environment,
    recipients.map((recipient) => proposalMail({ to: recipient.email, subject: subject(context), paragraphs: [`Hello ${recipient.name},`, ...paragraphs(context)], link, calendar: ics })),
  );
}

/**
 * The effect as the proposal page opens with it — the headline (who gains or loses what, and
 * whom the lockout guard sees locked out) and the two totals — in words for the review e-mail.
 * The mail still goes when the effect cannot be worked out; it says so instead.
 */
async function effectParagraphs(ref: ProposalRef): Promise<string[]> {
  try {
    const effect = await proposalEffectSummary(ref);
    if (!effect.ok) return [`Effect: not worked out (${effect.problems.join(" ")}); open the proposal to see why.`];
    const { summary } = effect;
    const sources = (decimal: string) => `${formatCount(decimal).text} ${pluralWord(BigInt(decimal), { one: "source", other: "sources" })}`;
    return [`Effect: ${summary.headline}.`, ...(summary.changed ? [`More exposed: ${sources(summary.totals.gains)}. Less exposed: ${sources(summary.totals.loses)}.`] : [])];
  } catch (error) {
    console.error(`the effect of proposal ${ref.proposalId} for its review e-mail could not be worked out:`, error);
    return [];
  }
}

function windowSentence(proposal: ChangeProposal, timezone: string): string {
  return `Change window: ${windowWords({ start: proposal.windowStart, end: proposal.windowEnd }, timezone)}.`;
}

// ---------------------------------------------------------------------------------------------
// Creating and drafting

function audit(actor: AuditActor, proposal: ChangeProposal, action: Parameters<typeof recordAuditEvent>[1]["action"], changes: Record<string, unknown>, transaction: Transaction) {
  return recordAuditEvent(actor, { organisationId: proposal.organisationId, action, targetType: "proposal", targetId: proposal.id, changes: { name: proposal.title, ...changes } }, transaction);
}

/**
 * A new proposal on the device's current revision: its draft is that revision's document, a
 * whole document (validated like an import: 400 with paths), or the revision after a first
 * edit. The window must be in order and not over.
 */
export async function createProposal(
  where: { organisationId: string; deviceId: string },
  details: ProposalDetails,
  source: ProposalSource,
  actor: ProposalActor,
  environment: ProposalEnvironment = {},
): Promise<ChangeProposal> {
  assertRole(actor, "engineer", "propose a change");
  const problem = windowProblem(details.window, nowOf(environment));
  if (problem) throw new Refusal(problem, 400, { field: "windowEnd" });
  return getDatabase().transaction(async (transaction) => {
    const current = await currentOf(where, transaction);
    let draft = current.document;
    let edits: Array<{ edit: ElementEdit; message: string }> = [];
    if (source.kind !== "revision") {
      const library = await loadSharedLibrary(where.organisationId, transaction);
      const candidate = source.kind === "document" ? source.document : source.attempt.apply(current.document);
      const validated = validateDocument(candidate, library);
      if (!validated.ok) throw invalidModel(validated.errors, source.kind === "document" ? "The document is not a valid Sallyport model." : undefined, validated.tooLarge);
      draft = validated.document;
      edits = source.kind === "document" ? editsBetween(current.document, draft).map((edit) => ({ edit, message: describeElementEdit(edit) })) : [{ edit: source.attempt.resolved, message: source.message }];
    }
    const proposal = await ChangeProposal.create(
      {
        organisationId: where.organisationId,
        deviceId: where.deviceId,
        baseRevisionNumber: current.revision.number,
        draftDocument: draft,
        title: details.title,
        reason: details.reason,
        ticket: details.ticket,
        windowStart: details.window.start,
        windowEnd: details.window.end,
        workFrom: details.workFrom,
        authorUserId: actor.userId,
        authorEmail: actor.email,
        authorTokenId: authorTokenOf(actor),
        submittedAt: null,
        appliedRevisionNumber: null,
        appliedByUserId: null,
        appliedByEmail: null,
        appliedAt: null,
      },
      { transaction },
    );
    await ProposalEdit.bulkCreate(
      edits.map((entry, index) => ({ proposalId: proposal.id, position: index + 1, edit: entry.edit, message: entry.message.slice(0, 500), authorUserId: actor.userId, authorEmail: actor.email })),
      { transaction },
    );
    await audit(actor, proposal, "proposal.created", { device: current.device.name, baseRevision: current.revision.number, source: source.kind, edits: edits.length }, transaction);
    return proposal;
  });
}

/**
 * One element edit of the draft, validated by the engine like a save: only the draft changes,
 * the edit is recorded (to be re-applied later), the draft version moves on and earlier
 * approvals stop counting. `expectedVersion` is the version the editor showed.
 */
export async function editDraft(ref: ProposalRef, expectedVersion: number, attempt: EditAttempt, message: string, actor: ProposalActor, environment: ProposalEnvironment = {}): Promise<{ draftVersion: number; changed: boolean }> {
  const result = await getDatabase().transaction(async (transaction) => {
    const proposal = await lockedProposal(ref, transaction);
    assertAuthor(proposal, actor, "edit its draft");
    const next = stepTo(proposal, "edit");
    assertVersion(proposal, expectedVersion);
    const library = await loadSharedLibrary(ref.organisationId, transaction);
    const validated = validateDocument(attempt.apply(proposal.draftDocument), library);
    if (!validated.ok) throw invalidModel(validated.errors, undefined, validated.tooLarge);
    if (canonicalJson(validated.document) === canonicalJson(proposal.draftDocument)) return { draftVersion: proposal.draftVersion, changed: false, approvers: [], proposal };
    const approvers = (await currentApprovals(proposal, transaction)).map((approval) => approval.reviewerUserId);
    const position = (await ProposalEdit.max<number, ProposalEdit>("position", { where: { proposalId: proposal.id }, transaction })) ?? 0;
    await ProposalEdit.create({ proposalId: proposal.id, position: position + 1, edit: attempt.resolved, message: message.slice(0, 500), authorUserId: actor.userId, authorEmail: actor.email }, { transaction });
    await proposal.update({ draftDocument: validated.document, draftVersion: proposal.draftVersion + 1, state: next }, { transaction });
    await audit(actor, proposal, "proposal.draft-edited", { edit: message, draftVersion: proposal.draftVersion }, transaction);
    return { draftVersion: proposal.draftVersion, changed: true, approvers, proposal, validated: { effective: validated.effective, libraryDigest: documentDigest(library) } };
  });
  // The effect the editor asks for next reads this exact draft: it need not validate it again.
  if (result.changed && result.validated) rememberValidatedDraft(result.proposal.id, result.draftVersion, result.validated.libraryDigest, result.validated.effective);
  if (result.changed && result.approvers.length > 0) {
    await notify(environment, result.proposal, await usersByIds(result.approvers), () => `Changed after your approval: ${result.proposal.title}`, (context) => [
      `${actor.name} changed the draft of “${result.proposal.title}” on ${context.deviceName} after you approved it (${message}). Your approval no longer counts: review the change again.`,
    ]);
  }
  return { draftVersion: result.draftVersion, changed: result.changed };
}

/** The title, reason, ticket, window or work-from address changed; the approvals reset (reviewers approved what they read). */
export async function updateProposalDetails(ref: ProposalRef, expectedVersion: number, details: ProposalDetails, actor: ProposalActor, environment: ProposalEnvironment = {}): Promise<{ changed: boolean }> {
  const problem = windowProblem(details.window, nowOf(environment));
  if (problem) throw new Refusal(problem, 400, { field: "windowEnd" });
  return getDatabase().transaction(async (transaction) => {
    const proposal = await lockedProposal(ref, transaction);
    assertAuthor(proposal, actor, "change its details");
    const next = stepTo(proposal, "edit");
    assertVersion(proposal, expectedVersion);
    const before = { title: proposal.title, reason: proposal.reason, ticket: proposal.ticket, windowStart: proposal.windowStart.toISOString(), windowEnd: proposal.windowEnd.toISOString(), workFrom: proposal.workFrom };
    const after = { title: details.title, reason: details.reason, ticket: details.ticket, windowStart: details.window.start.toISOString(), windowEnd: details.window.end.toISOString(), workFrom: details.workFrom };
    const changed = Object.fromEntries(Object.entries(after).filter(([field, value]) => before[field as keyof typeof before] !== value).map(([field, value]) => [field, { from: before[field as keyof typeof before], to: value }]));
    if (Object.keys(changed).length === 0) return { changed: false };
    await proposal.update({ ...details, windowStart: details.window.start, windowEnd: details.window.end, draftVersion: proposal.draftVersion + 1, state: next }, { transaction });
    await audit(actor, proposal, "proposal.details-changed", { ...changed, draftVersion: proposal.draftVersion }, transaction);
    return { changed: true };
  });
}

// ---------------------------------------------------------------------------------------------
// Review

/**
 * Sends the draft to review and e-mails the reviewers. Refused while the lockout guard blocks
 * (the author fixes the draft), unless the author acknowledges it in writing: then only an
 * admin or owner can approve it (docs/decisions/010).
 */
export async function submitProposal(ref: ProposalRef, input: { acknowledgement?: string }, actor: ProposalActor, environment: ProposalEnvironment = {}): Promise<{ state: ProposalState; reasons: readonly GateReason[] }> {
  const result = await getDatabase().transaction(async (transaction) => {
    const proposal = await lockedProposal(ref, transaction);
    assertAuthor(proposal, actor, "submit it");
    const next = stepTo(proposal, "submit");
    const base = await revisionOf(ref, proposal.baseRevisionNumber, transaction);
    const draft = validatedDraft(proposal, await loadSharedLibrary(ref.organisationId, transaction));
    if (diffDocuments(base.effective, draft.effective).length === 0) throw new Refusal("The draft changes nothing yet: edit it before submitting it for review.", 409);
    const reasons = gateOf(proposal, base, draft.effective, await expectationsOf(ref, transaction));
    let acknowledgement = "";
    if (reasons.length > 0) {
      if (!input.acknowledgement?.trim()) {
        const fix = reasons.every((reason) => reason.kind === "expectation") ? "Change the draft so every expectation that holds today still holds" : "Change the draft so nobody loses their way in";
        throw gateRefusal(reasons, `Not submitted: ${gateBlocks(reasons)} this change. ${fix} — or, when the change is meant, acknowledge it in writing and an admin or owner will decide.`, 409, "acknowledgement");
      }
      acknowledgement = assertWrittenReason(input.acknowledgement, "acknowledgement", `Submitting past ${gateSubject(reasons).words}`, reasons);
    }
    await proposal.update({ state: next, submittedAt: nowOf(environment), guardAcknowledgement: acknowledgement }, { transaction });
    await audit(actor, proposal, "proposal.submitted", { draftVersion: proposal.draftVersion, ...(acknowledgement ? { acknowledgement, guard: reasons.map((reason) => reason.words) } : {}) }, transaction);
    return { proposal, reasons };
  });
  const { proposal, reasons } = result;
  const reviewers = await reviewersOf(ref.organisationId, [proposal.authorUserId]);
  const effect = reviewers.length > 0 ? await effectParagraphs(ref) : [];
  await notify(environment, proposal, reviewers, (context) => `Review requested: ${proposal.title} (${context.deviceName})`, (context) => [
    `${actor.name} asks for a review of “${proposal.title}” on ${context.deviceName}.`,
    ...(proposal.reason ? [`Why: ${proposal.reason}`] : []),
    ...effect,
    windowSentence(proposal, context.timezone),
    ...(reasons.length > 0 ? [`${blocksThisChange(reasons)} (${reasons.map((reason) => reason.words).join(" ")}). The author acknowledged it: “${proposal.guardAcknowledgement}”. Only an admin or owner can approve it, with a written reason.`] : []),
  ]);
  return { state: proposal.state, reasons };
}

/** A comment on the proposal, or on one inbound rule of its draft (or of its base, for a rule the draft removes). */
export async function commentOnProposal(ref: ProposalRef, input: { body: string; ruleId: string | null }, actor: ProposalActor, environment: ProposalEnvironment = {}): Promise<ProposalComment> {
  assertRole(actor, "reviewer", "comment on a proposal");
  const result = await getDatabase().transaction(async (transaction) => {
    const proposal = await lockedProposal(ref, transaction);
    stepTo(proposal, "comment");
    if (input.ruleId !== null) {
      const ruleId = input.ruleId;
      const inDraft = proposal.draftDocument.inboundRules.some((rule) => rule.id === ruleId);
      const inBase = inDraft || (await revisionOf(ref, proposal.baseRevisionNumber, transaction)).document.inboundRules.some((rule) => rule.id === ruleId);
      if (!inBase) throw new Refusal(`Neither the draft nor its base has an inbound rule “${ruleId.slice(0, 63)}”.`, 400, { field: "ruleId" });
    }
    const comment = await ProposalComment.create({ proposalId: proposal.id, ruleId: input.ruleId, body: input.body, draftVersion: proposal.draftVersion, authorUserId: actor.userId, authorEmail: actor.email }, { transaction });
    await audit(actor, proposal, "proposal.commented", { ...(input.ruleId ? { ruleId: input.ruleId } : {}), comment: input.body.slice(0, 200) }, transaction);
    const others = await ProposalComment.findAll({ where: { proposalId: proposal.id }, attributes: ["authorUserId"], transaction });
    const reviewers = await ProposalReview.findAll({ where: { proposalId: proposal.id }, attributes: ["reviewerUserId"], transaction });
    return { proposal, comment, participants: [proposal.authorUserId, ...others.map((row) => row.authorUserId), ...reviewers.map((row) => row.reviewerUserId)] };
  });
  const recipients = uniqueRecipients(await usersByIds(result.participants), [actor.email]);
  await notify(environment, result.proposal, recipients, () => `New comment: ${result.proposal.title}`, (context) => [
    `${actor.name} commented on ${input.ruleId ? `inbound rule ${input.ruleId} of ` : ""}“${result.proposal.title}” (${context.deviceName}):`,
    input.body,
  ]);
  return result.comment;
}

export type ReviewInput = { verdict: ReviewVerdict; reason: string; guardOverride?: string };

/**
 * A reviewer's verdict: never the author's own (four eyes). An approval counts for the draft
 * version it saw; the one that brings the proposal to the organisation's required number
 * approves it, and the author and approvers are e-mailed the change window as an iCalendar
 * event. A draft the lockout guard blocks needs an admin or owner with a written reason.
 * Approving twice is approving once.
 */
export async function reviewProposal(ref: ProposalRef, input: ReviewInput, actor: ProposalActor, environment: ProposalEnvironment = {}): Promise<{ state: ProposalState; approvals: number; required: number }> {
  assertRole(actor, "reviewer", input.verdict === "approved" ? "approve a proposal" : input.verdict === "rejected" ? "reject a proposal" : "ask for changes");
  const result = await getDatabase().transaction(async (transaction) => {
    const proposal = await lockedProposal(ref, transaction);
    if (isAuthor(proposal, actor)) throw new Refusal("You wrote this proposal, so someone else reviews it: every change is seen by a second person before it lands.", 403);
    const required = await approvalsRequired(ref.organisationId, transaction);
    const approvals = await currentApprovals(proposal, transaction);
    if (input.verdict === "approved") {
      // Approving again what one approved already changes nothing (a double click) — unless the
      // organisation now needs fewer approvals than it had: then this completes the approval.
      if (approvals.some((approval) => approval.reviewerUserId === actor.userId) && (proposal.state === "in_review" || proposal.state === "approved")) {
        const completes = proposal.state === "in_review" && approvals.length >= required;
        if (completes) {
          await proposal.update({ state: "approved" }, { transaction });
          await audit(actor, proposal, "proposal.approved", { draftVersion: proposal.draftVersion, approvals: approvals.length, required }, transaction);
        }
        return { proposal, approvals: approvals.length, required, completed: completes, verdict: input.verdict, changed: completes, approverIds: approvals.map((approval) => approval.reviewerUserId) };
      }
      const complete = approvals.length + 1 >= required;
      const next = stepTo(proposal, complete ? "complete-approval" : "approve");
      const base = await revisionOf(ref, proposal.baseRevisionNumber, transaction);
      const draft = validatedDraft(proposal, await loadSharedLibrary(ref.organisationId, transaction));
      const reasons = gateOf(proposal, base, draft.effective, await expectationsOf(ref, transaction));
      let guardOverride = "";
      if (reasons.length > 0) {
        if (!hasAtLeastRole(actor.role, "admin")) throw gateRefusal(reasons, `${blocksThisChange(reasons)}: only an admin or owner can approve it, with a written reason.`, 403);
        guardOverride = assertWrittenReason(input.guardOverride ?? "", "guardOverride", `Approving past ${gateSubject(reasons).words}`, reasons);
      }
      try {
        await ProposalReview.create({ proposalId: proposal.id, reviewerUserId: actor.userId, reviewerEmail: actor.email, reviewerRole: actor.role, verdict: "approved", reason: input.reason, guardOverrideReason: guardOverride, draftVersion: proposal.draftVersion }, { transaction });
      } catch (error) {
        if (error instanceof UniqueConstraintError) return { proposal, approvals: approvals.length, required, completed: false, verdict: input.verdict, changed: false, approverIds: [] };
        throw error;
      }
      await proposal.update({ state: next }, { transaction });
      await audit(actor, proposal, "proposal.approved", { draftVersion: proposal.draftVersion, approvals: approvals.length + 1, required, ...(guardOverride ? { guardOverride, guard: reasons.map((reason) => reason.words) } : {}) }, transaction);
      return { proposal, approvals: approvals.length + 1, required, completed: complete, verdict: input.verdict, changed: true, approverIds: [...approvals.map((approval) => approval.reviewerUserId), actor.userId] };
    }
    const reason = input.reason.trim();
    if (reason.length < 3) throw new Refusal(input.verdict === "rejected" ? "Say why it is rejected, so the author knows." : "Say what should change, so the author knows.", 400, { field: "reason" });
    const next = stepTo(proposal, input.verdict === "rejected" ? "reject" : "request-changes");
    await ProposalReview.create({ proposalId: proposal.id, reviewerUserId: actor.userId, reviewerEmail: actor.email, reviewerRole: actor.role, verdict: input.verdict, reason, guardOverrideReason: "", draftVersion: proposal.draftVersion }, { transaction });
    await proposal.update({ state: next }, { transaction });
    await audit(actor, proposal, input.verdict === "rejected" ? "proposal.rejected" : "proposal.changes-requested", { reason, draftVersion: proposal.draftVersion }, transaction);
    return { proposal, approvals: approvals.length, required, completed: false, verdict: input.verdict, changed: true, approverIds: [] };
  });
  const { proposal } = result;
  if (result.changed) {
    const author = await usersByIds([proposal.authorUserId]);
    if (result.verdict === "approved" && result.completed) {
      const approvers = await usersByIds(result.approverIds);
      await notify(
        environment,
        proposal,
        uniqueRecipients([...author, ...approvers], []),
        (context) => `Approved: ${proposal.title} (${context.deviceName})`,
        (context) => [`“${proposal.title}” on ${context.deviceName} is approved (${result.approvals} of ${result.required}). It can be applied inside its change window; the calendar event is attached.`, windowSentence(proposal, context.timezone)],
        true,
      );
    } else if (result.verdict === "approved") {
      await notify(environment, proposal, author, () => `Approval ${result.approvals} of ${result.required}: ${proposal.title}`, () => [`${actor.name} approved “${proposal.title}”; it needs ${result.required - result.approvals} more.`]);
    } else {
      await notify(environment, proposal, author, () => `${result.verdict === "rejected" ? "Rejected" : "Changes requested"}: ${proposal.title}`, () => [
        `${actor.name} ${result.verdict === "rejected" ? "rejected" : "asked for changes to"} “${proposal.title}”:`,
        input.reason.trim(),
      ]);
    }
  }
  return { state: proposal.state, approvals: result.approvals, required: result.required };
}

/** The author (or an admin or owner) withdraws an open proposal. */
export async function withdrawProposal(ref: ProposalRef, actor: ProposalActor, environment: ProposalEnvironment = {}): Promise<void> {
  const proposal = await getDatabase().transaction(async (transaction) => {
    const locked = await lockedProposal(ref, transaction);
    if (!isAuthor(locked, actor) && !hasAtLeastRole(actor.role, "admin")) throw new Refusal(`Only the author of this proposal (${locked.authorEmail}), an admin or an owner can withdraw it.`, 403);
    const next = stepTo(locked, "withdraw");
    await locked.update({ state: next }, { transaction });
    await audit(actor, locked, "proposal.withdrawn", { draftVersion: locked.draftVersion }, transaction);
    return locked;
  });
  if (!isAuthor(proposal, actor)) {
    await notify(environment, proposal, await usersByIds([proposal.authorUserId]), () => `Withdrawn: ${proposal.title}`, () => [`${actor.name} withdrew your proposal “${proposal.title}”.`]);
  }
}

// ---------------------------------------------------------------------------------------------
// Stale base

export type BringUpToDateOutcome = { ok: true; baseRevision: number; dropped: string[] } | { ok: false; conflicts: Conflict[]; liveRevision: number };

/**
 * Re-applies the draft's element edits on the live revision. Conflicts (an element both sides
 * changed, an edit that no longer applies) come back for the author to settle, nothing
 * changed; with a choice for each, the draft moves to the live revision and approvals reset.
 */
export async function bringProposalUpToDate(ref: ProposalRef, expectedVersion: number, choices: Readonly<Record<ElementKey, ConflictChoice>>, actor: ProposalActor): Promise<BringUpToDateOutcome> {
  return getDatabase().transaction(async (transaction) => {
    const proposal = await lockedProposal(ref, transaction);
    assertAuthor(proposal, actor, "bring it up to date");
    const next = stepTo(proposal, "bring-up-to-date");
    assertVersion(proposal, expectedVersion);
    const live = await currentOf(ref, transaction);
    if (live.revision.number === proposal.baseRevisionNumber) throw new Refusal(`This proposal is up to date with the live revision r${live.revision.number} already.`, 409);
    const base = await revisionOf(ref, proposal.baseRevisionNumber, transaction);
    const rows = await ProposalEdit.findAll({ where: { proposalId: proposal.id }, order: [["position", "ASC"]], transaction });
    const result = bringUpToDate(base.document, live.document, parseElementEdits(rows.map((row) => row.edit)), choices);
    if (!result.ok) return { ok: false, conflicts: result.conflicts, liveRevision: live.revision.number };
    const validated = validateDocument(result.document, await loadSharedLibrary(ref.organisationId, transaction));
    if (!validated.ok) throw invalidModel(validated.errors, `Brought up to date with r${live.revision.number}, the draft would not be a valid model; take the live version of the elements named here, or change the draft first:`);
    await ProposalEdit.destroy({ where: { proposalId: proposal.id }, transaction });
    await ProposalEdit.bulkCreate(
      result.edits.map((edit, index) => ({ proposalId: proposal.id, position: index + 1, edit, message: describeElementEdit(edit), authorUserId: actor.userId, authorEmail: actor.email })),
      { transaction },
    );
    const from = proposal.baseRevisionNumber;
    await proposal.update({ baseRevisionNumber: live.revision.number, draftDocument: validated.document, draftVersion: proposal.draftVersion + 1, state: next }, { transaction });
    const dropped = result.dropped.map(describeElementEdit);
    await audit(actor, proposal, "proposal.brought-up-to-date", { baseRevision: { from, to: live.revision.number }, settled: result.settled.map((entry) => `${entry.key}: ${entry.choice}`), dropped, draftVersion: proposal.draftVersion }, transaction);
    return { ok: true, baseRevision: live.revision.number, dropped };
  });
}

// ---------------------------------------------------------------------------------------------
// Apply

/**
 * Applies an approved, up-to-date proposal inside its change window as one revision with the
 * proposal's title as its message, in one transaction with the state change and the audit
 * entries. Outside the window only an admin or owner may apply, with a written reason. A second
 * apply (a double click, two tabs) finds it applied and returns the same revision.
 */
export async function applyProposal(ref: ProposalRef, input: { outsideWindowReason?: string }, actor: ProposalActor, environment: ProposalEnvironment = {}): Promise<{ revision: number; alreadyApplied: boolean }> {
  assertRole(actor, "engineer", "apply a proposal");
  const now = nowOf(environment);
  const result = await getDatabase().transaction(async (transaction) => {
    const proposal = await lockedProposal(ref, transaction);
    if (proposal.state === "applied" && proposal.appliedRevisionNumber !== null) return { proposal, revision: proposal.appliedRevisionNumber, alreadyApplied: true, revisionId: null };
    // Closed, draft or sent back: said as the state machine says it.
    if (proposal.state !== "approved" && proposal.state !== "in_review") stepTo(proposal, "apply");
    const required = await approvalsRequired(ref.organisationId, transaction);
    const approvals = await currentApprovals(proposal, transaction);
    if (approvals.length < required) throw new Refusal(`Not applied: this proposal needs ${required} approval${required === 1 ? "" : "s"} of its current draft and has ${approvals.length}.`, 409);
    const next = stepTo(proposal, "apply");
    // Shared library first, then the device row: the order every save takes (shared-library-lock.server.ts).
    await lockSharedLibrary(transaction, ref.organisationId, "read");
    const library = await loadSharedLibrary(ref.organisationId, transaction);
    const live = await currentOf(ref, transaction, true);
    if (live.revision.number !== proposal.baseRevisionNumber) {
      const base = await revisionOf(ref, proposal.baseRevisionNumber, transaction);
      const changes = diffDocuments(base.effective, live.effective);
      const listed = changes.slice(0, 8).map((change) => `${change.section}: ${change.change} ${change.element}`).join("; ");
      throw new Refusal(
        `Not applied: the device moved on since this proposal was made (r${proposal.baseRevisionNumber} → r${live.revision.number}${listed ? `: ${listed}${changes.length > 8 ? "; …" : ""}` : ""}). Bring the draft up to date, have it approved again, then apply it.`,
        409,
        { conflict: { currentNumber: live.revision.number, changes } },
      );
    }
    const window = { start: proposal.windowStart, end: proposal.windowEnd };
    let outsideWindowReason = "";
    if (!isInsideWindow(window, now)) {
      const timezone = live.effective.device.timezone;
      const words = `Not applied: it is ${formatInstant(now, timezone)}, outside the change window (${windowWords(window, timezone)}).`;
      if (!hasAtLeastRole(actor.role, "admin")) throw new Refusal(`${words} Apply it inside the window, or ask an admin or owner to apply it now with a written reason.`, 409);
      if (!input.outsideWindowReason?.trim()) throw new Refusal(`${words} As an admin you may apply it now with a written reason.`, 409, { field: "outsideWindowReason" });
      outsideWindowReason = assertWrittenReason(input.outsideWindowReason, "outsideWindowReason", "Applying outside the change window");
    }
    const validated = validatedDraft(proposal, library);
    const reasons = gateOf(proposal, live, validated.effective, await expectationsOf(ref, transaction));
    if (reasons.length > 0 && !approvals.some((approval) => approval.guardOverrideReason !== "" && hasAtLeastRole(approval.reviewerRole, "admin"))) {
      throw gateRefusal(reasons, `Not applied: ${gateBlocks(reasons)} this change and no admin or owner approved it past ${gateSubject(reasons).plural ? "them" : "it"}.`, 409);
    }
    const changes = diffDocuments(live.effective, validated.effective);
    if (changes.length === 0) throw new Refusal("Not applied: the draft is the same as the live revision.", 409);
    const saved = await writeRevision(ref.organisationId, live, validated, changes, actor, proposal.title, transaction, { audit: { proposal: proposal.id } });
    await proposal.update({ state: next, appliedRevisionNumber: saved.number, appliedByUserId: actor.userId, appliedByEmail: actor.email, appliedAt: now, outsideWindowReason }, { transaction });
    await audit(actor, proposal, "proposal.applied", { revision: saved.number, ...(outsideWindowReason ? { outsideWindowReason } : {}) }, transaction);
    return { proposal, revision: saved.number, alreadyApplied: false, revisionId: saved.revisionId, approverIds: approvals.map((approval) => approval.reviewerUserId) };
  });
  if (result.revisionId) revisionAnalysisQueue.enqueue(result.revisionId);
  if (!result.alreadyApplied) {
    const { proposal } = result;
    const recipients = uniqueRecipients(await usersByIds([proposal.authorUserId, ...(result.approverIds ?? [])]), []);
    await notify(environment, proposal, recipients, (context) => `Applied: ${proposal.title} (${context.deviceName})`, (context) => [
      `${actor.name} applied “${proposal.title}” to ${context.deviceName} as revision r${result.revision}${proposal.outsideWindowReason ? `, outside its change window: “${proposal.outsideWindowReason}”` : ""}.`,
      "The simulation models the configuration, not the device: confirm the change on the device itself, following your change policy and the device maker's documentation.",
    ]);
  }
  return { revision: result.revision, alreadyApplied: result.alreadyApplied };
}

// ---------------------------------------------------------------------------------------------
// Direct saves under the change policy

/** What a refused direct save would have done, in short: the page shows it beside the reasons. */
function effectSummary(current: DeviceAtRevision, after: ReturnType<typeof compiledOn>, expectations: readonly Expectation[]): RefusalEffect {
  const effect = changeEffect(current.analysis.compiled, after.compiled, { expectations, findings: { before: deviceRevisions.findingsOf(current), after: after.findings() } });
  return {
    headline: effect.headline,
    gains: effect.totals.gains,
    loses: effect.totals.loses,
    findingsNew: effect.findings.new.length,
    findingsResolved: effect.findings.resolved.length,
    rules: [
      ...effect.rules.added.map((rule) => `added ${rule.id} at position ${rule.position}`),
      ...effect.rules.removed.map((rule) => `removed ${rule.id} (was at position ${rule.position})`),
      ...effect.rules.moved.map((rule) => `moved ${rule.id} from position ${rule.from} to ${rule.to}`),
      ...effect.rules.changed.map((rule) => `changed ${rule.id}: ${rule.fields.join(", ")}`),
    ],
  };
}

/**
 * What the gate says of saving `effective` over the device's current revision directly (the
 * import page's preview of a new revision): the same reasons the save's guard finds, read
 * outside its transaction, on the same compiled model (compiledOn caches it for the save).
 */
export async function directSaveGate(current: DeviceAtRevision, effective: ModelDocument): Promise<GateReason[]> {
  const expectations = await expectationsOf({ organisationId: current.device.organisationId, deviceId: current.device.id });
  return gateReasons({ before: current.analysis.compiled, after: compiledOn(current, effective).compiled, expectations });
}

/**
 * The guard of a direct save in the live editor. When the organisation's changes go through
 * proposals, only an admin's break-glass save with a written reason passes (403 otherwise).
 * Otherwise a save that trips the gate — the lockout guard, or an expectation of the device
 * that held and no longer does — is refused (409 with the reasons and the effect) unless an
 * admin saves it anyway with a written reason. Either override is recorded beside the revision.
 */
export function directSaveGuard(policy: { changesThroughProposals: boolean }, actor: ProposalActor, override: { reason: string } | null): SaveGuard {
  return async (current, validated, transaction) => {
    const expectations = await expectationsOf({ organisationId: current.device.organisationId, deviceId: current.device.id }, transaction);
    const after = compiledOn(current, validated.effective);
    const reasons = gateReasons({ before: current.analysis.compiled, after: after.compiled, expectations });
    const isAdmin = hasAtLeastRole(actor.role, "admin");
    if (policy.changesThroughProposals) {
      if (!isAdmin) throw new Refusal("Not saved: in this organisation changes go through proposals. Propose this change instead; an admin can save directly in an emergency (break-glass), with a reason.", 403, { reasons });
      if (!override) throw new Refusal("Not saved: in this organisation changes go through proposals. Propose this change instead, or — in an emergency — save it directly (break-glass) with a written reason.", 403, { field: "overrideReason", reasons });
      const reason = assertWrittenReason(override.reason, "overrideReason", "A break-glass save", reasons);
      return { action: "device.break-glass-saved", changes: { reason, ...(reasons.length ? { guard: reasons.map((entry) => entry.words) } : {}) } };
    }
    if (reasons.length === 0) return null;
    const effect = effectSummary(current, after, expectations);
    const blocks = gateBlocks(reasons);
    const fix = reasons.every((reason) => reason.kind === "expectation") ? "Change it so the expectation holds" : "Change it so nobody loses their way in";
    if (!isAdmin) throw gateRefusal(reasons, `Not saved: ${blocks} this change. ${fix}, or make it a proposal for an admin or owner to decide.`, 409, undefined, effect);
    if (!override) throw gateRefusal(reasons, `Not saved: ${blocks} this change. Change it, make it a proposal, or — as an admin — save it anyway with a written reason.`, 409, "overrideReason", effect);
    const reason = assertWrittenReason(override.reason, "overrideReason", `Saving past ${gateSubject(reasons).words}`, reasons);
    return { action: "device.saved-past-guard", changes: { reason, guard: reasons.map((entry) => entry.words) } };
  };
}

/**
 * A direct save of the live editor under the organisation's change policy (directSaveGuard);
 * a break-glass save e-mails the reviewers.
 */
export async function saveDirectEdit(
  where: { organisationId: string; deviceId: string; deviceName: string; slug: string },
  policy: { changesThroughProposals: boolean },
  baseNumber: number,
  edit: (document: ModelDocument) => unknown,
  actor: ProposalActor,
  message: string,
  options: { siteId?: string; override: { reason: string } | null },
  environment: ProposalEnvironment = {},
): Promise<{ number: number; changes: DocumentChange[]; note: SaveGuardNote | null }> {
  const saved = await saveEdit(where.organisationId, where.deviceId, baseNumber, edit, actor, message, { siteId: options.siteId, guard: directSaveGuard(policy, actor, options.override) });
  if (saved.note?.action === "device.break-glass-saved") {
    await mailBreakGlass(where.organisationId, actor, environment, {
      subject: `Break-glass change: ${where.deviceName} r${saved.number}`,
      what: `saved revision r${saved.number} of ${where.deviceName} directly, outside a proposal (${message})`,
      reason: String(saved.note?.changes.reason ?? ""),
      path: `/o/${where.slug}/devices/${where.deviceId}/history`,
    });
  }
  return saved;
}

/**
 * After a break-glass change is committed: e-mails every reviewer (reviewer or higher) but its
 * author what was changed outside a proposal and why, with a link to where it shows.
 */
export async function mailBreakGlass(organisationId: string, actor: ProposalActor, environment: ProposalEnvironment, change: { subject: string; what: string; reason: string; path: string }): Promise<void> {
  const link = `${(environment.appOrigin ?? "").replace(/\/+$/, "")}${change.path}`;
  const reviewers = await reviewersOf(organisationId, [actor.userId]);
  await deliver(
    environment,
    reviewers.map((reviewer) => proposalMail({ to: reviewer.email, subject: change.subject, paragraphs: [`Hello ${reviewer.name},`, `${actor.name} ${change.what}.`, `Their reason: “${change.reason}”.`], link })),
  );
}

// ---------------------------------------------------------------------------------------------
// Reading

export type ProposalRow = {
  id: string;
  deviceId: string;
  deviceName: string;
  title: string;
  state: ProposalState;
  stateLabel: string;
  authorEmail: string;
  authorName: string | null;
  authorUserId: string | null;
  baseRevision: number;
  liveRevision: number;
  stale: boolean;
  windowStart: string;
  windowEnd: string;
  timezone: string;
  approvals: number;
  required: number;
  updatedAt: string;
  appliedRevision: number | null;
};

export type ProposalFilter = { deviceId?: string; state?: ProposalState | "open"; authorUserId?: string; waitingForReviewBy?: string; windowFrom?: Date; windowTo?: Date };

/** Proposals of the organisation under the filters, newest change first (at most 500). */
export async function listProposals(organisationId: string, filter: ProposalFilter = {}): Promise<ProposalRow[]> {
  const where: WhereOptions<ChangeProposal> = {
    organisationId,
    ...(filter.deviceId ? { deviceId: filter.deviceId } : {}),
    ...(filter.state === "open" ? { state: { [Op.in]: [...OPEN_PROPOSAL_STATES] } } : filter.state ? { state: filter.state } : {}),
    ...(filter.authorUserId ? { authorUserId: filter.authorUserId } : {}),
    ...(filter.waitingForReviewBy ? { state: "in_review", authorUserId: { [Op.or]: [{ [Op.ne]: filter.waitingForReviewBy }, { [Op.is]: null }] } } : {}),
    ...(filter.windowFrom && filter.windowTo ? { windowStart: { [Op.lt]: filter.windowTo }, windowEnd: { [Op.gt]: filter.windowFrom } } : {}),
  };
  const proposals = await ChangeProposal.findAll({
    where,
    attributes: { exclude: ["draftDocument"] },
    include: [{ model: Device, as: "device", required: true, attributes: ["id", "name", "currentRevisionNumber"] }],
    order: [["updatedAt", "DESC"]],
    limit: 500,
  });
  const ids = proposals.map((proposal) => proposal.id);
  const [approvals, organisation, authors] = await Promise.all([
    ids.length ? ProposalReview.findAll({ where: { proposalId: ids, verdict: "approved" }, attributes: ["proposalId", "reviewerUserId", "reviewerEmail", "draftVersion"] }) : [],
    Organisation.findByPk(organisationId, { attributes: ["id", "approvalsRequired"] }),
    User.findAll({ where: { id: [...new Set(proposals.map((proposal) => proposal.authorUserId).filter((id): id is string => id !== null))] }, attributes: ["id", "name"] }),
  ]);
  const names = new Map(authors.map((user) => [user.id, user.name]));
  const timezones = new Map<string, string>();
  await Promise.all(
    [...new Set(proposals.map((proposal) => proposal.deviceId))].map(async (deviceId) => {
      const found = await deviceRevisions.find(organisationId, deviceId);
      timezones.set(deviceId, found?.effective.device.timezone ?? "UTC");
    }),
  );
  const rows = proposals.map((proposal) => {
    const counted = new Set(approvals.filter((approval) => approval.proposalId === proposal.id && approval.draftVersion === proposal.draftVersion).map((approval) => approval.reviewerUserId ?? approval.reviewerEmail));
    const live = proposal.device?.currentRevisionNumber ?? proposal.baseRevisionNumber;
    const state: ProposalState = proposal.state;
    return {
      id: proposal.id,
      deviceId: proposal.deviceId,
      deviceName: proposal.device?.name ?? "",
      title: proposal.title,
      state: proposal.state,
      stateLabel: PROPOSAL_STATE_LABELS[state],
      authorEmail: proposal.authorEmail,
      authorName: proposal.authorUserId ? (names.get(proposal.authorUserId) ?? null) : null,
      authorUserId: proposal.authorUserId,
      baseRevision: proposal.baseRevisionNumber,
      liveRevision: live,
      stale: isOpenState(proposal.state) && live !== proposal.baseRevisionNumber,
      windowStart: proposal.windowStart.toISOString(),
      windowEnd: proposal.windowEnd.toISOString(),
      timezone: timezones.get(proposal.deviceId) ?? "UTC",
      approvals: counted.size,
      required: organisation?.approvalsRequired ?? 1,
      updatedAt: proposal.updatedAt.toISOString(),
      appliedRevision: proposal.appliedRevisionNumber,
      approvedBy: [...counted],
    };
  });
  // Waiting for my review: not yet approved by me in its current version.
  const reviewer = filter.waitingForReviewBy;
  return rows.filter((row) => !reviewer || !row.approvedBy.includes(reviewer)).map(({ approvedBy: _approvedBy, ...row }) => row);
}

/** The proposals applied to a device, by the revision each made: History links each revision to its change record. One query. */
export async function appliedProposals(organisationId: string, deviceId: string): Promise<Array<{ revision: number; id: string; title: string }>> {
  if (!isUuid(deviceId)) return [];
  const rows = await ChangeProposal.findAll({ where: { organisationId, deviceId, state: "applied" }, attributes: ["id", "title", "appliedRevisionNumber"] });
  return rows.flatMap((row) => (row.appliedRevisionNumber === null ? [] : [{ revision: row.appliedRevisionNumber, id: row.id, title: row.title }]));
}

/** Open proposals per device of the organisation, for the fleet table. One query. */
export async function openProposalCounts(organisationId: string): Promise<Map<string, number>> {
  const rows = await ChangeProposal.count({ where: { organisationId, state: { [Op.in]: [...OPEN_PROPOSAL_STATES] } }, group: ["deviceId"] });
  return new Map(rows.map((row) => [String(row.deviceId), Number(row.count)]));
}

export type ProposalView = {
  proposal: {
    id: string;
    title: string;
    reason: string;
    ticket: string;
    state: ProposalState;
    stateLabel: string;
    authorEmail: string;
    authorName: string | null;
    windowStart: string;
    windowEnd: string;
    workFrom: string;
    draftVersion: number;
    baseRevision: number;
    submittedAt: string | null;
    guardAcknowledgement: string;
    appliedRevision: number | null;
    appliedByEmail: string | null;
    /** The display name of whoever applied it, as it is now (null when their account is gone). */
    appliedByName: string | null;
    appliedAt: string | null;
    outsideWindowReason: string;
    createdAt: string;
  };
  timezone: string;
  liveRevision: number;
  /** What changed on the live device since the base (empty when up to date). */
  liveChanges: DocumentChange[];
  /** The draft against its base, element by element. */
  draftChanges: DocumentChange[];
  /** The draft as the engine reads it, or its problems when a shared object it used changed. */
  draftProblems: string[];
  draft: ModelDocument;
  edits: Array<{ position: number; message: string; by: string; at: string }>;
  comments: Array<{ id: string; ruleId: string | null; body: string; by: string; byName: string | null; at: string; draftVersion: number }>;
  reviews: Array<{ id: string; verdict: ReviewVerdict; reason: string; guardOverride: string; by: string; byName: string | null; role: Role; at: string; draftVersion: number; counts: boolean }>;
  approvals: number;
  required: number;
  gate: readonly GateReason[];
  insideWindow: boolean;
  /** What the viewer may do now (the service refuses the rest anyway). */
  can: { edit: boolean; submit: boolean; comment: boolean; review: boolean; approvePastGuard: boolean; withdraw: boolean; bringUpToDate: boolean; apply: boolean; applyOutsideWindow: boolean };
  viewerIsAuthor: boolean;
};

/** Everything the proposal page shows, for this viewer. */
export async function proposalView(ref: ProposalRef, viewer: { userId: string; role: Role }, environment: ProposalEnvironment = {}): Promise<ProposalView> {
  if (!isUuid(ref.proposalId)) throw noSuchProposal();
  const proposal = await ChangeProposal.findOne({ where: { id: ref.proposalId, organisationId: ref.organisationId, deviceId: ref.deviceId } });
  if (!proposal) throw noSuchProposal();
  const [live, base, library, edits, comments, reviews, required] = await Promise.all([
    currentOf(ref),
    revisionOf(ref, proposal.baseRevisionNumber),
    loadSharedLibrary(ref.organisationId),
    ProposalEdit.findAll({ where: { proposalId: proposal.id }, order: [["position", "ASC"]], attributes: ["position", "message", "authorEmail", "createdAt"] }),
    ProposalComment.findAll({ where: { proposalId: proposal.id }, order: [["createdAt", "ASC"]] }),
    ProposalReview.findAll({ where: { proposalId: proposal.id }, order: [["createdAt", "ASC"]] }),
    approvalsRequired(ref.organisationId),
  ]);
  const people = new Map((await User.findAll({ where: { id: [...new Set([proposal.authorUserId, proposal.appliedByUserId, ...comments.map((comment) => comment.authorUserId), ...reviews.map((review) => review.reviewerUserId)].filter((id): id is string => id !== null))] }, attributes: ["id", "name"] })).map((user) => [user.id, user.name]));
  const validated = validateDocument(proposal.draftDocument, library);
  const draftEffective = validated.ok ? validated.effective : null;
  const gate = draftEffective && isOpenState(proposal.state) ? gateOf(proposal, base, draftEffective, await expectationsOf(ref)) : [];
  const counted = new Set<string>();
  for (const review of reviews) if (review.verdict === "approved" && review.draftVersion === proposal.draftVersion) counted.add(review.reviewerUserId ?? review.reviewerEmail);
  const author = proposal.authorUserId !== null && proposal.authorUserId === viewer.userId;
  const open = isOpenState(proposal.state);
  const stale = live.revision.number !== proposal.baseRevisionNumber;
  const window = { start: proposal.windowStart, end: proposal.windowEnd };
  const admin = hasAtLeastRole(viewer.role, "admin");
  const state: ProposalState = proposal.state;
  return {
    proposal: {
      id: proposal.id,
      title: proposal.title,
      reason: proposal.reason,
      ticket: proposal.ticket,
      state: proposal.state,
      stateLabel: PROPOSAL_STATE_LABELS[state],
      authorEmail: proposal.authorEmail,
      authorName: proposal.authorUserId ? (people.get(proposal.authorUserId) ?? null) : null,
      windowStart: proposal.windowStart.toISOString(),
      windowEnd: proposal.windowEnd.toISOString(),
      workFrom: proposal.workFrom,
      draftVersion: proposal.draftVersion,
      baseRevision: proposal.baseRevisionNumber,
      submittedAt: proposal.submittedAt?.toISOString() ?? null,
      guardAcknowledgement: proposal.guardAcknowledgement,
      appliedRevision: proposal.appliedRevisionNumber,
      appliedByEmail: proposal.appliedByEmail,
      appliedByName: proposal.appliedByUserId ? (people.get(proposal.appliedByUserId) ?? null) : null,
      appliedAt: proposal.appliedAt?.toISOString() ?? null,
      outsideWindowReason: proposal.outsideWindowReason,
      createdAt: proposal.createdAt.toISOString(),
    },
    timezone: live.effective.device.timezone,
    liveRevision: live.revision.number,
    liveChanges: stale && open ? diffDocuments(base.effective, live.effective) : [],
    draftChanges: draftEffective ? diffDocuments(base.effective, draftEffective) : [],
    draftProblems: validated.ok ? [] : validated.errors.map((issue) => `${issue.path || "document"}: ${issue.message}`),
    draft: proposal.draftDocument,
    edits: edits.map((edit) => ({ position: edit.position, message: edit.message, by: edit.authorEmail, at: edit.createdAt.toISOString() })),
    comments: comments.map((comment) => ({ id: comment.id, ruleId: comment.ruleId, body: comment.body, by: comment.authorEmail, byName: comment.authorUserId ? (people.get(comment.authorUserId) ?? null) : null, at: comment.createdAt.toISOString(), draftVersion: comment.draftVersion })),
    reviews: reviews.map((review) => ({
      id: review.id,
      verdict: review.verdict,
      reason: review.reason,
      guardOverride: review.guardOverrideReason,
      by: review.reviewerEmail,
      byName: review.reviewerUserId ? (people.get(review.reviewerUserId) ?? null) : null,
      role: review.reviewerRole,
      at: review.createdAt.toISOString(),
      draftVersion: review.draftVersion,
      counts: review.verdict === "approved" && review.draftVersion === proposal.draftVersion,
    })),
    approvals: counted.size,
    required,
    gate,
    insideWindow: isInsideWindow(window, nowOf(environment)),
    can: {
      edit: author && nextState(proposal.state, "edit") !== null,
      submit: author && nextState(proposal.state, "submit") !== null,
      comment: hasAtLeastRole(viewer.role, "reviewer") && nextState(proposal.state, "comment") !== null,
      review: !author && hasAtLeastRole(viewer.role, "reviewer") && (proposal.state === "in_review" || proposal.state === "approved"),
      approvePastGuard: admin,
      withdraw: (author || admin) && nextState(proposal.state, "withdraw") !== null,
      bringUpToDate: author && stale && nextState(proposal.state, "bring-up-to-date") !== null,
      apply: hasAtLeastRole(viewer.role, "engineer") && proposal.state === "approved" && counted.size >= required && !stale,
      applyOutsideWindow: admin,
    },
    viewerIsAuthor: author,
  };
}

/** The devices and authors the changes page can filter by: those that have proposals. */
export async function proposalFilterChoices(organisationId: string): Promise<{ devices: Array<{ id: string; label: string }>; authors: Array<{ id: string; label: string }> }> {
  const rows = await ChangeProposal.findAll({ where: { organisationId }, attributes: ["deviceId", "authorUserId", "authorEmail"], include: [{ model: Device, as: "device", required: true, attributes: ["id", "name"] }] });
  const devices = new Map(rows.map((row) => [row.deviceId, row.device?.name ?? row.deviceId]));
  const authorIds = [...new Set(rows.map((row) => row.authorUserId).filter((id): id is string => id !== null))];
  const users = new Map((await User.findAll({ where: { id: authorIds }, attributes: ["id", "name", "email"] })).map((user) => [user.id, `${user.name} (${user.email})`]));
  const sorted = (entries: Iterable<[string, string]>) => [...entries].map(([id, label]) => ({ id, label })).sort((a, b) => a.label.localeCompare(b.label));
  return { devices: sorted(devices), authors: sorted(authorIds.map((id): [string, string] => [id, users.get(id) ?? id])) };
}
