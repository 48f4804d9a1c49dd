// The effect of a proposal as its reviewer reads it: the headline, what blocks, who gains and
// who loses (grouped by before → after, paged CIDR lists, a witness probe each), the rule
// changes (each with a way to comment on that rule), the findings, the lockout guard and the
// author's work-from address, the expectations before and after, and the picture — per
// interface × service the most exposed outcome before and after, changed pairs marked. The
// server computes everything (server/analysis/effect-view.ts); this file only draws.
import type { ReactNode } from "react";
import { Link } from "react-router";
import type { EffectGroupView, EffectPicture, EffectView, EffectWitness, PictureCell } from "#server/analysis/effect-view";
import { formatCount, formatInstant, plural, pluralWord } from "#server/engine/format";
import { OUTCOMES, outcomeRank, type Outcome } from "#server/engine/vocabulary";
import { Count } from "../analysis/common";
import { ExposureTotals } from "../analysis/exposure-totals";
import { CellMark, cellStyle, OutcomeLegend } from "../analysis/outcome-marks";
import { OUTCOME_LABELS, OutcomeChip } from "../outcome";
import { SeverityBadge } from "../severity";
import { Badge } from "../ui/card";
import { cx } from "../ui/cx";
import { ScrollArea } from "../ui/scroll-area";
import { ExpectationStatusBadge } from "./expectation-status";
import { workFromWords } from "./proposal-bits";
import { EffectSpaceSection } from "./effect-space";
import type { EffectSpaceChoice, EffectSpaceView } from "#server/analysis/effect-space";
import { witnessQuery } from "#app/utils/trace-links";

function Heading({ id, children }: { id: string; children: ReactNode }) {
  return (
    <h3 id={id} className="text-xs font-semibold tracking-wide text-ink-muted uppercase">
      {children}
    </h3>
  );
}

/** The headline and the totals: what a reviewer reads first. */
export function EffectHeadline({ effect }: { effect: Pick<EffectView, "headline" | "totals" | "blocked" | "changed"> }) {
  return (
    <div className="space-y-2">
      <p className={cx("text-base font-medium", effect.blocked ? "text-danger" : undefined)} data-testid="effect-headline">
        {effect.headline}
      </p>
      {effect.changed ? (
        <div className="flex flex-wrap gap-2 text-sm">
          <ExposureTotals more={effect.totals.gains} less={effect.totals.loses} testIds={{ more: "effect-gains", less: "effect-loses" }} />
        </div>
      ) : null}
    </div>
  );
}

/**
 * Where an example probe is traced on each side of the change: the trace page's address for the
 * base revision and for the draft (`?proposal=<id>&side=base|draft`; the draft side of an
 * applied proposal is the revision it made), with their link words.
 */
export type TraceSides = { base: { path: string; label: string }; after: { path: string; label: string } };

/** "Trace on base r3 · Trace on draft": the example probe opened on the trace page against either side. */
function TraceLinks({ probe, sides }: { probe: EffectWitness; sides: TraceSides | null }) {
  if (!sides) return null;
  const query = witnessQuery(probe);
  const what = `${probe.from} to ${probe.interface} ${probe.service}`;
  const linkClass = "text-harbour underline underline-offset-4";
  return (
    <span className="inline-flex flex-wrap gap-x-2" data-testid="trace-links">
      <Link to={`${sides.base.path}&${query}`} className={linkClass} aria-label={`${sides.base.label}: ${what}`}>
        {sides.base.label}
      </Link>
      <Link to={`${sides.after.path}&${query}`} className={linkClass} aria-label={`${sides.after.label}: ${what}`}>
        {sides.after.label}
      </Link>
    </span>
  );
}

/** A sources page link: the group and offset in the URL, the rest of the query kept. */
function pageLink(search: URLSearchParams, key: string, offset: number): string {
  const next = new URLSearchParams(search);
  next.set("group", key);
  next.set("offset", String(offset));
  return `?${next.toString()}#effect-group-${groupAnchor(key)}`;
}

