import { useEffect, useRef } from "react";
import { Form, Link, useNavigation } from "react-router";
import { DocumentChanges } from "#app/components/device/document-changes";
import { TextAreaField } from "#app/components/device/editor-kit";
import { TextField } from "#app/components/ui/field";
import { OutcomeChip } from "#app/components/outcome";
import { SeverityBadge } from "#app/components/severity";
import { Button, ButtonLink } from "#app/components/ui/button";
import { Badge, Card } from "#app/components/ui/card";
import { cx } from "#app/components/ui/cx";
import { formatCount } from "#server/engine/format";
import type { ExposureChangeRow, FindingLine } from "#server/analysis/exposure-change";
import type { DeviceEffect, SharedChangePreview } from "#server/services/shared-objects.server";
import { ExposureTotals } from "#app/components/analysis/exposure-totals";
import { CsvReport } from "./csv-report";
import { witnessTracePath } from "#app/utils/trace-links";

const PLURALS = new Intl.PluralRules("en");

/** "1 address", "256 addresses": the count readable, the noun agreeing with it. */
function counted(decimal: string, one: string, other: string): string {
  const { text } = formatCount(decimal);
  const n = BigInt(decimal);
  return `${text} ${PLURALS.select(n > 1_000_000n ? 2 : Number(n)) === "one" ? one : other}`;
}

function capitalised(weekTime: string): string {
  return weekTime.charAt(0).toUpperCase() + weekTime.slice(1);
}

/** A stretch of the week in the device's own time: "all week" or "Mon 08:00 – Fri 17:00". */
function stretchWords(row: Pick<ExposureChangeRow, "start" | "end">): string {
  if (row.start === row.end || (row.start === "mon 00:00" && row.end === "sun 24:00")) return "all week";
  return `${capitalised(row.start)} – ${capitalised(row.end)}`;
}

/** The trace page with the row's own probe filled in. */
function tracePath(devicePath: string, witness: ExposureChangeRow["witness"]): string {
  return witnessTracePath(devicePath, witness);
}

function ChangeRow({ row, devicePath }: { row: ExposureChangeRow; devicePath: string }) {
  return (
    <li className="grid gap-x-4 gap-y-1.5 border-t border-line py-3 first:border-t-0 md:grid-cols-[minmax(0,14rem)_minmax(0,1fr)_auto]" data-testid="exposure-change" data-before={row.before} data-after={row.after} data-ranges={row.ranges.join(" ")} data-services={row.services.join(" ")} data-to={row.to.join(" ")}>
      <div className="min-w-0 text-sm">
        <span className="font-mono font-medium">{row.services.join(", ")}</span> <span className="text-ink-muted">on</span> <span className="font-mono">{row.interface}</span>
        <div className="font-mono text-xs break-words text-ink-muted">to {row.to.join(", ")}</div>
        <div className="text-xs text-ink-muted">{stretchWords(row)}</div>
      </div>
      <div className="min-w-0 space-y-1.5">
        <div className="flex flex-wrap items-center gap-1.5 text-sm">
          <OutcomeChip outcome={row.before} />
          <span aria-label="becomes">→</span>
          <OutcomeChip outcome={row.after} />
          <span className="tabular font-medium" title={`${formatCount(row.count).exact} addresses`} data-testid="change-count" data-count={row.count}>
            {counted(row.count, "address", "addresses")}
          </span>
        </div>
        <p className="font-mono text-xs break-all text-ink-muted">
          {row.ranges.join(", ")}
          {row.moreRanges > 0 ? <span className="font-sans"> and {counted(String(row.moreRanges), "more range", "more ranges")}</span> : null}
        </p>
      </div>
      <div className="text-sm md:text-right">
        <Link to={tracePath(devicePath, row.witness)} className="whitespace-nowrap text-harbour underline underline-offset-4" data-testid="change-witness">
          Trace {row.witness.from}
        </Link>
      </div>
    </li>
  );
}

