import { useEffect } from "react";
import { Form, Link, useFetcher } from "react-router";
import type { loader as expectationsLoader } from "./expectations";
import type { loader as fieldChecksLoader } from "./field-checks";
import { AgreementRate } from "#app/components/field-checks";
import type { Route } from "./+types/overview";
import { hasAtLeastRole } from "#server/auth/roles";
import { CONFIRM_ROLE, DISMISS_ROLE } from "#server/services/dismissal-rules";
import { requireDevice } from "#server/http/device-access.server";
import { fleetSummaryOf } from "#server/services/devices.server";
import { deviceFindings } from "#server/services/findings.server";
import { ActiveFindingCard, DismissedFindingCard } from "#app/components/findings/finding-card";
import { countBySeverity } from "#server/engine/finding-keys";
import { OutcomeChip } from "#app/components/outcome";
import { isOutcome } from "#server/engine/vocabulary";
import { SeverityCounts } from "#app/components/severity";
import { Button } from "#app/components/ui/button";
import { Card } from "#app/components/ui/card";
import { EmptyState } from "#app/components/ui/empty-state";
import { Time } from "#app/components/ui/time";
import { formatDay, formatNumber, plural } from "#server/engine/format";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data?.name ?? "Device"} · Sallyport` }];

export async function loader({ context }: Route.LoaderArgs) {
  const access = requireDevice(context);
  // The engine lists the most severe first; dismissed ones (in effect) move to their own section,
  // those whose dismissal awaits confirmation stay among the active ones.
  const [{ findings: list, unmatched }, analysed] = await Promise.all([deviceFindings(access), fleetSummaryOf(access)]);
  const active = list.filter((finding) => finding.dismissal?.state !== "in-effect");
  return {
    name: access.device.name,
    devicePath: `/o/${access.organisation.slug}/devices/${access.device.id}`,
    summary: { counts: access.revision.summary.counts, worstOutsideOutcome: analysed.worstOutsideOutcome },
    settings: access.effective.device,
    revision: { number: access.revision.number, message: access.revision.message, author: access.revision.authorEmail, at: access.revision.createdAt.toISOString() },
    active,
    dismissed: list.filter((finding) => finding.dismissal?.state === "in-effect"),
    unmatched,
    // The counts show what still needs attention: dismissed findings are accepted risks.
    activeCounts: countBySeverity(active),
    awaitingCount: active.filter((finding) => finding.dismissal).length,
    powers: { userId: access.user.id, canDismiss: hasAtLeastRole(access.role, DISMISS_ROLE), canConfirm: hasAtLeastRole(access.role, CONFIRM_ROLE) },
  };
}

/**
 * One line for the device's expectations on the current revision: how many fail, or that they
 * hold. Read from the Expectations tab's loader once the page is interactive, so the overview's
 * own request stays within its query budget (tests/integration/query-budget.test.ts).
 */
function ExpectationsLine({ devicePath }: { devicePath: string }) {
  const fetcher = useFetcher<typeof expectationsLoader>();
  const { load, state, data } = fetcher;
  useEffect(() => {
    if (state === "idle" && data === undefined) void load(`${devicePath}/expectations`);
  }, [devicePath, load, state, data]);
  if (data === undefined || data.items.length === 0) return null;
  const count = data.items.length;
  const failing = data.items.filter((item) => item.result.status === "fails").length;
  const unknown = data.items.filter((item) => item.result.status === "unknown").length;
  const of = plural(count, { one: "expectation", other: "expectations" });
  const holding = count - unknown;
  const line =
    failing > 0
      ? `${formatNumber(failing)} of ${of} ${failing === 1 ? "fails" : "fail"} on r${data.revision}`
      : holding === 0
        ? `No expectation can be checked on r${data.revision}`
        : holding === count
          ? count === 1
            ? `The expectation holds on r${data.revision}`
            : `All ${of} hold on r${data.revision}`
          : `${formatNumber(holding)} of ${of} hold on r${data.revision}`;
  return (
    <p className="text-sm" role="status">
      <Link to={`${devicePath}/expectations`} className={`font-medium underline-offset-4 hover:underline ${failing > 0 ? "text-danger" : "text-harbour"}`}>
        {line}
      </Link>
      {unknown > 0 && failing > 0 ? <span className="text-ink-muted"> · {formatNumber(unknown)} cannot be checked</span> : null}
    </p>
  );
}

/**
 * The device's last field check and its agreement rate, read from the Field checks tab's loader
 * once the page is interactive (the overview's own request stays within its query budget, as
 * ExpectationsLine's does).
 */
function FieldCheckLine({ devicePath, timeZone }: { devicePath: string; timeZone: string }) {
  const fetcher = useFetcher<typeof fieldChecksLoader>();
  const { load, state, data } = fetcher;
  useEffect(() => {
    if (state === "idle" && data === undefined) void load(`${devicePath}/field-checks`);
  }, [devicePath, load, state, data]);
  if (data === undefined) return null;
  const last = data.checks[0];
  if (last === undefined) {
    return (
      <p className="text-sm text-ink-muted" role="status">
        No field check yet:{" "}
        <Link to={`${devicePath}/field-checks`} className="font-medium text-harbour underline-offset-4 hover:underline">
          compare what the device really did with its model
        </Link>
        .
      </p>
    );
  }
  return (
    <p className="text-sm" role="status">
      <Link to={`${devicePath}/field-checks/${last.id}`} className="font-medium text-harbour underline-offset-4 hover:underline">
        Last field check
      </Link>{" "}
      <Time at={last.createdAt} timeZone={timeZone} now={data.now} />: <AgreementRate counts={last.counts} /> agree
      {last.counts.differences > 0 ? <span className="text-danger"> · {plural(last.counts.differences, { one: "difference", other: "differences" })}</span> : null}
      {last.counts.invalid > 0 ? <span className="text-ink-muted"> · {formatNumber(last.counts.invalid)} not checked</span> : null}
    </p>
  );
}

export default function DeviceOverview({ loaderData }: Route.ComponentProps) {
  const { summary, settings, revision, activeCounts, active, dismissed, unmatched, devicePath, powers, awaitingCount } = loaderData;
  const canDismiss = powers.canDismiss;
  return (
    <div className="space-y-6">
      <div className="grid gap-4 md:grid-cols-3">
        <Card className="p-5">
          <h2 className="text-xs font-semibold tracking-wide text-ink-muted uppercase">Worst on wan interfaces</h2>
          <div className="mt-3">{isOutcome(summary.worstOutsideOutcome) ? <OutcomeChip outcome={summary.worstOutsideOutcome} /> : <span className="text-sm text-ink-muted">No wan interface</span>}</div>
          <p className="mt-2 text-xs text-ink-muted">The most any source gets at any time of the week.</p>
        </Card>
        <Card className="p-5">
          <h2 className="text-xs font-semibold tracking-wide text-ink-muted uppercase">Active findings</h2>
          <div className="mt-3">
            <SeverityCounts counts={activeCounts} />
          </div>
          {dismissed.length > 0 ? <p className="mt-2 text-xs text-ink-muted">{formatNumber(dismissed.length)} dismissed as accepted risk, not counted.</p> : null}
          {awaitingCount > 0 ? (
            <p className="mt-1 text-xs text-ink-muted">{plural(awaitingCount, { one: "dismissal awaits", other: "dismissals await" })} confirmation; counted until confirmed.</p>
          ) : null}
        </Card>
        <Card className="p-5">
          <h2 className="text-xs font-semibold tracking-wide text-ink-muted uppercase">Model</h2>
          <p className="mt-3 text-sm">
            {plural(summary.counts.interfaces, { one: "interface", other: "interfaces" })} · {plural(summary.counts.inboundRules, { one: "inbound rule", other: "inbound rules" })} ·{" "}
            {plural(summary.counts.accounts, { one: "account", other: "accounts" })}
          </p>
          <p className="mt-1 text-xs text-ink-muted">
            Time zone {settings.timezone} · default inbound {settings.defaultInbound} · unlistened ports {settings.unlistenedPort}
          </p>
        </Card>
      </div>
      <ExpectationsLine devicePath={devicePath} />
      <FieldCheckLine devicePath={devicePath} timeZone={settings.timezone} />
      <p className="text-sm text-ink-muted">
        Revision r{revision.number}: “{revision.message || "no message"}” by {revision.author || "unknown"} on <Time at={revision.at} timeZone={settings.timezone} />.
      </p>
      <section aria-labelledby="findings-heading">
        <h2 id="findings-heading" className="mb-1 text-lg font-semibold">
          Findings
        </h2>
        <p className="mb-3 text-sm text-ink-muted">
          Hardening checks on revision r{revision.number}, most severe first. Each names the elements involved (open one to edit it), why it matters and its source.
        </p>
        {active.length === 0 ? (
          <EmptyState title={dismissed.length ? "No active findings" : "No findings"}>
            {dismissed.length
              ? "Every finding of this revision is dismissed as an accepted risk; see below."
              : "The hardening checks found nothing to report on this revision."}
          </EmptyState>
        ) : (
          <ul className="space-y-3">
            {active.map((finding) => (
              <li key={finding.key}>
                <ActiveFindingCard finding={finding} devicePath={devicePath} powers={powers} timeZone={settings.timezone} />
              </li>
            ))}
          </ul>
        )}
        {dismissed.length > 0 ? (
          <details className="mt-6 rounded-card border border-line bg-surface p-4">
            <summary className="cursor-pointer text-base font-semibold">Dismissed ({formatNumber(dismissed.length)})</summary>
            <p className="mt-2 text-sm text-ink-muted">
              Accepted risks, with the reason given. They stay dismissed on later revisions while the engine reports the same finding. Dismissing changed nothing on the device.
            </p>
            <ul className="mt-3 space-y-3">
              {dismissed.map((finding) => (
                <li key={finding.key}>
                  <DismissedFindingCard finding={finding} devicePath={devicePath} canRestore={canDismiss} timeZone={settings.timezone} />
                </li>
              ))}
            </ul>
          </details>
        ) : null}
        {unmatched.length > 0 ? (
          <details className="mt-4 rounded-card border border-line bg-surface p-4">
            <summary className="cursor-pointer text-base font-semibold">Dismissals that no longer match a finding ({formatNumber(unmatched.length)})</summary>
            <p className="mt-2 text-sm text-ink-muted">This revision no longer reports these findings. Their dismissals would apply again if the same finding came back; withdraw one to be told next time.</p>
            <ul className="mt-3 space-y-2 text-sm">
              {unmatched.map((dismissal) => (
                <li key={dismissal.key} className="flex flex-wrap items-center gap-3 border-l-2 border-line-strong pl-3">
                  <span className="font-medium">{dismissal.title}</span>
                  <code className="text-xs text-ink-muted">{dismissal.code}</code>
                  <span className="text-ink-muted">
                    “{dismissal.reason}” — {dismissal.by}, {formatDay(dismissal.at, settings.timezone)} (r{dismissal.revisionNumber})
                    {dismissal.state === "awaiting-confirmation" ? ", awaiting confirmation" : ""}
                  </span>
                  {canDismiss ? (
                    <Form method="post" action={`${devicePath}/dismissals`}>
                      <input type="hidden" name="intent" value="restore" />
                      <input type="hidden" name="key" value={dismissal.key} />
                      <Button type="submit" variant="ghost" size="sm">
                        Withdraw
                      </Button>
                    </Form>
                  ) : null}
                </li>
              ))}
            </ul>
          </details>
        ) : null}
      </section>
    </div>
  );
}
