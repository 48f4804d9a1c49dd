import type { ReactNode } from "react";
import { Form, Link, redirect, useNavigation, useSearchParams } from "react-router";
import type { Route } from "./+types/proposal";
import { serializeFlash } from "#server/auth/flash.server";
import { appOrigin } from "#server/config.server";
import { actorOf } from "#server/http/actor.server";
import { requireDevice } from "#server/http/device-access.server";
import { PROPOSAL_READ_ROLE } from "#server/auth/roles";
import { formValues, readForm, unknownIntent } from "#server/http/form.server";
import { parseStep, proposalIdOf, readProposalDetails, runProposalStep, STEP_ROLES, stepInputFromForm } from "#server/http/proposal-steps.server";
import { fieldErrorsOf, invalidForm } from "#server/http/form.server";
import { refusedForm, refusedPage } from "#server/http/refusals.server";
import { clientAddressOf } from "#server/http/request-context.server";
import { isProposalStep } from "#server/http/schemas";
import type { Conflict } from "#server/proposals/bring-up-to-date";
import { localText } from "#server/proposals/change-window";
import { proposalView, updateProposalDetails } from "#server/services/proposals.server";
import { proposalEffect } from "#server/services/proposal-effect.server";
import { EffectDetails } from "#app/components/proposals/effect-section";
import { spaceQueryOf } from "#server/analysis/effect-space-params";
import { isOpenState, WRITTEN_REASON_MIN } from "#server/proposals/state";
import { gateBlocks, gateSubject } from "#server/proposals/gate-words";
import { DocumentChanges } from "#app/components/device/document-changes";
import { TextAreaField } from "#app/components/device/editor-kit";
import { DEVICE_SECTIONS, SECTION_TITLES } from "#app/components/device/sections";
import { ProposalDetailsFields } from "#app/components/proposals/details-fields";
import { GateReasons, StateBadge, unlistedReasons, WindowText } from "#app/components/proposals/proposal-bits";
import { Button } from "#app/components/ui/button";
import { Badge, Card } from "#app/components/ui/card";
import { FormError, SelectField } from "#app/components/ui/field";
import { Time } from "#app/components/ui/time";
import { plural } from "#server/engine/format";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data?.view.proposal.title ?? "Proposal"} · Sallyport` }];

/** A whole number from the query, or undefined (the effect's sources page). */
function offsetOf(text: string | null): number | undefined {
  const value = Number(text ?? "");
  return text && Number.isInteger(value) && value >= 0 ? value : undefined;
}

export async function loader({ request, params, context }: Route.LoaderArgs) {
  const access = requireDevice(context, PROPOSAL_READ_ROLE);
  const proposalId = proposalIdOf(params.proposal);
  const url = new URL(request.url);
  const ref = { organisationId: access.organisation.id, deviceId: access.device.id, proposalId };
  try {
    const [view, effect] = await Promise.all([
      proposalView(ref, { userId: access.user.id, role: access.role }),
      proposalEffect(ref, { group: url.searchParams.get("group") ?? undefined, offset: offsetOf(url.searchParams.get("offset")) }, spaceQueryOf(url.searchParams)),
    ]);
    // The window as the details form shows it: wall-clock times in the device's zone.
    const localWindow = { start: localText(new Date(view.proposal.windowStart), view.timezone), end: localText(new Date(view.proposal.windowEnd), view.timezone) };
    return { view, effect, localWindow, base: `/o/${access.organisation.slug}/devices/${access.device.id}`, now: new Date().toISOString() };
  } catch (error) {
    return refusedPage(error);
  }
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const viewer = requireDevice(context);
  const proposalId = proposalIdOf(params.proposal);
  const values = formValues(await readForm(request));
  const intent = values.intent;
  // The page's own address, not the request's: a post from the hydrated page arrives at "….data".
  const here = `/o/${viewer.organisation.slug}/devices/${viewer.device.id}/proposals/${proposalId}`;
  if (intent === "details") {
    const access = requireDevice(context, "engineer");
    const read = readProposalDetails(values, access.effective.device.timezone);
    if (!read.ok) return invalidForm(read.errors, values);
    try {
      const { changed } = await updateProposalDetails({ organisationId: access.organisation.id, deviceId: access.device.id, proposalId }, Number(values.draftVersion), read.details, actorOf(access, clientAddressOf(context)));
      throw redirect(here, { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message: changed ? "Details saved; earlier approvals no longer count." : "Nothing changed." }) } });
    } catch (error) {
      return refusedForm(error, values);
    }
  }
  if (!isProposalStep(intent)) return unknownIntent(intent);
  const access = requireDevice(context, STEP_ROLES[intent]);
  const parsed = parseStep(intent, stepInputFromForm(intent, values));
  if (!parsed.ok) return invalidForm(fieldErrorsOf(parsed.error), values);
  try {
    const outcome = await runProposalStep(parsed.parsed, { organisationId: access.organisation.id, deviceId: access.device.id, proposalId }, actorOf(access, clientAddressOf(context)), {
      appOrigin: appOrigin(),
    });
    // Conflicts to settle: the page lists them with a choice each, nothing changed yet.
    if (outcome.facts.ok === false && Array.isArray(outcome.facts.conflicts)) {
      return { ok: false as const, errors: { form: outcome.message }, values, conflicts: outcome.facts.conflicts as Conflict[] };
    }
    throw redirect(here, { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message: outcome.message }) } });
  } catch (error) {
    return refusedForm(error, values);
  }
}

type ActionData = Route.ComponentProps["actionData"];

/** The errors and typed values of the form with this intent, after a refusal. */
function resultFor(actionData: ActionData, intent: string): { errors: Record<string, string>; values: Record<string, string>; reasons: ReadonlyArray<{ kind: string; words: string; details: readonly string[] }> } {
  if (!actionData || actionData.ok || actionData.values.intent !== intent) return { errors: {}, values: {}, reasons: [] };
  return { errors: actionData.errors, values: actionData.values, reasons: "reasons" in actionData ? actionData.reasons : [] };
}

function Section({ id, title, children, aside }: { id: string; title: string; children: ReactNode; aside?: ReactNode }) {
  return (
    <section aria-labelledby={`${id}-heading`}>
      <Card className="p-5">
        <div className="mb-3 flex flex-wrap items-baseline justify-between gap-2">
          <h2 id={`${id}-heading`} className="font-semibold">
            {title}
          </h2>
          {aside}
        </div>
        {children}
      </Card>
    </section>
  );
}

function Submitting({ children, variant = "primary" }: { children: ReactNode; variant?: "primary" | "secondary" | "danger" }) {
  const navigation = useNavigation();
  return (
    <Button type="submit" variant={variant} disabled={navigation.state === "submitting"}>
      {children}
    </Button>
  );
}

const capitalised = (text: string): string => text.charAt(0).toUpperCase() + text.slice(1);

const GATE_TITLE = "Lockout guard and expectations";

/**
 * A refused step's reasons beside its form: only those the gate's section does not list already
 * (the page says each reason once), else a pointer to that section.
 */
function StepReasons({ reasons, listed }: { reasons: ReturnType<typeof resultFor>["reasons"]; listed: readonly { words: string }[] }) {
  if (reasons.length === 0) return null;
  const others = unlistedReasons(reasons, listed);
  if (others.length > 0) return <GateReasons reasons={others} />;
  return (
    <p className="text-sm">
      Why:{" "}
      <a href="#guard-heading" className="text-harbour underline underline-offset-4">
        {GATE_TITLE}
      </a>
      , above.
    </p>
  );
}

const VERDICT_WORDS = { approved: "approved", changes_requested: "asked for changes", rejected: "rejected" } as const;

export default function ProposalPage({ loaderData, actionData }: Route.ComponentProps) {
  const { view, base, now, effect } = loaderData;
  const [searchParams] = useSearchParams();
  // "Comment" beside a rule of the effect opens the comment form about that rule.
  const commentRule = searchParams.get("comment") ?? "";
  const commentPath = (ruleId: string) => {
    const next = new URLSearchParams(searchParams);
    next.set("comment", ruleId);
    return `?${next.toString()}#comments-heading`;
  };
  const { proposal, can } = view;
  const draftBase = `${base}/proposals/${proposal.id}/draft`;
  const stale = view.liveChanges.length > 0;
  const conflicts = actionData && !actionData.ok && "conflicts" in actionData ? actionData.conflicts : null;
  const submit = resultFor(actionData, "submit");
  const approve = resultFor(actionData, "approve");
  const requestChanges = resultFor(actionData, "request-changes");
  const reject = resultFor(actionData, "reject");
  const comment = resultFor(actionData, "comment");
  const apply = resultFor(actionData, "apply");
  const withdraw = resultFor(actionData, "withdraw");
  const update = resultFor(actionData, "bring-up-to-date");
  const details = resultFor(actionData, "details");
  // The draft's rules, and the rules it removes (a comment may be about one of those too).
  const ruleIds = [...new Set([...view.draft.inboundRules.map((rule) => rule.id), ...(effect.ok ? effect.view.rules.removed.map((rule) => rule.id) : [])])];
  const blocked = view.gate.length > 0;
  const gate = gateSubject(view.gate);
  // The gate is worked out for an open proposal whose draft still validates (proposalView).
  const gateOpen = isOpenState(proposal.state) && view.draftProblems.length === 0;

  return (
    <div className="mx-auto max-w-4xl space-y-6">
      <nav aria-label="Breadcrumb" className="text-sm text-ink-muted">
        <Link to={`${base}/proposals`} className="underline-offset-4 hover:underline">
          Proposals
        </Link>{" "}
        / {proposal.title}
      </nav>

      <section aria-labelledby="proposal-heading">
        <Card className="p-5">
          <div className="flex flex-wrap items-start justify-between gap-3">
            <h2 id="proposal-heading" className="text-xl font-semibold break-words">
              {proposal.title}
            </h2>
            <StateBadge state={proposal.state} />
          </div>
          {proposal.reason ? <p className="mt-2 text-sm whitespace-pre-line">{proposal.reason}</p> : null}
          <p className="mt-2 text-sm">
            <Link to={`${base}/proposals/${proposal.id}/record`} className="text-harbour underline underline-offset-4">
              Change record
            </Link>{" "}
            <span className="text-ink-muted">(to print, or download as JSON)</span>
          </p>
          <dl className="mt-4 grid gap-x-6 gap-y-2 text-sm sm:grid-cols-[10rem_1fr]">
            <dt className="text-ink-muted">Change window</dt>
            <dd>
              <WindowText start={proposal.windowStart} end={proposal.windowEnd} timeZone={view.timezone} />
              {proposal.state === "approved" ? <span className="block text-xs text-ink-muted">{view.insideWindow ? "Open now: it can be applied." : "Not open now."}</span> : null}
            </dd>
            <dt className="text-ink-muted">Author</dt>
            <dd>{proposal.authorName ? `${proposal.authorName} (${proposal.authorEmail})` : proposal.authorEmail}</dd>
            <dt className="text-ink-muted">Drafted on</dt>
            <dd>
              revision r{proposal.baseRevision}
              {stale ? <span className="text-warning"> · the device is at r{view.liveRevision} now</span> : null} · draft version {proposal.draftVersion}
            </dd>
            {proposal.ticket ? (
              <>
                <dt className="text-ink-muted">Ticket</dt>
                <dd className="break-words">{proposal.ticket}</dd>
              </>
            ) : null}
            {proposal.workFrom ? (
              <>
                <dt className="text-ink-muted">Works from</dt>
                <dd className="font-mono">{proposal.workFrom}</dd>
              </>
            ) : null}
            <dt className="text-ink-muted">Approvals</dt>
            <dd>
              {view.approvals} of {view.required} needed for this draft version
            </dd>
            {proposal.appliedRevision ? (
              <>
                <dt className="text-ink-muted">Applied</dt>
                <dd>
                  as{" "}
                  <Link to={`${base}/history?to=${proposal.appliedRevision}`} className="text-harbour underline underline-offset-4">
                    r{proposal.appliedRevision}
                  </Link>{" "}
                  by {proposal.appliedByName ? `${proposal.appliedByName} (${proposal.appliedByEmail})` : proposal.appliedByEmail}, {proposal.appliedAt ? <Time at={proposal.appliedAt} timeZone={view.timezone} /> : null}
                  {proposal.outsideWindowReason ? <span className="block text-xs text-ink-muted">Outside the window: “{proposal.outsideWindowReason}”</span> : null}
                </dd>
              </>
            ) : null}
          </dl>
        </Card>
      </section>

      {stale ? (
        <section aria-labelledby="stale-heading">
          <Card className="border-warning/50 bg-warning-soft p-5">
            <h2 id="stale-heading" className="font-semibold text-warning">
              {`The device moved on: r${proposal.baseRevision} → r${view.liveRevision}`}
            </h2>
            <p className="mt-1 text-sm">This draft was made on r{proposal.baseRevision}. It cannot be applied until it is brought up to date: its edits are made again on the live revision, and what both sides changed is yours to settle.</p>
            <DocumentChanges changes={view.liveChanges} className="mt-3" />
            {can.bringUpToDate ? (
              <Form method="post" className="mt-4 space-y-3" aria-label="Bring the draft up to date">
                <input type="hidden" name="intent" value="bring-up-to-date" />
                <input type="hidden" name="draftVersion" value={proposal.draftVersion} />
                <FormError message={update.errors.form} />
                {conflicts ? (
                  <fieldset className="space-y-3">
                    <legend className="text-sm font-medium">Changed on both sides — choose which change to keep for each</legend>
                    {conflicts.map((conflict) => (
                      <div key={conflict.key} className="rounded-control border border-line bg-surface p-3 text-sm">
                        <p className="font-medium">{conflict.words}</p>
                        {conflict.live.length > 0 ? <p className="mt-1 text-ink-muted">Live: {conflict.live.join("; ")}</p> : null}
                        <p className="text-ink-muted">Draft: {conflict.draft.join("; ")}</p>
                        {conflict.problem ? <p className="mt-1 text-danger">{conflict.problem}</p> : null}
                        <div className="mt-2 flex flex-wrap gap-4">
                          <label className="inline-flex items-center gap-2">
                            <input type="radio" name={`choice:${conflict.key}`} value="draft" disabled={conflict.problem !== null} defaultChecked={update.values[`choice:${conflict.key}`] === "draft"} />
                            Keep the draft's change
                          </label>
                          <label className="inline-flex items-center gap-2">
                            <input type="radio" name={`choice:${conflict.key}`} value="live" defaultChecked={conflict.problem !== null || update.values[`choice:${conflict.key}`] === "live"} />
                            Take the live one
                          </label>
                        </div>
                      </div>
                    ))}
                  </fieldset>
                ) : null}
                <Submitting variant="secondary">{conflicts ? "Bring up to date with these choices" : "Bring the draft up to date"}</Submitting>
              </Form>
            ) : null}
          </Card>
        </section>
      ) : null}

      <Section
        id="effect"
        title="Effect"
        aside={<span className="text-sm text-ink-muted">{effect.basis.appliedRevision !== null ? `r${effect.basis.baseRevision} → r${effect.basis.appliedRevision}` : `r${effect.basis.baseRevision} → draft version ${effect.basis.draftVersion}`}</span>}
      >
        {effect.ok ? (
          <EffectDetails
            effect={effect.view}
            search={searchParams}
            commentPath={can.comment ? commentPath : null}
            spaces={effect.spaces}
            space={effect.space}
            // While the proposal is open its gate has a section of its own; the effect points to it.
            gate={gateOpen ? { anchor: "#guard-heading", title: GATE_TITLE, blocked } : null}
            workFrom={proposal.workFrom}
            trace={{
              base: { path: `${base}/analysis?proposal=${proposal.id}&side=base`, label: `Trace on base r${effect.basis.baseRevision}` },
              after: { path: `${base}/analysis?proposal=${proposal.id}&side=draft`, label: effect.basis.appliedRevision === null ? "Trace on draft" : `Trace on r${effect.basis.appliedRevision}` },
            }}
          />
        ) : (
          <p className="text-sm text-danger">The draft is no longer a valid model, so its effect cannot be worked out: edit the draft.</p>
        )}
      </Section>

      <Section id="guard" title={GATE_TITLE}>
        {view.draftProblems.length > 0 ? (
          <div className="text-sm text-danger">
            <p>The draft is no longer a valid model (a shared object it uses changed):</p>
            <ul className="mt-1 list-disc pl-5 font-mono text-xs">
              {view.draftProblems.map((problem) => (
                <li key={problem}>{problem}</li>
              ))}
            </ul>
          </div>
        ) : blocked ? (
          <>
            <p className="mb-3 text-sm">This change is blocked: it cannot be submitted as it is, and only an admin or owner may approve it, with a written reason.</p>
            <GateReasons reasons={view.gate} />
          </>
        ) : (
          <p className="text-sm text-ink-muted">{view.draftChanges.length > 0 ? `No operator network loses its login, ${proposal.workFrom.trim() ? `nor the address the author works from (${proposal.workFrom.trim()})` : "(no work-from address was declared)"}, and every expectation that held still holds.` : "Nothing to check yet: the draft changes nothing."}</p>
        )}
        {proposal.guardAcknowledgement ? <p className="mt-3 text-sm">The author acknowledged the guard: “{proposal.guardAcknowledgement}”</p> : null}
      </Section>

      <Section
        id="draft"
        title={`Draft (version ${proposal.draftVersion})`}
        aside={<span className="text-sm text-ink-muted">{view.draftChanges.length === 0 ? "no change yet" : plural(view.draftChanges.length, { one: "change", other: "changes" })} from r{proposal.baseRevision}</span>}
      >
        {can.edit ? (
          <nav aria-label="Edit the draft" className="mb-4">
            <p className="mb-2 text-sm">Edit the draft in the same sections as the device — nothing here is live:</p>
            <ul className="flex flex-wrap gap-1.5">
              {DEVICE_SECTIONS.map((section) => (
                <li key={section}>
                  <Link to={`${draftBase}/${section}`} className="inline-flex h-8 items-center rounded-control border border-line-strong px-2.5 text-sm text-harbour hover:bg-surface-sunken">
                    {SECTION_TITLES[section]}
                  </Link>
                </li>
              ))}
            </ul>
          </nav>
        ) : (
          <p className="mb-3 text-sm">
            <Link to={`${draftBase}/rules`} className="text-harbour underline underline-offset-4">
              Read the draft's inbound rules
            </Link>{" "}
            and its other sections.
          </p>
        )}
        {view.draftChanges.length > 0 ? <DocumentChanges changes={view.draftChanges} /> : null}
        {view.edits.length > 0 ? (
          <details className="mt-4 text-sm">
            <summary className="cursor-pointer text-ink-muted">Recorded edits ({view.edits.length}), made again in this order when the draft is brought up to date</summary>
            <ol className="mt-2 list-decimal space-y-1 pl-6">
              {view.edits.map((edit) => (
                <li key={edit.position}>{edit.message}</li>
              ))}
            </ol>
          </details>
        ) : null}
      </Section>

      <Section id="review" title="Review" aside={<span className="text-sm text-ink-muted">{view.approvals} of {view.required} approvals</span>}>
        {view.reviews.length > 0 ? (
          <ul className="mb-4 space-y-2 text-sm">
            {view.reviews.map((review) => (
              <li key={review.id} className="border-l-2 border-line-strong pl-3">
                <span className="font-medium">{review.byName ?? review.by}</span> ({review.role}) {VERDICT_WORDS[review.verdict]} version {review.draftVersion},{" "}
                <Time at={review.at} now={now} />
                {review.verdict === "approved" && !review.counts ? <Badge>no longer counts: the draft changed</Badge> : null}
                {review.reason ? <p className="text-ink-muted">“{review.reason}”</p> : null}
                {review.guardOverride ? <p className="text-ink-muted">Approved past what blocked it: “{review.guardOverride}”</p> : null}
              </li>
            ))}
          </ul>
        ) : (
          <p className="mb-4 text-sm text-ink-muted">No review yet.</p>
        )}

        {can.submit ? (
          <Form method="post" className="space-y-3 border-t border-line pt-4" aria-label="Submit for review">
            <input type="hidden" name="intent" value="submit" />
            <FormError message={submit.errors.form} />
            <StepReasons reasons={submit.reasons} listed={view.gate} />
            {blocked ? (
              <TextAreaField
                label={`Acknowledge ${gate.words} (only if the change is meant)`}
                name="acknowledgement"
                defaultValue={submit.values.acknowledgement}
                error={submit.errors.acknowledgement}
                hint={`At least ${WRITTEN_REASON_MIN} characters: why the blocked change is right. An admin or owner then decides.`}
              />
            ) : null}
            <p className="text-sm text-ink-muted">Submitting e-mails the reviewers. Someone other than you approves it.</p>
            <Submitting>Submit for review</Submitting>
          </Form>
        ) : null}

        {can.review ? (
          // Keyed by the number of reviews: after a verdict its forms start empty again.
          <div key={`review-${view.reviews.length}`} className="space-y-4 border-t border-line pt-4">
            <Form method="post" className="space-y-3" aria-label="Approve">
              <input type="hidden" name="intent" value="approve" />
              <FormError message={approve.errors.form} />
              <StepReasons reasons={approve.reasons} listed={view.gate} />
              <TextAreaField label="Approval note (optional)" name="reason" rows={2} defaultValue={approve.values.reason} error={approve.errors.reason} />
              {blocked && can.approvePastGuard ? (
                <TextAreaField
                  label={`Why approve past ${gate.words}`}
                  name="guardOverride"
                  rows={2}
                  defaultValue={approve.values.guardOverride}
                  error={approve.errors.guardOverride}
                  hint={`At least ${WRITTEN_REASON_MIN} characters; recorded with your approval.`}
                />
              ) : null}
              {blocked && !can.approvePastGuard ? <p className="text-sm text-ink-muted">{capitalised(gateBlocks(view.gate))} this change: only an admin or owner can approve it.</p> : <Submitting>Approve</Submitting>}
            </Form>
            <div className="grid gap-4 md:grid-cols-2">
              <Form method="post" className="space-y-3" aria-label="Request changes">
                <input type="hidden" name="intent" value="request-changes" />
                <FormError message={requestChanges.errors.form} />
                <TextAreaField label="What should change" name="reason" rows={2} defaultValue={requestChanges.values.reason} error={requestChanges.errors.reason} />
                <Submitting variant="secondary">Request changes</Submitting>
              </Form>
              <Form method="post" className="space-y-3" aria-label="Reject">
                <input type="hidden" name="intent" value="reject" />
                <FormError message={reject.errors.form} />
                <TextAreaField label="Why reject it" name="reason" rows={2} defaultValue={reject.values.reason} error={reject.errors.reason} />
                <Submitting variant="danger">Reject</Submitting>
              </Form>
            </div>
          </div>
        ) : view.viewerIsAuthor && (proposal.state === "in_review" || proposal.state === "approved") ? (
          <p className="border-t border-line pt-4 text-sm text-ink-muted">You wrote this proposal, so someone else reviews it.</p>
        ) : null}
      </Section>

      {proposal.state === "approved" || proposal.state === "applied" ? (
        <Section id="apply" title="Apply">
          {proposal.state === "applied" ? (
            <p className="text-sm">Applied as revision r{proposal.appliedRevision}. Confirm the change on the device itself, following your change policy and the device maker's documentation.</p>
          ) : can.apply ? (
            <Form method="post" className="space-y-3" aria-label="Apply the proposal">
              <input type="hidden" name="intent" value="apply" />
              <FormError message={apply.errors.form} />
              <StepReasons reasons={apply.reasons} listed={view.gate} />
              <p className="text-sm">Applying makes one new revision with this proposal's title as its message.</p>
              {/* The revision is the model, not the device: the same caution the issue asks for where work can lock people out. */}
              <p className="rounded-control border border-brass/40 bg-brass-soft px-3 py-2 text-sm" data-testid="apply-caution">
                This changes Sallyport's model of the device, not the device itself: make the same change on the device in the change window, keep a tested break-glass path open while you do, and follow your change policy and the device maker's documentation.
              </p>
              {!view.insideWindow && can.applyOutsideWindow ? (
                <TextAreaField
                  label="Why apply outside the change window"
                  name="outsideWindowReason"
                  rows={2}
                  defaultValue={apply.values.outsideWindowReason}
                  error={apply.errors.outsideWindowReason}
                  hint={`At least ${WRITTEN_REASON_MIN} characters; only admins and owners may.`}
                />
              ) : null}
              {!view.insideWindow && !can.applyOutsideWindow ? <p className="text-sm text-ink-muted">The change window is not open now; it can be applied inside it.</p> : null}
              <Submitting>Apply as a new revision</Submitting>
            </Form>
          ) : (
            <p className="text-sm text-ink-muted">{stale ? "Bring the draft up to date first." : "Engineers, admins and owners apply approved proposals."}</p>
          )}
        </Section>
      ) : null}

      <Section id="comments" title="Comments">
        {view.comments.length > 0 ? (
          <ul className="mb-4 space-y-3 text-sm">
            {view.comments.map((entry) => (
              <li key={entry.id} className="border-l-2 border-line-strong pl-3">
                <p className="text-xs text-ink-muted">
                  <span className="font-medium text-ink">{entry.byName ?? entry.by}</span>
                  {entry.ruleId ? (
                    <>
                      {" "}
                      on rule <code>{entry.ruleId}</code>
                    </>
                  ) : null}
                  , <Time at={entry.at} now={now} /> · version {entry.draftVersion}
                </p>
                <p className="mt-0.5 whitespace-pre-line break-words">{entry.body}</p>
              </li>
            ))}
          </ul>
        ) : (
          <p className="mb-4 text-sm text-ink-muted">No comments yet.</p>
        )}
        {can.comment ? (
          // Keyed by the rule asked about and the number of comments: after one is added the form starts empty, so it is not sent twice.
          <Form key={`comment-${commentRule}-${view.comments.length}`} method="post" className="space-y-3" aria-label="Comment">
            <input type="hidden" name="intent" value="comment" />
            <FormError message={comment.errors.form} />
            <SelectField label="About" name="ruleId" defaultValue={comment.values.ruleId ?? (ruleIds.includes(commentRule) ? commentRule : "")} error={comment.errors.ruleId}>
              <option value="">the whole proposal</option>
              {ruleIds.map((id) => (
                <option key={id} value={id}>
                  inbound rule {id}
                </option>
              ))}
            </SelectField>
            <TextAreaField label="Comment" name="body" rows={3} defaultValue={comment.values.body} error={comment.errors.body} />
            <Submitting variant="secondary">Add the comment</Submitting>
          </Form>
        ) : null}
      </Section>

      {can.edit || can.withdraw ? (
        <Section id="manage" title="Details">
          {can.edit ? (
            <details open={Object.keys(details.errors).length > 0} className="text-sm">
              <summary className="cursor-pointer">Change the title, reason, window or where you work from</summary>
              <Form method="post" className="mt-4 space-y-4" aria-label="Proposal details">
                <input type="hidden" name="intent" value="details" />
                <input type="hidden" name="draftVersion" value={proposal.draftVersion} />
                <FormError message={details.errors.form} />
                <ProposalDetailsFields
                  values={{
                    title: proposal.title,
                    reason: proposal.reason,
                    ticket: proposal.ticket,
                    windowStart: loaderData.localWindow.start,
                    windowEnd: loaderData.localWindow.end,
                    workFrom: proposal.workFrom,
                    ...details.values,
                  }}
                  errors={details.errors}
                  timezone={view.timezone}
                />
                <p className="text-xs text-ink-muted">Saving starts the approvals again: reviewers approve what they read.</p>
                <Submitting variant="secondary">Save the details</Submitting>
              </Form>
            </details>
          ) : null}
          {can.withdraw ? (
            <Form method="post" className="mt-4 border-t border-line pt-4" aria-label="Withdraw">
              <input type="hidden" name="intent" value="withdraw" />
              <FormError message={withdraw.errors.form} />
              <Submitting variant="secondary">Withdraw the proposal</Submitting>
            </Form>
          ) : null}
        </Section>
      ) : null}
    </div>
  );
}