const groupAnchor = (key: string): string => key.replace(/[^a-z-]+/gi, "-");

function Group({ group, timezone, search, trace }: { group: EffectGroupView; timezone: string; search: URLSearchParams; trace: TraceSides | null }) {
  const { sources } = group;
  const end = sources.offset + sources.items.length;
  const anchor = groupAnchor(group.key);
  const linkClass = "rounded-control border border-line-strong bg-surface px-2 py-0.5 text-xs hover:bg-surface-sunken";
  return (
    <li id={`effect-group-${anchor}`} className="space-y-1.5 border-t border-line py-3 first:border-t-0" data-testid="effect-group" data-key={group.key} data-count={group.count}>
      <div className="flex flex-wrap items-center gap-1.5 text-sm">
        <OutcomeChip outcome={group.before} />
        <span aria-label="becomes">→</span>
        <OutcomeChip outcome={group.after} />
        <span className="font-medium">
          <Count value={group.count} /> {pluralWord(BigInt(group.count), { one: "address", other: "addresses" })}
        </span>
        <Badge tone={group.direction === "gains" ? "danger" : "neutral"}>{group.direction === "gains" ? "more exposed" : "less exposed"}</Badge>
      </div>
      <p className="text-sm">{group.words}.</p>
      <p className="text-xs text-ink-muted">
        Where:{" "}
        {group.places.map((place, index) => (
          <span key={`${place.interface}|${place.service}`}>
            {index > 0 ? "; " : ""}
            <span className="font-mono">
              {place.interface} {place.service}
            </span>{" "}
            to <span className="font-mono">{place.to.join(", ")}</span>
            {place.allWeek ? "" : " (some times of the week)"}
          </span>
        ))}
      </p>
      <div>
        <p className="text-xs text-ink-muted">
          Sources {sources.total > sources.items.length ? `${(sources.offset + 1).toLocaleString("en")}–${end.toLocaleString("en")} of ${plural(sources.total, { one: "block", other: "blocks" })}` : `(${plural(sources.total, { one: "block", other: "blocks" })})`}:
        </p>
        <p className="font-mono text-xs wrap-anywhere" data-testid="effect-group-sources">
          {sources.items.join(", ")}
        </p>
        {sources.total > sources.items.length ? (
          <nav aria-label={`Source pages of ${OUTCOME_LABELS[group.before]} to ${OUTCOME_LABELS[group.after]}`} className="mt-1 flex flex-wrap items-center gap-2">
            {sources.offset > 0 ? (
              <Link to={pageLink(search, group.key, Math.max(0, sources.offset - sources.limit))} preventScrollReset className={linkClass} rel="prev">
                Previous
              </Link>
            ) : null}
            {end < sources.total ? (
              <Link to={pageLink(search, group.key, end)} preventScrollReset className={linkClass} rel="next">
                Next
              </Link>
            ) : null}
          </nav>
        ) : null}
      </div>
      <p className="text-xs text-ink-muted" data-testid="effect-group-witness">
        For example <span className="font-mono">{group.witness.from}</span> → <span className="font-mono">{group.witness.interface} {group.witness.service}</span> (to <span className="font-mono">{group.witness.to}</span>),{" "}
        <time dateTime={group.witness.at} title={formatInstant(group.witness.at, timezone)}>
          {group.witness.when === "all week" ? "all week" : `${group.witness.when} (device time)`}
        </time>
        : {OUTCOME_LABELS[group.before]} before, {OUTCOME_LABELS[group.after]} after. <TraceLinks probe={group.witness} sides={trace} />
      </p>
    </li>
  );
}

/** A rule id, and a link that opens the comment form about it. */
function RuleRef({ id, commentPath }: { id: string; commentPath: ((ruleId: string) => string) | null }) {
  return (
    <>
      <code className="font-mono">{id}</code>
      {commentPath ? (
        <>
          {" "}
          <Link to={commentPath(id)} preventScrollReset className="text-xs text-harbour underline underline-offset-4" aria-label={`Comment on rule ${id}`}>
            comment
          </Link>
        </>
      ) : null}
    </>
  );
}

