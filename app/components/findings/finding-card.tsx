import { Link, useFetcher } from "react-router";
import { ElementLink } from "#app/components/device/element-link";
import { SeverityBadge } from "#app/components/severity";
import { Button } from "#app/components/ui/button";
import { Card } from "#app/components/ui/card";
import { cx } from "#app/components/ui/cx";
import { FormError } from "#app/components/ui/field";
import { severityRank } from "#server/engine/vocabulary";
import { Time } from "#app/components/ui/time";
import type { FindingView } from "#server/services/findings.server";
import { witnessTracePath } from "#app/utils/trace-links";

/** A finding as the device overview receives it from the loader. */
export type FindingCardData = FindingView;

/** What the dismissals action answers when it refuses (a redirect otherwise). */
type Refusal = { ok: false; key: string; errors: Record<string, string>; values: { reason: string } };

/** The trace page's address for a witness probe: the same query the trace form writes. */
export function tryItPath(devicePath: string, probe: NonNullable<FindingCardData["witness"]>["probe"]): string {
  return witnessTracePath(devicePath, probe);
}

/** Elements linked to their editors, the witness to try, and the published source (or "common practice"). */
function FindingFacts({ finding, devicePath }: { finding: FindingCardData; devicePath: string }) {
  const witness = finding.witness;
  return (
    <>
      <div className="mt-2 flex flex-wrap items-center gap-x-3 gap-y-1 text-sm">
        {finding.elements.map((element) => (
          <ElementLink key={element} devicePath={devicePath} element={element} />
        ))}
        <span className="ml-auto text-xs text-ink-faint">Source: {finding.source}</span>
      </div>
      {witness ? (
        <p className="mt-2 text-sm">
          <Link to={tryItPath(devicePath, witness.probe)} className="font-medium text-harbour underline-offset-4 hover:underline">
            Try it: trace {witness.probe.service} from {witness.probe.from} on {witness.probe.interface}
          </Link>{" "}
          <span className="text-ink-muted">
            — {witness.shows}
            {witness.proof ? ` ${witness.proof}` : ""}
          </span>
        </p>
      ) : null}
    </>
  );
}

/** What the viewer may do with dismissals: ask for and withdraw them (engineer and above), answer someone else's (reviewer and above). */
export type DismissalPowers = { userId: string; canDismiss: boolean; canConfirm: boolean };

/** True when the viewer may confirm or decline this finding's dismissal: it awaits confirmation and someone else asked. */
export function mayAnswer(dismissal: FindingCardData["dismissal"], powers: DismissalPowers): boolean {
  return dismissal?.state === "awaiting-confirmation" && powers.canConfirm && dismissal.byUserId !== powers.userId;
}

/**
 * A dismissal that waits for a second person: the reason and who asked, Confirm and Decline for a
 * reviewer or above who did not ask, Withdraw for an engineer or above. `returnTo`: the page to
 * come back to after answering (the device overview when left out).
 */
