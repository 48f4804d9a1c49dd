import type { ReactNode } from "react";
import { Link } from "react-router";
import type { Route } from "./+types/proposal-record";
import { requireDevice } from "#server/http/device-access.server";
import { PROPOSAL_READ_ROLE } from "#server/auth/roles";
import { proposalIdOf } from "#server/http/proposal-steps.server";
import { refusedPage } from "#server/http/refusals.server";
import { changeRecord } from "#server/services/change-record.server";
import { formatCount, formatInstant, plural, pluralWord } from "#server/engine/format";
import { isOutcome } from "#server/engine/vocabulary";
import { OutcomeChip } from "#app/components/outcome";
import { SeverityBadge } from "#app/components/severity";
import { ExpectationStatusBadge } from "#app/components/proposals/expectation-status";
import { StateBadge, WindowText, workFromWords } from "#app/components/proposals/proposal-bits";
import { buttonClasses } from "#app/components/ui/button";
import { Badge, Card } from "#app/components/ui/card";

// A proposal's change record: the change, its effect and the expectations' results, and its
// review, on one page that prints cleanly (app.css: only the record, black on white, a page per
// part) and downloads as JSON (…/record.json, the same record).

export const meta: Route.MetaFunction = ({ data }) => [{ title: `Change record · ${data?.record.proposal.title ?? "Proposal"} · Sallyport` }];

export async function loader({ params, context }: Route.LoaderArgs) {
  const access = requireDevice(context, PROPOSAL_READ_ROLE);
  const proposalId = proposalIdOf(params.proposal);
  try {
    const record = await changeRecord({ organisationId: access.organisation.id, deviceId: access.device.id, proposalId }, access.device, { userId: access.user.id, role: access.role });
    const devicePath = `/o/${access.organisation.slug}/devices/${access.device.id}`;
    return { record, devicePath, proposalPath: `${devicePath}/proposals/${proposalId}` };
  } catch (error) {
    return refusedPage(error);
  }
}

const VERDICT_WORDS: Record<string, string> = { approved: "Approved", changes_requested: "Asked for changes", rejected: "Rejected" };

function Part({ id, title, children }: { id: string; title: string; children: ReactNode }) {
  return (
    <section aria-labelledby={`${id}-heading`} className="change-record-part">
      <Card className="p-5">
        <h3 id={`${id}-heading`} className="mb-3 text-lg font-semibold">
          {title}
        </h3>
        {children}
      </Card>
    </section>
  );
}

function Row({ label, children }: { label: string; children: ReactNode }) {
  return (
    <>
      <dt className="text-ink-muted">{label}</dt>
      <dd className="min-w-0 break-words">{children}</dd>
    </>
  );
}

const person = (who: { name: string | null; email: string }) => (who.name ? `${who.name} (${who.email})` : who.email);