function RuleChanges({ rules, commentPath }: { rules: EffectView["rules"]; commentPath: ((ruleId: string) => string) | null }) {
  const lines: Array<{ key: string; node: ReactNode }> = [
    ...rules.added.map((rule) => ({ key: `added-${rule.id}`, node: <>Added <RuleRef id={rule.id} commentPath={commentPath} /> at position {rule.position}</> })),
    ...rules.removed.map((rule) => ({ key: `removed-${rule.id}`, node: <>Removed <RuleRef id={rule.id} commentPath={commentPath} /> (was at position {rule.position})</> })),
    ...rules.moved.map((rule) => ({
      key: `moved-${rule.id}`,
      node: (
        <>
          Moved <RuleRef id={rule.id} commentPath={commentPath} />: position {rule.from} → {rule.to}
          {rule.below ? <span className="text-ink-muted">, now below {rule.below}</span> : <span className="text-ink-muted">, now first</span>}
          {rule.swappedWith ? <span className="text-ink-muted"> (swapped with {rule.swappedWith})</span> : null}
        </>
      ),
    })),
    ...rules.changed.map((rule) => ({ key: `changed-${rule.id}`, node: <>Changed <RuleRef id={rule.id} commentPath={commentPath} />: {rule.fields.join(", ")}</> })),
    ...rules.shadowed.becomes.map((id) => ({ key: `shadowed-${id}`, node: <>Becomes shadowed (never the first match): <RuleRef id={id} commentPath={commentPath} /></> })),
    ...rules.shadowed.stops.map((id) => ({ key: `unshadowed-${id}`, node: <>No longer shadowed: <RuleRef id={id} commentPath={commentPath} /></> })),
    ...rules.redundant.becomes.map((id) => ({ key: `redundant-${id}`, node: <>Becomes redundant (removing it would change nothing): <RuleRef id={id} commentPath={commentPath} /></> })),
    ...rules.redundant.stops.map((id) => ({ key: `unredundant-${id}`, node: <>No longer redundant: <RuleRef id={id} commentPath={commentPath} /></> })),
  ];
  if (lines.length === 0) return <p className="mt-1 text-sm text-ink-muted">No inbound rule changes.</p>;
  return (
    <ul className="mt-1 space-y-1 text-sm" data-testid="effect-rules">
      {lines.map((line) => (
        <li key={line.key}>{line.node}</li>
      ))}
    </ul>
  );
}

/** One square of the picture: the outcome's fill and letter (no outcome told by colour alone). */
function Square({ outcome }: { outcome: Outcome | null }) {
  const rank = outcome ? outcomeRank(outcome) : -1;
  return (
    <span aria-hidden="true" className="inline-flex size-5 items-center justify-center rounded-[3px] border border-line-strong text-[10px]" style={cellStyle(rank, false)}>
      <CellMark rank={rank} mixed={false} />
    </span>
  );
}

function cellWords(cell: PictureCell): string {
  const name = (outcome: Outcome | null) => (outcome ? OUTCOME_LABELS[outcome] : "not on this revision");
  return `${cell.interface} ${cell.service}: before ${name(cell.before)}, after ${name(cell.after)}${cell.changed ? `; changes for some sources (${formatCount(cell.gains).text} more exposed, ${formatCount(cell.loses).text} less)` : "; no source's outcome changes"}`;
}

/** Services that show something: a non-silent outcome on either side, or a change. */
function shownServices(picture: EffectPicture): string[] {
  return picture.services.filter((service) => picture.cells.some((cell) => cell.service === service && (cell.changed || (cell.before ?? "silent") !== "silent" || (cell.after ?? "silent") !== "silent")));
}