export function AwaitingDismissal({ finding, devicePath, powers, timeZone, returnTo, compact = false }: { finding: FindingCardData; devicePath: string; powers: DismissalPowers; timeZone?: string; returnTo?: string; compact?: boolean }) {
  const fetcher = useFetcher<Refusal>();
  const refusal = fetcher.data && fetcher.data.key === finding.key ? fetcher.data : null;
  const dismissal = finding.dismissal;
  if (dismissal?.state !== "awaiting-confirmation") return null;
  const answer = mayAnswer(dismissal, powers);
  const own = dismissal.byUserId === powers.userId;
  const busy = fetcher.state !== "idle";
  return (
    <div className={cx("rounded-control border border-dashed border-brass/60 bg-brass-soft/40", compact ? "mt-1 p-2" : "mt-3 p-3")} data-testid="awaiting-dismissal">
      <p className="text-sm font-semibold">Dismissal awaiting confirmation</p>
      <blockquote className="mt-1 border-l-2 border-line-strong pl-3 text-sm">“{dismissal.reason}”</blockquote>
      <p className="mt-1 text-xs text-ink-muted">
        Asked for by {own ? "you" : dismissal.by || "unknown"} on <Time at={dismissal.at} timeZone={timeZone} /> (revision r{dismissal.revisionNumber}). The finding still counts until a second person (a reviewer or above, not the one who asked) confirms it.
      </p>
      {answer || powers.canDismiss ? (
        <fetcher.Form method="post" action={`${devicePath}/dismissals`} className="mt-2 space-y-2">
          <input type="hidden" name="key" value={finding.key} />
          {returnTo ? <input type="hidden" name="returnTo" value={returnTo} /> : null}
          <FormError message={refusal?.errors.form} />
          <div className="flex flex-wrap gap-2">
            {answer ? (
              <>
                <Button type="submit" name="intent" value="confirm" size="sm" disabled={busy}>
                  Confirm dismissal<span className="sr-only"> of {finding.title}</span>
                </Button>
                <Button type="submit" name="intent" value="decline" variant="secondary" size="sm" disabled={busy}>
                  Decline<span className="sr-only"> the dismissal of {finding.title}</span>
                </Button>
              </>
            ) : null}
            {powers.canDismiss ? (
              <Button type="submit" name="intent" value="restore" variant="ghost" size="sm" disabled={busy}>
                Withdraw the request<span className="sr-only"> to dismiss {finding.title}</span>
              </Button>
            ) : null}
          </div>
        </fetcher.Form>
      ) : null}
    </div>
  );
}

/**
 * An active finding (a dismissal awaiting confirmation leaves it active), with the dismiss form
 * for engineers and above — never for a lockout, which is fixed rather than dismissed.
 */
export function ActiveFindingCard({ finding, devicePath, powers, timeZone }: { finding: FindingCardData; devicePath: string; powers: DismissalPowers; timeZone?: string }) {
  const fetcher = useFetcher<Refusal>();
  const refusal = fetcher.data && fetcher.data.key === finding.key ? fetcher.data : null;
  const busy = fetcher.state !== "idle";
  const rule = finding.rule;
  const awaiting = finding.dismissal?.state === "awaiting-confirmation";
  return (
    <Card className="p-4">
      <div className="flex flex-wrap items-center gap-2">
        <SeverityBadge severity={finding.severity} />
        <h3 className="font-semibold">{finding.title}</h3>
        <code className="text-xs text-ink-faint">{finding.code}</code>
      </div>
      <p className="mt-2 text-sm text-ink-muted">{finding.detail}</p>
      <FindingFacts finding={finding} devicePath={devicePath} />
      {awaiting ? <AwaitingDismissal finding={finding} devicePath={devicePath} powers={powers} timeZone={timeZone} /> : null}
      {!awaiting && rule.kind === "refused" ? <p className="mt-3 border-t border-line pt-3 text-sm text-ink-muted">{rule.message}</p> : null}
      {!awaiting && rule.kind !== "refused" && powers.canDismiss ? (
        <details className="group mt-3 border-t border-line pt-3" open={refusal ? true : undefined}>
          <summary className="cursor-pointer list-none text-sm font-medium text-ink-muted hover:text-ink [&::-webkit-details-marker]:hidden">
            <span className="group-open:hidden">Dismiss…</span>
            <span className="hidden group-open:inline">Dismiss this finding</span>
          </summary>
          <fetcher.Form method="post" action={`${devicePath}/dismissals`} className="mt-3 space-y-3" noValidate>
            <input type="hidden" name="intent" value="dismiss" />
            <input type="hidden" name="key" value={finding.key} />
            <FormError message={refusal && refusal.errors.form !== refusal.errors.reason ? refusal.errors.form : undefined} />
            <DismissReasonField findingKey={finding.key} error={refusal?.errors.reason} defaultValue={refusal?.values.reason ?? ""} minLength={rule.minReason} />
            <p className="text-xs text-ink-muted">
              {rule.kind === "confirmed"
                ? `A ${finding.severity} finding needs a reason of at least ${rule.minReason} characters and a second person's confirmation (a reviewer or above, not you); until then it still counts. `
                : null}
              Dismissing records an accepted risk on this and later revisions until someone restores it. It does not change the device; any change to the device follows your organisation's change
              policy.
            </p>
            <Button type="submit" variant="secondary" size="sm" disabled={busy}>
              {busy ? "Sending…" : rule.kind === "confirmed" ? "Ask to dismiss with this reason" : "Dismiss with this reason"}
            </Button>
          </fetcher.Form>
        </details>
      ) : null}
    </Card>
  );
}

