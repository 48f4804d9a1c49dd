import { Form, Link, redirect, useActionData, useNavigation } from "react-router";
import type { Route } from "./+types/field-checks";
import { serializeFlash } from "#server/auth/flash.server";
import { hasAtLeastRole } from "#server/auth/roles";
import { OBSERVED_ANSWERS, OBSERVED_LABELS } from "#server/engine/vocabulary";
import { formatNumber, plural } from "#server/engine/format";
import { Refusal } from "#server/errors";
import { MAX_OBSERVATIONS_BYTES, OBSERVATION_COLUMNS } from "#server/formats/observations";
import { actorOf } from "#server/http/actor.server";
import { requireDevice } from "#server/http/device-access.server";
import { formValues, readForm } from "#server/http/form.server";
import { refusedForm } from "#server/http/refusals.server";
import { clientAddressOf } from "#server/http/request-context.server";
import { FIELD_CHECK_ROLE, listFieldChecks, recordFieldCheckFile } from "#server/services/field-checks.server";
import { TextAreaField } from "#app/components/device/editor-kit";
import { AgreementRate } from "#app/components/field-checks";
import { Button } from "#app/components/ui/button";
import { Card } from "#app/components/ui/card";
import { EmptyState } from "#app/components/ui/empty-state";
import { FormError } from "#app/components/ui/field";
import { Table, Td, Th } from "#app/components/ui/table";
import { Time } from "#app/components/ui/time";

export const meta: Route.MetaFunction = () => [{ title: "Field checks · Sallyport" }];

/** Where the documented example file is served from (public/examples). */
const EXAMPLE_FILE = "/examples/field-check.csv";

export async function loader({ context }: Route.LoaderArgs) {
  const access = requireDevice(context);
  const checks = await listFieldChecks(access.organisation.id, access.device.id);
  return {
    devicePath: `/o/${access.organisation.slug}/devices/${access.device.id}`,
    timezone: access.effective.device.timezone,
    canRecord: hasAtLeastRole(access.role, FIELD_CHECK_ROLE),
    // Passed as data: the file format's module reads CSV and stays on the server.
    columns: [...OBSERVATION_COLUMNS],
    checks,
    now: new Date().toISOString(),
  };
}

/** The file, or the pasted text, of an upload; or why there is none. Too large is a 413. */
async function uploadedText(form: FormData): Promise<{ text: string; fileName: string }> {
  const limit = `${Math.round(MAX_OBSERVATIONS_BYTES / 1024)} KiB`;
  const upload = form.get("file");
  if (upload !== null && typeof upload !== "string" && !(upload.size === 0 && upload.name === "")) {
    if (upload.size > MAX_OBSERVATIONS_BYTES) throw new Refusal(`The file is ${Math.ceil(upload.size / 1024)} KiB; a field-check file may be at most ${limit}.`, 413, { field: "file" });
    return { text: await upload.text(), fileName: upload.name };
  }
  const pasted = form.get("observationsText");
  if (typeof pasted === "string" && pasted.trim() !== "") {
    if (pasted.length > MAX_OBSERVATIONS_BYTES) throw new Refusal(`The text is larger than ${limit}.`, 413, { field: "file" });
    return { text: pasted, fileName: "" };
  }
  throw new Refusal("Choose a field-check file (.csv) or paste its text.", 400, { field: "file" });
}

export async function action({ request, context }: Route.ActionArgs) {
  const access = requireDevice(context, FIELD_CHECK_ROLE);
  const form = await readForm(request);
  const values = formValues(form);
  try {
    const { text, fileName } = await uploadedText(form);
    const check = await recordFieldCheckFile(access.organisation.id, access.device.id, text, fileName, actorOf(access, clientAddressOf(context)));
    const { rows, agreements, differences, invalid } = check.counts;
    const message = `Checked ${plural(rows, { one: "observation", other: "observations" })}: ${formatNumber(agreements)} agree, ${formatNumber(differences)} differ${invalid > 0 ? `, ${formatNumber(invalid)} could not be checked` : ""}.`;
    return redirect(`/o/${access.organisation.slug}/devices/${access.device.id}/field-checks/${check.id}`, { headers: { "Set-Cookie": await serializeFlash({ kind: differences > 0 || invalid > 0 ? "info" : "success", message }) } });
  } catch (error) {
    return refusedForm(error, values);
  }
}

