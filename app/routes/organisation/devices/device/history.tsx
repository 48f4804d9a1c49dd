import { Form, Link, useSearchParams } from "react-router";
import type { Route } from "./+types/history";
import { requireDevice, requireDeviceRevision, revisionNumberOf } from "#server/http/device-access.server";
import { listRevisions } from "#server/services/devices.server";
import { appliedProposals } from "#server/services/proposals.server";
import { diffDocuments } from "#server/workspace/index";
import { DocumentChanges } from "#app/components/device/document-changes";
import { Card } from "#app/components/ui/card";
import { Table, Td, Th } from "#app/components/ui/table";
import { Time } from "#app/components/ui/time";

export const meta: Route.MetaFunction = () => [{ title: "History · Sallyport" }];

export async function loader({ request, context }: Route.LoaderArgs) {
  const access = requireDevice(context);
  const [revisions, applied] = await Promise.all([listRevisions(access.device.id), appliedProposals(access.organisation.id, access.device.id)]);
  const url = new URL(request.url);
  const current = access.revision.number;
  const to = url.searchParams.has("to") ? revisionNumberOf(url.searchParams.get("to")) : current;
  const from = url.searchParams.has("from") ? revisionNumberOf(url.searchParams.get("from")) : Math.max(1, to - 1);
  const [before, after] = await Promise.all([requireDeviceRevision(access, from).catch(() => null), requireDeviceRevision(access, to).catch(() => null)]);
  return {
    revisions,
    timezone: access.effective.device.timezone,
    from,
    to,
    exportBase: `/o/${access.organisation.slug}/devices/${access.device.id}/revisions`,
    // The revision a proposal made links to its change record.
    records: Object.fromEntries(applied.map((entry) => [entry.revision, `/o/${access.organisation.slug}/devices/${access.device.id}/proposals/${entry.id}/record`])),
    changes: before && after ? diffDocuments(before.effective, after.effective) : null,
  };
}

export default function History({ loaderData }: Route.ComponentProps) {
  const [searchParams] = useSearchParams();
  const { revisions, timezone, from, to, changes, exportBase, records } = loaderData;
  return (
    <div className="grid gap-6 2xl:grid-cols-[3fr_2fr]">
      <section aria-labelledby="revisions-heading">
        <h2 id="revisions-heading" className="mb-3 font-semibold">
          Revisions
        </h2>
        <Table>
          <thead>
            <tr>
              <Th>Revision</Th>
              <Th>Change</Th>
              <Th>By</Th>
              <Th>When ({timezone})</Th>
              <Th className="text-right">Export</Th>
            </tr>
          </thead>
          <tbody>
            {revisions.map((revision) => (
              <tr key={revision.number}>
                <Td className="tabular font-semibold">r{revision.number}</Td>
                <Td className="max-sm:min-w-56!">
                  {revision.message || <span className="text-ink-faint">no message</span>}
                  {records[revision.number] ? (
                    <Link to={records[revision.number]} className="block text-sm text-harbour underline underline-offset-4" aria-label={`Change record of revision ${revision.number}`}>
                      Change record
                    </Link>
                  ) : null}
                </Td>
                <Td className="text-ink-muted">{revision.authorEmail}</Td>
                <Td className="tabular whitespace-nowrap text-ink-muted"><Time at={revision.createdAt} timeZone={timezone} clock /></Td>
                <Td className="text-right">
                  <a href={`${exportBase}/${revision.number}/export`} className="text-sm text-harbour underline underline-offset-4" download aria-label={`Export revision ${revision.number}`}>
                    JSON
                  </a>
                </Td>
              </tr>
            ))}
          </tbody>
        </Table>
      </section>
      <section aria-labelledby="compare-heading">
        <h2 id="compare-heading" className="mb-3 font-semibold">
          Compare revisions
        </h2>
        <Form method="get" className="mb-4 flex flex-wrap items-end gap-3">
          {(["from", "to"] as const).map((name) => (
            <label key={name} className="text-sm">
              <span className="mb-1 block font-medium">{name === "from" ? "From" : "To"}</span>
              <select name={name} defaultValue={searchParams.get(name) ?? String(name === "from" ? from : to)} className="h-9 rounded-control border border-line-strong bg-surface px-2 text-sm">
                {revisions.map((revision) => (
                  <option key={revision.number} value={revision.number}>
                    r{revision.number}
                  </option>
                ))}
              </select>
            </label>
          ))}
          <button type="submit" className="h-9 rounded-control border border-line-strong bg-surface px-3 text-sm font-medium hover:bg-surface-sunken">
            Compare
          </button>
        </Form>
        <Card className="p-5">
          <h3 className="text-sm font-semibold">
            r{from} → r{to}
          </h3>
          {changes === null ? (
            <p className="mt-2 text-sm text-danger">One of these revisions does not exist.</p>
          ) : changes.length === 0 ? (
            <p className="mt-2 text-sm text-ink-muted">No differences in the model.</p>
          ) : (
            <DocumentChanges changes={changes} className="mt-3" />
          )}
        </Card>
      </section>
    </div>
  );
}