function DismissReasonField({ findingKey, error, defaultValue, minLength }: { findingKey: string; error?: string; defaultValue: string; minLength: number }) {
  const id = `reason-${findingKey.replace(/[^A-Za-z0-9_-]/g, "_")}`;
  return (
    <div className="space-y-1.5">
      <label htmlFor={id} className="block text-sm font-medium">
        Why is this accepted?
      </label>
      <textarea
        id={id}
        name="reason"
        rows={2}
        minLength={minLength}
        maxLength={500}
        defaultValue={defaultValue}
        aria-invalid={error ? true : undefined}
        aria-describedby={error ? `${id}-error` : undefined}
        placeholder="e.g. Customer contract requires console access from their office; reviewed with the customer."
        className={cx(
          "block w-full rounded-control border bg-surface px-3 py-2 text-sm text-ink shadow-card placeholder:text-ink-faint focus:ring-2 focus:ring-brass/60 focus:outline-none",
          error ? "border-danger" : "border-line-strong",
        )}
      />
      {error ? (
        <p id={`${id}-error`} role="alert" className="text-sm text-danger">
          {error}
        </p>
      ) : null}
    </div>
  );
}

/** A dismissed finding (the dismissal in effect): the reason, who and when, who confirmed it, and Restore for engineers and above. */
export function DismissedFindingCard({ finding, devicePath, canRestore, timeZone }: { finding: FindingCardData; devicePath: string; canRestore: boolean; timeZone: string }) {
  const fetcher = useFetcher<Refusal>();
  const refusal = fetcher.data && fetcher.data.key === finding.key ? fetcher.data : null;
  const dismissal = finding.dismissal;
  if (!dismissal) return null;
  const worse = severityRank(finding.severity) > severityRank(dismissal.severityThen);
  return (
    <Card className="border-dashed bg-surface-sunken p-4">
      <div className="flex flex-wrap items-center gap-2">
        <SeverityBadge severity={finding.severity} />
        <h3 className="font-semibold text-ink-muted">{finding.title}</h3>
        <code className="text-xs text-ink-faint">{finding.code}</code>
      </div>
      <FindingFacts finding={finding} devicePath={devicePath} />
      <blockquote className="mt-3 border-l-2 border-line-strong pl-3 text-sm">“{dismissal.reason}”</blockquote>
      <p className="mt-1 text-xs text-ink-muted">
        Dismissed by {dismissal.by || "unknown"} on <Time at={dismissal.at} timeZone={timeZone} /> (revision r{dismissal.revisionNumber})
        {dismissal.confirmedBy && dismissal.confirmedAt ? (
          <>
            ; confirmed by {dismissal.confirmedBy} on <Time at={dismissal.confirmedAt} timeZone={timeZone} />
          </>
        ) : null}
        .
      </p>
      {worse ? (
        <p className="mt-2 text-sm font-medium text-danger">
          Now {finding.severity}; it was {dismissal.severityThen} when dismissed. Check whether the reason still holds.
        </p>
      ) : null}
      {canRestore ? (
        <fetcher.Form method="post" action={`${devicePath}/dismissals`} className="mt-3 space-y-2">
          <input type="hidden" name="intent" value="restore" />
          <input type="hidden" name="key" value={finding.key} />
          <FormError message={refusal?.errors.form} />
          <Button type="submit" variant="ghost" size="sm" disabled={fetcher.state !== "idle"}>
            Restore to active findings
          </Button>
        </fetcher.Form>
      ) : null}
    </Card>
  );
}