export default function FieldChecks({ loaderData }: Route.ComponentProps) {
  const { checks, canRecord, devicePath, timezone, now, columns } = loaderData;
  const refusal = useActionData<typeof action>();
  const busy = useNavigation().state === "submitting";
  return (
    <div className="space-y-6">
      <div>
        <h2 className="text-lg font-semibold">Field checks</h2>
        <p className="mt-1 max-w-3xl text-sm text-ink-muted">
          What your team saw when they tried this device from a vantage point — a laptop on the internet, the NOC — compared with the model. Each observation is predicted with the revision that was live at its time; each difference gets its likely reason: the model was out of date, the change had not reached the device, or the device (or something on the path to it) differs from its configuration.
        </p>
      </div>

      {canRecord ? (
        <Card className="p-5">
          <h3 className="font-semibold">Check observations</h3>
          <p className="mt-1 max-w-3xl text-sm text-ink-muted">
            A CSV file with a header line naming the columns <code>{columns.join(",")}</code> (<code>interface</code> and <code>note</code> may be left out).{" "}
            <a href={EXAMPLE_FILE} download className="font-medium text-harbour underline underline-offset-4">
              Download the example file
            </a>
            .
          </p>
          <dl className="mt-3 grid gap-x-4 gap-y-1 text-sm sm:grid-cols-[8rem_minmax(0,1fr)]">
            <dt className="font-mono">when</dt>
            <dd className="text-ink-muted">ISO 8601 with an offset or Z, e.g. 2026-11-30T14:05:00Z</dd>
            <dt className="font-mono">from</dt>
            <dd className="text-ink-muted">the vantage point's source address</dd>
            <dt className="font-mono">to</dt>
            <dd className="text-ink-muted">the device address tried; its interface is where the probe arrives unless the interface column says otherwise</dd>
            <dt className="font-mono">service</dt>
            <dd className="text-ink-muted">a catalogue name, tcp/PORT, udp/PORT or icmp/echo</dd>
            <dt className="font-mono">observed</dt>
            <dd className="text-ink-muted">
              {OBSERVED_ANSWERS.map((word, index) => (
                <span key={word}>
                  {index > 0 ? ", " : ""}
                  <code>{word}</code> ({OBSERVED_LABELS[word]})
                </span>
              ))}
            </dd>
          </dl>
          <Form method="post" encType="multipart/form-data" className="mt-4 space-y-3" noValidate>
            <FormError message={refusal?.errors.form} />
            <div className="space-y-1.5">
              <label htmlFor="field-check-file" className="block text-sm font-medium">
                Field-check file
              </label>
              <input
                id="field-check-file"
                type="file"
                name="file"
                accept=".csv,text/csv"
                aria-invalid={refusal?.errors.file ? true : undefined}
                className="block w-full text-sm file:mr-3 file:rounded-control file:border file:border-line-strong file:bg-surface file:px-3 file:py-1.5"
              />
            </div>
            <details open={Boolean(refusal?.values.observationsText)}>
              <summary className="cursor-pointer text-sm text-harbour">Or paste the file's text</summary>
              <div className="mt-2">
                <TextAreaField label="File text" name="observationsText" rows={6} defaultValue={refusal?.values.observationsText ?? ""} />
              </div>
            </details>
            <Button type="submit" disabled={busy}>
              {busy ? "Checking…" : "Check against the model"}
            </Button>
          </Form>
        </Card>
      ) : null}

      <section aria-labelledby="field-check-history" className="space-y-3">
        <h3 id="field-check-history" className="font-semibold">
          Checks so far
        </h3>
        {checks.length === 0 ? (
          <EmptyState title="No field checks yet">{canRecord ? "Try the device from where your team works, write down what answered, and check the file here." : "An engineer of this organisation can record what the device really did."}</EmptyState>
        ) : (
          <Table>
            <caption className="sr-only">Field checks of this device, newest first</caption>
            <thead>
              <tr>
                <Th>Recorded</Th>
                <Th>Observations</Th>
                <Th>Agreement</Th>
                <Th>Differ</Th>
                <Th>Not checked</Th>
                <Th>By</Th>
              </tr>
            </thead>
            <tbody>
              {checks.map((check) => (
                <tr key={check.id}>
                  <Td>
                    <Link to={`${devicePath}/field-checks/${check.id}`} className="font-medium text-harbour underline-offset-4 hover:underline">
                      <Time at={check.createdAt} timeZone={timezone} now={now} />
                    </Link>
                    <span className="block text-xs text-ink-muted">
                      {check.fileName || (check.source === "api" ? "posted by a program" : "pasted text")} · on r{check.currentRevision}
                    </span>
                  </Td>
                  <Td className="tabular">{formatNumber(check.counts.rows)}</Td>
                  <Td>
                    <AgreementRate counts={check.counts} />
                  </Td>
                  <Td className="tabular">{check.counts.differences > 0 ? <span className="font-semibold text-danger">{formatNumber(check.counts.differences)}</span> : "0"}</Td>
                  <Td className="tabular">{formatNumber(check.counts.invalid)}</Td>
                  <Td className="text-xs break-all text-ink-muted">{check.createdBy}</Td>
                </tr>
              ))}
            </tbody>
          </Table>
        )}
      </section>
    </div>
  );
}