function FindingList({ title, findings, tone }: { title: string; findings: readonly FindingLine[]; tone: "danger" | "success" }) {
  if (findings.length === 0) return null;
  return (
    <div>
      <h4 className={cx("text-xs font-semibold tracking-wide uppercase", tone === "danger" ? "text-danger" : "text-success")}>
        {title} ({findings.length})
      </h4>
      <ul className="mt-1 space-y-1 text-sm">
        {findings.map((finding, index) => (
          <li key={`${finding.code}-${index}`} className="flex flex-wrap items-center gap-2">
            <SeverityBadge severity={finding.severity} />
            <span>{finding.title}</span>
            <code className="text-xs text-ink-faint">{finding.elements.join(" ") || finding.code}</code>
          </li>
        ))}
      </ul>
    </div>
  );
}

/**
 * How one device's exposure changes, without a frame of its own: who is more or less exposed,
 * the lockout guard, who gains and loses each outcome, where outcomes change, the findings that
 * appear or go, and the model's own changes. The shared-object review frames it per device; the
 * import preview shows it for a new revision.
 */
function ChangeRows({ exposure, devicePath }: { exposure: DeviceEffect["exposure"]; devicePath: string }) {
  return (
    <>
      <ul className="mt-1">
        {exposure.rows.map((row, index) => (
          <ChangeRow key={index} row={row} devicePath={devicePath} />
        ))}
      </ul>
      {exposure.totalRows > exposure.rows.length ? (
        <p className="mt-2 text-xs text-ink-muted">
          Showing the {exposure.rows.length} largest steps of {exposure.totalRows}; after saving, the device's exposure map shows every change.
        </p>
      ) : null}
    </>
  );
}

/** `foldRows`: the step-by-step rows start folded (the import preview, where the decision comes after them). */
export function DeviceEffectDetails({ effect, devicePath, headingId, foldRows = false }: { effect: DeviceEffect; devicePath: string; headingId: string; foldRows?: boolean }) {
  const { exposure } = effect;
  const noExposureChange = exposure.transitions === 0;
  return (
    <>
      <div className="mt-3 flex flex-wrap gap-2 text-sm" data-testid="effect-summary">
        {noExposureChange ? (
          <Badge>No outcome changes for any source</Badge>
        ) : (
          <>
            <ExposureTotals more={exposure.moreExposed} less={exposure.lessExposed} testIds={{ more: "more-exposed", less: "less-exposed" }} />
          </>
        )}
        {exposure.findingsAdded.length > 0 ? <Badge tone="danger">{counted(String(exposure.findingsAdded.length), "new finding", "new findings")}</Badge> : null}
        {exposure.findingsResolved.length > 0 ? <Badge tone="success">{counted(String(exposure.findingsResolved.length), "finding resolved", "findings resolved")}</Badge> : null}
      </div>

      {exposure.lockout.length > 0 ? (
        <div role="alert" className="mt-3 rounded-control border border-danger/40 bg-danger-soft px-3 py-2 text-sm text-danger" data-testid="lockout-guard">
          <p className="font-semibold">Lockout guard: an operator network loses its last login path</p>
          <ul className="mt-1 list-disc pl-5">
            {exposure.lockout.map((entry) => (
              <li key={entry.operatorNetwork}>
                <span className="font-mono">{entry.operatorNetwork}</span>: {entry.detail}
              </li>
            ))}
          </ul>
        </div>
      ) : null}

      {exposure.byOutcome.length > 0 ? (
        <div className="mt-4">
          <h4 id={`${headingId}-shifts`} className="text-xs font-semibold tracking-wide text-ink-muted uppercase">
            Who gains and loses each outcome
          </h4>
          <p className="sr-only">Distinct sources that gain or lose each outcome on at least one interface, address, service or time.</p>
          <ul aria-labelledby={`${headingId}-shifts`} className="mt-1 max-w-xl divide-y divide-line text-sm" data-testid="outcome-shifts">
            {exposure.byOutcome.map((shift) => (
              <li key={shift.outcome} className="flex flex-wrap items-center gap-x-4 gap-y-1 py-1.5 sm:grid sm:grid-cols-[minmax(0,1fr)_9rem_9rem]" data-outcome={shift.outcome}>
                <OutcomeChip outcome={shift.outcome} className="justify-self-start" />
                <span className="flex gap-4 sm:contents">
                  <span className="tabular sm:text-right" data-gained={shift.gained}>
                    <span className="text-ink-muted">gain it: </span>
                    {shift.gained === "0" ? "none" : formatCount(shift.gained).text}
                  </span>
                  <span className="tabular sm:text-right" data-lost={shift.lost}>
                    <span className="text-ink-muted">lose it: </span>
                    {shift.lost === "0" ? "none" : formatCount(shift.lost).text}
                  </span>
                </span>
              </li>
            ))}
          </ul>
        </div>
      ) : null}

      {exposure.rows.length > 0 ? (
        foldRows ? (
          <details className="mt-4" data-testid="outcome-changes">
            <summary className="cursor-pointer text-xs font-semibold tracking-wide text-ink-muted uppercase hover:text-ink">
              Where outcomes change (device time): {counted(String(exposure.totalRows), "step", "steps")}
            </summary>
            <ChangeRows exposure={exposure} devicePath={devicePath} />
          </details>
        ) : (
          <div className="mt-4">
            <h4 className="text-xs font-semibold tracking-wide text-ink-muted uppercase">Where outcomes change (device time)</h4>
            <ChangeRows exposure={exposure} devicePath={devicePath} />
          </div>
        )
      ) : null}

      {exposure.findingsAdded.length + exposure.findingsResolved.length > 0 ? (
        <div className="mt-4 space-y-3">
          <FindingList title="New findings" findings={exposure.findingsAdded} tone="danger" />
          <FindingList title="Resolved findings" findings={exposure.findingsResolved} tone="success" />
        </div>
      ) : null}

      <details className="mt-4 text-sm">
        <summary className="cursor-pointer font-medium text-ink-muted hover:text-ink">Model changes ({effect.changes.length})</summary>
        <DocumentChanges changes={effect.changes} className="mt-2" />
      </details>
    </>
  );
}