export default function ChangeRecordPage({ loaderData }: Route.ComponentProps) {
  const { record, devicePath, proposalPath } = loaderData;
  const { proposal, device, window: changeWindow, applied, effect } = record;
  const zone = device.timezone;
  const approvals = record.reviews.filter((review) => review.verdict === "approved");
  return (
    <article data-change-record className="mx-auto max-w-4xl space-y-6" aria-labelledby="record-heading">
      <div className="flex flex-wrap items-center justify-between gap-3" data-print-hide>
        <nav aria-label="Breadcrumb" className="text-sm text-ink-muted">
          <Link to={`${devicePath}/proposals`} className="underline-offset-4 hover:underline">
            Proposals
          </Link>{" "}
          /{" "}
          <Link to={proposalPath} className="underline-offset-4 hover:underline">
            {proposal.title}
          </Link>{" "}
          / Change record
        </nav>
        <div className="flex flex-wrap gap-2">
          <button type="button" onClick={() => window.print()} className={buttonClasses("secondary", "sm")}>
            Print
          </button>
          <a href={`${proposalPath}/record.json`} download className={buttonClasses("secondary", "sm")}>
            Download JSON
          </a>
        </div>
      </div>

      <div>
        <p className="text-sm text-ink-muted">Change record · {device.name}</p>
        <h2 id="record-heading" className="flex flex-wrap items-center gap-3 text-xl font-semibold break-words">
          {proposal.title} <StateBadge state={proposal.state} />
        </h2>
      </div>

      <Part id="record-change" title="The change">
        <dl className="grid gap-x-6 gap-y-2 text-sm sm:grid-cols-[11rem_1fr]">
          <Row label="Device">
            <span className="font-mono">{device.name}</span> (time zone {zone})
          </Row>
          <Row label="Reason">{proposal.reason ? <span className="whitespace-pre-line">{proposal.reason}</span> : <span className="text-ink-muted">none given</span>}</Row>
          <Row label="Ticket">{proposal.ticket || <span className="text-ink-muted">none</span>}</Row>
          <Row label="Change window">
            <WindowText start={changeWindow.start} end={changeWindow.end} timeZone={zone} />
          </Row>
          <Row label="Author">{person(proposal.author)}</Row>
          <Row label="Proposed">{formatInstant(proposal.createdAt, zone)}</Row>
          <Row label="Submitted">{proposal.submittedAt ? formatInstant(proposal.submittedAt, zone) : <span className="text-ink-muted">not submitted</span>}</Row>
          <Row label="Drafted on">
            revision r{proposal.baseRevision}, draft version {proposal.draftVersion}
          </Row>
          {proposal.workFrom ? (
            <Row label="Author works from">
              <span className="font-mono">{proposal.workFrom}</span>
            </Row>
          ) : null}
          <Row label="Applied">
            {applied ? (
              <>
                as{" "}
                <Link to={`${devicePath}/history?to=${applied.revision}`} className="text-harbour underline underline-offset-4">
                  revision r{applied.revision}
                </Link>
                {applied.by ? ` by ${applied.by.name ? `${applied.by.name} (${applied.by.email})` : applied.by.email}` : ""}
                {applied.at ? `, ${formatInstant(applied.at, zone)}` : ""}
                {applied.outsideWindowReason ? <span className="block text-ink-muted">Outside the change window: “{applied.outsideWindowReason}”</span> : null}
              </>
            ) : (
              <span className="text-ink-muted">not applied ({proposal.stateLabel.toLowerCase()})</span>
            )}
          </Row>
          {proposal.blockAcknowledged ? <Row label="Block acknowledged">“{proposal.blockAcknowledged}”</Row> : null}
        </dl>
      </Part>

      <Part id="record-effect" title="Effect and expectations">
        {"problems" in effect ? (
          <p className="text-sm text-danger">The draft is no longer a valid model, so its effect cannot be worked out.</p>
        ) : (
          <div className="space-y-4 text-sm">
            <p className="text-xs text-ink-muted">{effect.comparedWith === "applied" ? `Revision r${effect.fromRevision} → r${applied?.revision ?? ""}, as applied.` : `Revision r${effect.fromRevision} → the draft (version ${proposal.draftVersion}).`}</p>
            <p className="text-base font-medium" data-testid="record-headline">
              {effect.headline}
            </p>
            {effect.changed ? (
              <p>
                More exposed: {formatCount(effect.totals.gains).text} {pluralWord(BigInt(effect.totals.gains), { one: "source", other: "sources" })}; less exposed: {formatCount(effect.totals.loses).text}{" "}
                {pluralWord(BigInt(effect.totals.loses), { one: "source", other: "sources" })}.
              </p>
            ) : null}
            {effect.groups.length > 0 ? (
              <ul className="space-y-1">
                {effect.groups.map((group) => (
                  <li key={`${group.before}>${group.after}`} className="flex flex-wrap items-center gap-1.5">
                    {isOutcome(group.before) ? <OutcomeChip outcome={group.before} /> : group.before}
                    <span aria-label="becomes">→</span>
                    {isOutcome(group.after) ? <OutcomeChip outcome={group.after} /> : group.after}
                    <span>{group.words}.</span>
                  </li>
                ))}
              </ul>
            ) : null}
            <div>
              <h4 className="font-semibold">Rule changes</h4>
              <ul className="mt-1 list-disc pl-5">
                {effect.rules.added.map((rule) => (
                  <li key={`a-${rule.id}`}>
                    added <code>{rule.id}</code> at position {rule.position}
                  </li>
                ))}
                {effect.rules.removed.map((rule) => (
                  <li key={`r-${rule.id}`}>
                    removed <code>{rule.id}</code> (was at position {rule.position})
                  </li>
                ))}
                {effect.rules.moved.map((rule) => (
                  <li key={`m-${rule.id}`}>
                    moved <code>{rule.id}</code>: position {rule.from} → {rule.to}
                  </li>
                ))}
                {effect.rules.changed.map((rule) => (
                  <li key={`c-${rule.id}`}>
                    changed <code>{rule.id}</code>: {rule.fields.join(", ")}
                  </li>
                ))}
                {effect.rules.becomeShadowed.map((id) => (
                  <li key={`s-${id}`}>
                    <code>{id}</code> becomes shadowed
                  </li>
                ))}
                {effect.rules.stopShadowed.map((id) => (
                  <li key={`us-${id}`}>
                    <code>{id}</code> is no longer shadowed
                  </li>
                ))}
                {effect.rules.becomeRedundant.map((id) => (
                  <li key={`d-${id}`}>
                    <code>{id}</code> becomes redundant
                  </li>
                ))}
                {effect.rules.stopRedundant.map((id) => (
                  <li key={`ud-${id}`}>
                    <code>{id}</code> is no longer redundant
                  </li>
                ))}
              </ul>
            </div>
            <div>
              <h4 className="font-semibold">Findings</h4>
              <p>
                {plural(effect.findings.new.length, { one: "new", other: "new" })}, {plural(effect.findings.resolved.length, { one: "resolved", other: "resolved" })}, {plural(effect.findings.unchanged, { one: "unchanged", other: "unchanged" })}.
              </p>
              <ul className="mt-1 space-y-1">
                {effect.findings.new.map((finding, index) => (
                  <li key={`n-${index}`} className="flex flex-wrap items-center gap-2">
                    <Badge tone="danger">new</Badge> <SeverityBadge severity={finding.severity} /> {finding.title}
                  </li>
                ))}
                {effect.findings.resolved.map((finding, index) => (
                  <li key={`r-${index}`} className="flex flex-wrap items-center gap-2">
                    <Badge tone="success">resolved</Badge> <SeverityBadge severity={finding.severity} /> {finding.title}
                  </li>
                ))}
              </ul>
            </div>
            <div>
              <h4 className="font-semibold">Lockout guard</h4>
              {effect.lockout.length + effect.workFrom.length === 0 ? (
                <p>No operator network loses its last login path; {workFromWords(proposal.workFrom)}.</p>
              ) : (
                <ul className="mt-1 list-disc pl-5">
                  {[...effect.lockout, ...effect.workFrom].map((words) => (
                    <li key={words}>{words}</li>
                  ))}
                </ul>
              )}
            </div>
            <div>
              <h4 className="font-semibold">Expectation results</h4>
              {record.expectations.length === 0 ? (
                <p>The device has no expectations recorded.</p>
              ) : (
                <ul className="mt-1 space-y-2" data-testid="record-expectations">
                  {record.expectations.map((entry) => (
                    <li key={entry.id}>
                      <p className="flex flex-wrap items-center gap-1.5">
                        <code>{entry.id}</code> before <ExpectationStatusBadge status={entry.before.status} /> after <ExpectationStatusBadge status={entry.after.status} />
                        {entry.broken ? <Badge tone="danger">broken by this change</Badge> : entry.fixed ? <Badge tone="success">fixed by this change</Badge> : null}
                      </p>
                      <p className="text-ink-muted">{entry.expectation}</p>
                      {entry.after.status !== "holds" ? <p className="text-ink-muted">After: {entry.after.words}</p> : null}
                    </li>
                  ))}
                </ul>
              )}
            </div>
            {effect.blocking.length > 0 ? (
              <div>
                <h4 className="font-semibold">What blocks it</h4>
                <ul className="mt-1 list-disc pl-5">
                  {effect.blocking.map((entry) => (
                    <li key={`${entry.kind}|${entry.subject}`}>{entry.words}</li>
                  ))}
                </ul>
              </div>
            ) : null}
          </div>
        )}
      </Part>

      <Part id="record-review" title="Review">
        <div className="space-y-4 text-sm">
          <p>
            {plural(approvals.filter((review) => review.countsNow).length, { one: "approval", other: "approvals" })} of the current draft version
            {approvals.length > approvals.filter((review) => review.countsNow).length ? ` (and ${plural(approvals.length - approvals.filter((review) => review.countsNow).length, { one: "earlier approval", other: "earlier approvals" })} of a version since changed)` : ""}.
          </p>
          {record.reviews.length > 0 ? (
            <ol className="space-y-2" data-testid="record-reviews">
              {record.reviews.map((review, index) => (
                <li key={index} className="border-l-2 border-line-strong pl-3">
                  <p>
                    <span className="font-medium">{VERDICT_WORDS[review.verdict] ?? review.verdict}</span> by {person(review.by)} ({review.role}), {formatInstant(review.at, zone)}, draft version {review.draftVersion}
                    {review.verdict === "approved" && !review.countsNow ? " — no longer counts: the draft changed after it" : ""}
                  </p>
                  {review.reason ? <p className="text-ink-muted">“{review.reason}”</p> : null}
                  {review.approvedPastBlock ? <p className="text-ink-muted">Approved past what blocked it: “{review.approvedPastBlock}”</p> : null}
                </li>
              ))}
            </ol>
          ) : (
            <p className="text-ink-muted">No review yet.</p>
          )}
          <div>
            <h4 className="font-semibold">Comments</h4>
            {record.comments.length > 0 ? (
              <ol className="mt-1 space-y-2">
                {record.comments.map((comment, index) => (
                  <li key={index} className="border-l-2 border-line-strong pl-3">
                    <p className="text-xs text-ink-muted">
                      {person(comment.by)}
                      {comment.ruleId ? (
                        <>
                          {" "}
                          on rule <code>{comment.ruleId}</code>
                        </>
                      ) : null}
                      , {formatInstant(comment.at, zone)}, draft version {comment.draftVersion}
                    </p>
                    <p className="whitespace-pre-line">{comment.body}</p>
                  </li>
                ))}
              </ol>
            ) : (
              <p className="text-ink-muted">No comments.</p>
            )}
          </div>
        </div>
      </Part>
    </article>
  );
}
