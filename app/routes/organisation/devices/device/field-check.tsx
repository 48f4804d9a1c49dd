import { Link } from "react-router";
import type { Route } from "./+types/field-check";
import { DIFFERENCE_REASON_LABELS, isObservedAnswer, LAYER_LABELS, OBSERVED_LABELS, OUTCOME_LABELS } from "#server/engine/vocabulary";
import type { FieldCheckRow } from "#server/engine/index";
import { formatNumber, plural } from "#server/engine/format";
import { Refusal } from "#server/errors";
import { requireDevice } from "#server/http/device-access.server";
import { refusedPage } from "#server/http/refusals.server";
import { findFieldCheck } from "#server/services/field-checks.server";
import { AgreementRate } from "#app/components/field-checks";
import { OutcomeChip } from "#app/components/outcome";
import { Badge, Card } from "#app/components/ui/card";
import { Table, Td, Th } from "#app/components/ui/table";
import { Time } from "#app/components/ui/time";

export const meta: Route.MetaFunction = () => [{ title: "Field check · Sallyport" }];

export async function loader({ params, context }: Route.LoaderArgs) {
  const access = requireDevice(context);
  const check = await findFieldCheck(access.organisation.id, access.device.id, params.check);
  if (!check) return refusedPage(new Refusal("No such field check of this device.", 404));
  return {
    devicePath: `/o/${access.organisation.slug}/devices/${access.device.id}`,
    timezone: access.effective.device.timezone,
    check,
  };
}

function observedWords(observed: string): string {
  return isObservedAnswer(observed) ? OBSERVED_LABELS[observed] : observed;
}

/** One table of rows: what was tried and seen, and what the model said. */
function RowsTable({ rows, timezone, caption, kind }: { rows: readonly FieldCheckRow[]; timezone: string; caption: string; kind: "differs" | "agrees" | "invalid" }) {
  return (
    <Table>
      <caption className="sr-only">{caption}</caption>
      <thead>
        <tr>
          <Th>Line</Th>
          <Th>When</Th>
          <Th>Probe</Th>
          <Th>Observed</Th>
          {kind === "invalid" ? <Th>Why it was not checked</Th> : <Th>Predicted</Th>}
          {kind === "differs" ? <Th>Likely reason</Th> : null}
        </tr>
      </thead>
      <tbody>
        {rows.map((row) => (
          <tr key={row.line} id={`line-${row.line}`}>
            <Td className="tabular text-ink-muted">{row.line}</Td>
            <Td className="text-xs">{row.at ? <Time at={row.at} timeZone={timezone} /> : <code>{row.when || "—"}</code>}</Td>
            <Td className="text-xs">
              <span className="font-mono">{row.from || "—"}</span> → <span className="font-mono">{row.to || "—"}</span>
              {row.interface ? <span className="text-ink-muted"> on {row.interface}</span> : null} · <span className="font-mono">{row.service || "—"}</span>
              {row.note ? <span className="block text-ink-muted">“{row.note}”</span> : null}
            </Td>
            <Td className="text-sm">{observedWords(row.observed)}</Td>
            {kind === "invalid" ? (
              <Td className="max-w-md text-sm text-danger max-sm:min-w-56!">{row.problem}</Td>
            ) : (
              <Td>
                {row.predicted ? <OutcomeChip outcome={row.predicted} /> : "—"}
                <span className="mt-1 block text-xs text-ink-muted">
                  r{row.revision}
                  {row.layer ? ` · ${LAYER_LABELS[row.layer]}` : ""}
                  {row.ruleId ? ` · rule ${row.ruleId}` : ""}
                </span>
              </Td>
            )}
            {kind === "differs" && row.difference ? (
              <Td className="max-w-md max-sm:min-w-64!">
                <Badge tone={row.difference.reason === "device-differs" ? "danger" : "brass"}>{DIFFERENCE_REASON_LABELS[row.difference.reason]}</Badge>
                <span className="mt-1 block text-xs text-ink-muted">{row.difference.words}</span>
              </Td>
            ) : null}
          </tr>
        ))}
      </tbody>
    </Table>
  );
}