function DeviceEffectCard({ effect, organisationPath }: { effect: DeviceEffect; organisationPath: string }) {
  const devicePath = `${organisationPath}/devices/${effect.deviceId}`;
  const headingId = `effect-${effect.deviceId}`;
  return (
    <Card className="min-w-0 p-3 sm:p-5" aria-labelledby={headingId} role="group" data-testid="device-effect">
      <div className="flex flex-wrap items-baseline justify-between gap-x-4 gap-y-1">
        <h3 id={headingId} className="font-semibold">
          <Link to={devicePath} className="font-mono text-harbour underline-offset-4 hover:underline">
            {effect.deviceName}
          </Link>
        </h3>
        <span className="text-sm text-ink-muted">
          {effect.siteName} · revision r{effect.revision} → <span className="font-medium text-ink">r{effect.revision + 1}</span>
        </span>
      </div>
      <DeviceEffectDetails effect={effect} devicePath={devicePath} headingId={headingId} />
    </Card>
  );
}

/**
 * Under "changes go through proposals", a change that moves sources on a device (docs/decisions/017):
 * why it cannot be proposed, the reviewed way — the new value as a new shared object, then a
 * proposal per device to use it — and, for an emergency, the break-glass reason.
 */
function PolicyNotice({ moving, alternative }: { moving: readonly string[]; alternative: { kind: string; name: string; items: string; description: string } | null }) {
  const navigation = useNavigation();
  return (
    <div className="space-y-3 rounded-control border border-danger/40 bg-surface p-3 text-sm sm:p-4" data-testid="library-policy">
      <h3 className="font-semibold text-danger">Changes go through proposals in this organisation</h3>
      <p>
        This change moves sources on <span className="font-mono">{moving.join(", ")}</span>. A shared object has one value on every device, so its change cannot be proposed per device. The reviewed way: save the new value as a new shared object — no device uses it yet, so nothing changes — then propose on each device to use it.
      </p>
      {alternative ? (
        <Form method="post" className="flex flex-wrap items-end gap-3" aria-label="Save as a new shared object">
          <input type="hidden" name="intent" value="save" />
          <input type="hidden" name="original" value="" />
          <input type="hidden" name="kind" value={alternative.kind} />
          <input type="hidden" name="items" value={alternative.items} />
          <input type="hidden" name="description" value={alternative.description} />
          <TextField label="Name of the new object" name="name" defaultValue={`${alternative.name}-next`.slice(0, 63)} maxLength={63} className="min-w-56" />
          <Button type="submit" variant="secondary" disabled={navigation.state === "submitting"}>
            Save as a new object
          </Button>
        </Form>
      ) : null}
    </div>
  );
}