export function EffectPictureView({ picture, trace = null }: { picture: EffectPicture; trace?: TraceSides | null }) {
  const services = shownServices(picture);
  const interfaces = picture.interfaces.filter((name) => picture.cells.some((cell) => cell.interface === name));
  const cellOf = new Map(picture.cells.map((cell) => [`${cell.interface}|${cell.service}`, cell]));
  const changed = picture.cells.filter((cell) => cell.changed);
  const hidden = picture.services.length - services.length;
  const present = OUTCOMES.filter((outcome) => picture.cells.some((cell) => cell.before === outcome || cell.after === outcome));
  if (services.length === 0) return <p className="mt-1 text-sm text-ink-muted">No interface answers any source, before or after.</p>;
  return (
    <div className="mt-2 space-y-3">
      <p id="effect-picture-about" className="text-xs text-ink-muted">
        The most exposed outcome any source gets, at any of the interface's addresses and any time of the week: before (left square) and after (right). Outlined pairs change for some sources.
      </p>
      <ScrollArea className="max-w-full rounded-control border border-line">
        <table className="border-collapse text-xs" data-testid="effect-picture" aria-describedby="effect-picture-about">
          <caption className="sr-only">Before and after, per interface and service</caption>
          <thead>
            <tr>
              <th scope="col" className="border-b border-line px-2 py-1 text-left font-semibold">
                Interface
              </th>
              {services.map((service) => (
                <th key={service} scope="col" className="border-b border-line px-2 py-1 text-center font-mono font-normal">
                  {service}
                </th>
              ))}
            </tr>
          </thead>
          <tbody>
            {interfaces.map((name) => (
              <tr key={name}>
                <th scope="row" className="border-b border-line px-2 py-1 text-left font-mono font-normal">
                  {name}
                </th>
                {services.map((service) => {
                  const cell = cellOf.get(`${name}|${service}`);
                  if (!cell) return <td key={service} className="border-b border-line px-2 py-1" />;
                  return (
                    <td key={service} className="border-b border-line px-2 py-1 text-center" data-changed={cell.changed ? "true" : undefined} data-before={cell.before ?? ""} data-after={cell.after ?? ""}>
                      <span className={cx("inline-flex items-center gap-0.5 rounded-[4px] p-0.5", cell.changed ? "outline-2 outline-brass" : undefined)} title={cellWords(cell)}>
                        <Square outcome={cell.before} />
                        <Square outcome={cell.after} />
                        <span className="sr-only">{cellWords(cell)}</span>
                      </span>
                    </td>
                  );
                })}
              </tr>
            ))}
          </tbody>
        </table>
      </ScrollArea>
      <OutcomeLegend
        outcomes={present}
        extra={
          <li className="flex items-center gap-1.5">
            <span aria-hidden="true" className="inline-block size-4 rounded-[3px] outline-2 outline-brass" />
            changes for some sources
          </li>
        }
      />
      {hidden > 0 ? <p className="text-xs text-ink-muted">{plural(hidden, { one: "service that no source reaches", other: "services that no source reaches" })}, before or after, not shown.</p> : null}
      {changed.length > 0 ? (
        <ul className="space-y-1 text-sm" aria-label="Changed interfaces and services">
          {changed.map((cell) => (
            <li key={`${cell.interface}|${cell.service}`} className="flex flex-wrap items-center gap-1.5">
              <span className="font-mono">
                {cell.interface} {cell.service}
              </span>
              {cell.before ? <OutcomeChip outcome={cell.before} /> : <Badge>not there</Badge>}
              <span aria-label="becomes">→</span>
              {cell.after ? <OutcomeChip outcome={cell.after} /> : <Badge>not there</Badge>}
              <span className="text-xs text-ink-muted">
                {formatCount(cell.gains).text} more exposed, {formatCount(cell.loses).text} less
              </span>
              {cell.witness ? (
                <span className="text-xs">
                  <TraceLinks probe={cell.witness} sides={trace} />
                </span>
              ) : null}
            </li>
          ))}
        </ul>
      ) : null}
    </div>
  );
}

