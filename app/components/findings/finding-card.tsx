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

/** A finding as the device overview receives it from the loader. */
export type FindingCardData = FindingView;

/** What the dismissals action answers when it refuses (a redirect otherwise). */
type Refusal = { ok: false; key: string; errors: Record<string, string>; values: { reason: string } };

/** The trace page's address for a witness probe: the same query the trace form writes. */
export function tryItPath(devicePath: string, probe: NonNullable<FindingCardData["witness"]>["probe"]): string {
  return `${devicePath}/analysis?${new URLSearchParams({ from: probe.from, interface: probe.interface, service: probe.service, to: probe.to, at: probe.at })}`;
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

/** An active finding, with the dismiss form for engineers and above. */
export function ActiveFindingCard({ finding, devicePath, canDismiss }: { finding: FindingCardData; devicePath: string; canDismiss: boolean }) {
  const fetcher = useFetcher<Refusal>();
  const refusal = fetcher.data && fetcher.data.key === finding.key ? fetcher.data : null;
  const busy = fetcher.state !== "idle";
  return (
    <Card className="p-4">
      <div className="flex flex-wrap items-center gap-2">
        <SeverityBadge severity={finding.severity} />
        <h3 className="font-semibold">{finding.title}</h3>
        <code className="text-xs text-ink-faint">{finding.code}</code>
      </div>
      <p className="mt-2 text-sm text-ink-muted">{finding.detail}</p>
      <FindingFacts finding={finding} devicePath={devicePath} />
      {canDismiss ? (
        <details className="group mt-3 border-t border-line pt-3" open={refusal ? true : undefined}>
          <summary className="cursor-pointer list-none text-sm font-medium text-ink-muted hover:text-ink [&::-webkit-details-marker]:hidden">
            <span className="group-open:hidden">Dismiss…</span>
            <span className="hidden group-open:inline">Dismiss this finding</span>
          </summary>
          <fetcher.Form method="post" action={`${devicePath}/dismissals`} className="mt-3 space-y-3" noValidate>
            <input type="hidden" name="intent" value="dismiss" />
            <input type="hidden" name="key" value={finding.key} />
            <FormError message={refusal?.errors.form} />
            <DismissReasonField findingKey={finding.key} error={refusal?.errors.reason} defaultValue={refusal?.values.reason ?? ""} />
            <p className="text-xs text-ink-muted">
              Dismissing records an accepted risk on this and later revisions until someone restores it. It does not change the device; any change to the device follows your organisation's change
              policy.
            </p>
            <Button type="submit" variant="secondary" size="sm" disabled={busy}>
              {busy ? "Dismissing…" : "Dismiss with this reason"}
            </Button>
          </fetcher.Form>
        </details>
      ) : null}
    </Card>
  );
}

function DismissReasonField({ findingKey, error, defaultValue }: { findingKey: string; error?: string; defaultValue: string }) {
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

/** A dismissed finding: the reason, who and when, and Restore for engineers and above. */
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
        Dismissed by {dismissal.by || "unknown"} on <Time at={dismissal.at} timeZone={timeZone} /> (revision r{dismissal.revisionNumber}).
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