/**
 * The review step before a shared-object change is saved: each device that gets a new revision
 * with how its exposure changes (the engine's diff), then the confirm button. `fields` are the
 * change's own form fields, sent again with the confirmation. Under "changes go through
 * proposals" a change that moves sources asks for a break-glass reason (`breakGlass`: what was
 * typed and its problem) and offers the reviewed way round (`alternative`: a single object's
 * new value, to save under a new name).
 */
export function SharedChangeReview({
  preview,
  fields,
  organisationPath,
  cancelPath,
  breakGlass = {},
  alternative = null,
}: {
  preview: SharedChangePreview;
  fields: Record<string, string>;
  organisationPath: string;
  cancelPath: string;
  breakGlass?: { value?: string; error?: string };
  alternative?: { kind: string; name: string; items: string; description: string } | null;
}) {
  const navigation = useNavigation();
  const heading = useRef<HTMLHeadingElement>(null);
  // The review replaces what the user was looking at: move focus (and the screen) to it.
  useEffect(() => {
    heading.current?.focus();
  }, [preview]);
  const count = preview.devices.length;
  const revisions = counted(String(count), "new revision", "new revisions");
  const policyApplies = preview.policy.throughProposals && preview.policy.moving.length > 0;
  const report = preview.report;
  return (
    <section aria-labelledby="review-heading" className="min-w-0 space-y-4 rounded-card border-2 border-brass/50 bg-brass-soft/40 p-3 sm:p-5" data-testid="shared-change-review">
      <div>
        <h2 id="review-heading" ref={heading} tabIndex={-1} className="text-lg font-semibold focus:outline-none">
          Review before saving: {counted(String(count), "device changes", "devices change")}
        </h2>
        <p className="mt-1 text-sm text-ink-muted">
          Nothing is saved yet. <span className="font-mono break-words text-ink">{preview.summary}</span> is used by the devices below; saving gives each one a new revision with the new value, so their exposure changes now, as shown here.
        </p>
      </div>
      {report ? <CsvReport report={report} pending /> : null}
      <div className="space-y-4">
        {preview.devices.map((effect) => (
          <DeviceEffectCard key={effect.deviceId} effect={effect} organisationPath={organisationPath} />
        ))}
      </div>
      {preview.unchanged.length > 0 ? (
        <p className="text-sm text-ink-muted">
          Also {preview.unchanged.length === 1 ? "uses" : "use"} it, with no change to the model: <span className="font-mono">{preview.unchanged.join(", ")}</span>.
        </p>
      ) : null}
      <p className="text-sm text-ink-muted">The devices themselves change only when the new revisions are applied to them, following your organisation's change policy.</p>
      {policyApplies ? <PolicyNotice moving={preview.policy.moving} alternative={alternative} /> : null}
      <Form method="post" encType={fields.intent === "import-csv" ? "multipart/form-data" : undefined} className="flex flex-wrap items-end gap-3" aria-label={policyApplies ? "Break-glass save" : "Confirm the change"}>
        {Object.entries(fields).map(([name, value]) => (
          <input key={name} type="hidden" name={name} value={value} />
        ))}
        <input type="hidden" name="confirm" value="1" />
        <input type="hidden" name="library" value={preview.confirmation.library} />
        <input type="hidden" name="bases" value={preview.confirmation.bases} />
        {policyApplies ? (
          <div className="w-full">
            <TextAreaField
              label="Why this cannot wait for proposals (break-glass)"
              name="breakGlassReason"
              rows={2}
              defaultValue={breakGlass.value}
              error={breakGlass.error}
              hint="At least 20 characters; recorded with each new revision in the audit log, and the reviewers are e-mailed."
            />
          </div>
        ) : null}
        <Button type="submit" variant={policyApplies ? "danger" : "primary"} disabled={navigation.state === "submitting"}>
          {policyApplies ? "Save directly (break-glass)" : `Save and create ${revisions}`}
        </Button>
        <ButtonLink to={cancelPath} variant="secondary">
          Cancel
        </ButtonLink>
      </Form>
    </section>
  );
}