/**
 * The whole effect. `commentPath` (null when the viewer may not comment) gives the address
 * that opens the comment form about one rule; `search` is the page's query (for source pages
 * and the address-space picture); `spaces` and `space` are the picture's choices and the view
 * asked for. `gate`, on a page that lists what blocks the change in a section of its own (the
 * proposal page's gate), names that section: the effect then points to it instead of saying the
 * reasons again, so each reason is read once. `trace` gives every example probe links that open
 * it on the trace page against the base and the draft.
 */
export function EffectDetails({
  effect,
  search,
  commentPath,
  spaces = [],
  space = null,
  gate = null,
  trace = null,
  workFrom,
}: {
  effect: EffectView;
  search: URLSearchParams;
  commentPath: ((ruleId: string) => string) | null;
  spaces?: readonly EffectSpaceChoice[];
  space?: EffectSpaceView | null;
  gate?: { anchor: string; title: string; blocked: boolean } | null;
  trace?: TraceSides | null;
  /** The work-from address the author declared ("" when none), named when it keeps its logins. */
  workFrom: string;
}) {
  // Operator networks that lose every login path are the gate's first reasons; shown there, not here.
  const lockout = gate ? [] : effect.lockout;
  return (
    <div className="space-y-5" data-testid="proposal-effect">
      <EffectHeadline effect={effect} />

      {gate ? (
        gate.blocked ? (
          <p className="rounded-control border border-danger/40 bg-danger-soft px-3 py-2 text-sm text-danger" data-testid="effect-blocking">
            Blocked: why, and who may still approve it, is under{" "}
            <a href={gate.anchor} className="font-medium underline underline-offset-4">
              {gate.title}
            </a>
            .
          </p>
        ) : null
      ) : effect.blocking.length > 0 ? (
        <div role="alert" className="rounded-control border border-danger/40 bg-danger-soft px-3 py-2 text-sm text-danger" data-testid="effect-blocking">
          <p className="font-semibold">Blocked: only an admin or owner may approve it, with a written reason</p>
          <ul className="mt-1 list-disc pl-5">
            {effect.blocking.map((entry) => (
              <li key={`${entry.kind}|${entry.subject}`}>{entry.words}</li>
            ))}
          </ul>
        </div>
      ) : null}

      {effect.groups.length > 0 ? (
        <section aria-labelledby="effect-groups-heading">
          <Heading id="effect-groups-heading">Who gains and who loses</Heading>
          <ul className="mt-1">
            {effect.groups.map((group) => (
              <Group key={group.key} group={group} timezone={effect.timezone} search={search} trace={trace} />
            ))}
          </ul>
        </section>
      ) : null}

      <section aria-labelledby="effect-rules-heading">
        <Heading id="effect-rules-heading">Rule changes</Heading>
        <RuleChanges rules={effect.rules} commentPath={commentPath} />
      </section>

      <section aria-labelledby="effect-findings-heading">
        <Heading id="effect-findings-heading">Findings</Heading>
        <p className="mt-1 text-sm" data-testid="effect-findings" data-new={effect.findings.new.length} data-resolved={effect.findings.resolved.length} data-unchanged={effect.findings.unchanged}>
          {plural(effect.findings.new.length, { one: "new", other: "new" })}, {plural(effect.findings.resolved.length, { one: "resolved", other: "resolved" })}, {plural(effect.findings.unchanged, { one: "unchanged", other: "unchanged" })}.
        </p>
        {effect.findings.new.length + effect.findings.resolved.length > 0 ? (
          <ul className="mt-1 space-y-1 text-sm">
            {effect.findings.new.map((finding) => (
              <li key={`new-${finding.key}`} className="flex flex-wrap items-center gap-2">
                <Badge tone="danger">new</Badge>
                <SeverityBadge severity={finding.severity} />
                <span>{finding.title}</span>
              </li>
            ))}
            {effect.findings.resolved.map((finding) => (
              <li key={`resolved-${finding.key}`} className="flex flex-wrap items-center gap-2">
                <Badge tone="success">resolved</Badge>
                <SeverityBadge severity={finding.severity} />
                <span>{finding.title}</span>
              </li>
            ))}
          </ul>
        ) : null}
      </section>

      <section aria-labelledby="effect-guard-heading">
        <Heading id="effect-guard-heading">Lockout guard</Heading>
        {lockout.length + effect.workFrom.length === 0 ? (
          <p className="mt-1 text-sm text-ink-muted">
            {gate && effect.lockout.length > 0 ? (
              <>
                Operator networks that lose every login path are listed under <a href={gate.anchor} className="text-harbour underline underline-offset-4">{gate.title}</a>; {workFromWords(workFrom)}.
              </>
            ) : (
              `No operator network loses its last login path; ${workFromWords(workFrom)}.`
            )}
          </p>
        ) : (
          <ul className="mt-1 space-y-2 text-sm" data-testid="effect-lockout">
            {lockout.map((entry) => (
              <li key={entry.operatorNetwork} className="border-l-2 border-danger pl-3">
                <p>{entry.words}</p>
                <p className="font-mono text-xs wrap-anywhere text-ink-muted">sources: {entry.sources.join(", ")}</p>
                {entry.services.length > 0 ? <p className="font-mono text-xs text-ink-muted">services: {entry.services.map((service) => `${service.interface} ${service.service}`).join(", ")}</p> : null}
              </li>
            ))}
            {effect.workFrom.map((entry) => (
              <li key={entry.sources.join(" ")} className="border-l-2 border-danger pl-3">
                <p>{entry.words}</p>
                <p className="font-mono text-xs wrap-anywhere text-ink-muted">sources: {entry.sources.join(", ")}</p>
                <p className="font-mono text-xs text-ink-muted">services: {entry.services.map((service) => `${service.interface} ${service.service}`).join(", ")}</p>
              </li>
            ))}
          </ul>
        )}
      </section>

      <section aria-labelledby="effect-expectations-heading">
        <Heading id="effect-expectations-heading">Expectations</Heading>
        {effect.expectations.length === 0 ? (
          <p className="mt-1 text-sm text-ink-muted">This device has no expectations recorded.</p>
        ) : (
          <ul className="mt-1 space-y-2 text-sm" data-testid="effect-expectations">
            {effect.expectations.map((entry) => (
              <li key={entry.id} className={cx("border-l-2 pl-3", entry.broken ? "border-danger" : "border-line-strong")} data-id={entry.id} data-before={entry.before.status} data-after={entry.after.status}>
                <p className="flex flex-wrap items-center gap-1.5">
                  <code className="font-mono">{entry.id}</code>
                  <ExpectationStatusBadge status={entry.before.status} />
                  <span aria-label="becomes">→</span>
                  <ExpectationStatusBadge status={entry.after.status} />
                  {entry.broken ? <Badge tone="danger">broken by this change</Badge> : entry.fixed ? <Badge tone="success">fixed by this change</Badge> : null}
                </p>
                <p className="text-ink-muted">{entry.expectation}</p>
                {entry.broken && gate ? (
                  <p className="text-danger">
                    After: see <a href={gate.anchor} className="underline underline-offset-4">{gate.title}</a>.
                  </p>
                ) : entry.broken || entry.after.status !== "holds" ? (
                  <p className={entry.broken ? "text-danger" : "text-ink-muted"}>After: {entry.after.words}</p>
                ) : null}
              </li>
            ))}
          </ul>
        )}
      </section>

      <section aria-labelledby="effect-picture-heading">
        <Heading id="effect-picture-heading">Before and after, per interface and service</Heading>
        <EffectPictureView picture={effect.picture} trace={trace} />
      </section>

      <EffectSpaceSection spaces={spaces} space={space} search={search} />
    </div>
  );
}