export default function FieldCheckPage({ loaderData }: Route.ComponentProps) {
  const { check, timezone, devicePath } = loaderData;
  const differences = check.rows.filter((row) => row.status === "differs");
  const invalid = check.rows.filter((row) => row.status === "invalid");
  const agreements = check.rows.filter((row) => row.status === "agrees");
  return (
    <div className="space-y-6">
      <div>
        <p className="text-sm">
          <Link to={`${devicePath}/field-checks`} className="text-harbour underline-offset-4 hover:underline">
            Field checks
          </Link>
        </p>
        <h2 className="mt-1 text-lg font-semibold">
          Field check of <Time at={check.createdAt} timeZone={timezone} />
        </h2>
        <p className="mt-1 text-sm text-ink-muted">
          {check.fileName ? <>From “{check.fileName}” · </> : null}recorded by {check.createdBy} when r{check.currentRevision} was current. Each observation was predicted with the revision live at its time.
        </p>
      </div>
      <Card className="grid gap-4 p-5 sm:grid-cols-4">
        <div>
          <h3 className="text-xs font-semibold tracking-wide text-ink-muted uppercase">Agreement</h3>
          <AgreementRate counts={check.counts} className="mt-2 block text-lg" />
        </div>
        <div>
          <h3 className="text-xs font-semibold tracking-wide text-ink-muted uppercase">Agree</h3>
          <p className="tabular mt-2 text-lg">{formatNumber(check.counts.agreements)}</p>
        </div>
        <div>
          <h3 className="text-xs font-semibold tracking-wide text-ink-muted uppercase">Differ</h3>
          <p className={`tabular mt-2 text-lg ${check.counts.differences > 0 ? "font-semibold text-danger" : ""}`}>{formatNumber(check.counts.differences)}</p>
        </div>
        <div>
          <h3 className="text-xs font-semibold tracking-wide text-ink-muted uppercase">Not checked</h3>
          <p className="tabular mt-2 text-lg">{formatNumber(check.counts.invalid)}</p>
        </div>
      </Card>

      <section aria-labelledby="differences" className="space-y-2">
        <h3 id="differences" className="font-semibold">
          Differences ({formatNumber(differences.length)})
        </h3>
        {differences.length === 0 ? (
          <p className="text-sm text-ink-muted">Everything that could be checked agrees with the model.</p>
        ) : (
          <>
            <p className="max-w-3xl text-sm text-ink-muted">
              Where the device did something other than its model says. The model describes the configuration, not the device: confirm on the device in a maintenance window before changing anything, and follow your change policy and the device maker's documentation.
            </p>
            <RowsTable rows={differences} timezone={timezone} caption="Observations that differ from the model, with the likely reason" kind="differs" />
          </>
        )}
      </section>

      {invalid.length > 0 ? (
        <section aria-labelledby="not-checked" className="space-y-2">
          <h3 id="not-checked" className="font-semibold">
            Not checked ({formatNumber(invalid.length)})
          </h3>
          <p className="text-sm text-ink-muted">{plural(invalid.length, { one: "row", other: "rows" })} of the file could not be checked; each says why. Correct the file and check it again.</p>
          <RowsTable rows={invalid} timezone={timezone} caption="Rows that could not be checked, each with its problem" kind="invalid" />
        </section>
      ) : null}

      <section aria-labelledby="agreements" className="space-y-2">
        <h3 id="agreements" className="font-semibold">
          Agreements ({formatNumber(agreements.length)})
        </h3>
        {agreements.length === 0 ? (
          <p className="text-sm text-ink-muted">No observation agrees with the model.</p>
        ) : (
          <RowsTable rows={agreements} timezone={timezone} caption="Observations that agree with the model" kind="agrees" />
        )}
      </section>
      <p className="text-xs text-ink-muted">
        “{OBSERVED_LABELS.login}” agrees with any of {[OUTCOME_LABELS["login-denied"], OUTCOME_LABELS["login-mfa"], OUTCOME_LABELS["login-password"]].map((label) => `“${label}”`).join(", ")}: a login page or banner appeared and nobody tried to log in.
      </p>
    </div>
  );
}
