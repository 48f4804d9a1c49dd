import { Form, Link, useSearchParams } from "react-router";
import type { Route } from "./+types/audit";
import { requireRole } from "#server/auth/guard.server";
import { auditFilterChoices, auditLogPage, parseAuditQuery, AUDIT_CSV_LIMIT, AUDIT_PAGE_SIZE } from "#server/services/audit.server";
import { formatNumber, plural } from "#server/engine/format";
import { AUDIT_ACTIONS } from "#models/audit-actions";
import { AUDIT_ACTION_LABELS, auditActionLabel, auditDetails, auditSentence, auditTargetLabel } from "#app/utils/audit-words";
import { Pager } from "#app/components/analysis/common";
import { buttonClasses } from "#app/components/ui/button";
import { Card } from "#app/components/ui/card";
import { PAGE_ROLES } from "#server/auth/roles";
import { EmptyState } from "#app/components/ui/empty-state";
import { Table, Td, Th } from "#app/components/ui/table";
import { Time } from "#app/components/ui/time";

export const meta: Route.MetaFunction = () => [{ title: "Audit log · Sallyport" }];

// Reviewers and above: the record is evidence for change review and audits; trainees do not need it.
export async function loader({ request, context }: Route.LoaderArgs) {
  const access = requireRole(context, PAGE_ROLES.auditLog);
  const query = parseAuditQuery(new URL(request.url).searchParams);
  const [found, choices] = await Promise.all([auditLogPage(access.organisation.id, query), auditFilterChoices(access.organisation.id)]);
  return {
    slug: access.organisation.slug,
    query,
    choices,
    total: found.total,
    page: found.page,
    pages: found.pages,
    filtered: Boolean(query.actor || query.action || query.device || query.from || query.to),
    pageSize: AUDIT_PAGE_SIZE,
    csvLimit: AUDIT_CSV_LIMIT,
    now: new Date().toISOString(),
    entries: found.rows.map((row) => ({
      id: row.id,
      at: row.at.toISOString(),
      action: row.action,
      actionLabel: auditActionLabel(row.action),
      actor: row.actorName ?? row.actorEmail,
      actorEmail: row.actorName ? row.actorEmail : "",
      clientAddress: row.clientAddress,
      apiTokenName: row.apiTokenName,
      target: row.targetName ?? "",
      targetType: auditTargetLabel(row.targetType),
      sentence: auditSentence(row),
      details: auditDetails(row.changes),
    })),
  };
}

const selectClass = "h-9 max-w-64 rounded-control border border-line-strong bg-surface px-2 text-sm";
const inputClass = "h-9 rounded-control border border-line-strong bg-surface px-2 text-sm";

/** One filter: a labelled select whose first option means "no filter". */
function Choice({ label, name, value, any, options }: { label: string; name: string; value: string; any: string; options: readonly { id: string; label: string }[] }) {
  return (
    <label className="text-sm">
      <span className="mb-1 block font-medium">{label}</span>
      <select name={name} defaultValue={value} className={selectClass}>
        <option value="">{any}</option>
        {options.map((option) => (
          <option key={option.id} value={option.id}>
            {option.label}
          </option>
        ))}
      </select>
    </label>
  );
}

export default function AuditLog({ loaderData }: Route.ComponentProps) {
  const [searchParams] = useSearchParams();
  const { query, choices, entries, total, page, pages, filtered, now, slug, pageSize, csvLimit } = loaderData;
  const csvParams = new URLSearchParams(searchParams);
  csvParams.delete("page");
  const first = (page - 1) * pageSize + 1;
  return (
    <div className="space-y-4">
      <p className="text-sm text-ink-muted">Every change in this organisation, newest first. Append-only: entries cannot be edited or deleted, by anyone. Days are UTC.</p>
      <Card className="p-4">
        <Form method="get" className="flex flex-wrap items-end gap-3" aria-label="Audit log filters">
          <Choice label="Who" name="actor" value={query.actor} any="Anyone" options={choices.actors} />
          <Choice label="What" name="action" value={query.action} any="Any change" options={AUDIT_ACTIONS.map((action) => ({ id: action, label: AUDIT_ACTION_LABELS[action] }))} />
          <Choice label="Device" name="device" value={query.device} any="Any device" options={choices.devices} />
          <label className="text-sm">
            <span className="mb-1 block font-medium">From</span>
            <input type="date" name="from" defaultValue={query.from} className={inputClass} />
          </label>
          <label className="text-sm">
            <span className="mb-1 block font-medium">To</span>
            <input type="date" name="to" defaultValue={query.to} className={inputClass} />
          </label>
          <button type="submit" className={buttonClasses("secondary", "sm") + " h-9"}>
            Apply
          </button>
          {filtered ? (
            <Link to={`/o/${slug}/settings/audit`} className="h-9 content-center text-sm text-ink-muted underline-offset-4 hover:underline">
              Clear
            </Link>
          ) : null}
          <a href={`/o/${slug}/settings/audit.csv${csvParams.size ? `?${csvParams.toString()}` : ""}`} className={buttonClasses("secondary", "sm") + " ml-auto h-9"} download>
            Download CSV
          </a>
        </Form>
      </Card>
      {entries.length === 0 ? (
        <EmptyState title={filtered ? "No entries match these filters" : "No changes recorded yet"}>{filtered ? "Loosen the filters or clear them." : "Changes to devices, sites, members and settings appear here."}</EmptyState>
      ) : (
        <>
          <p className="text-sm text-ink-muted" aria-live="polite">
            {total > entries.length ? `${formatNumber(first)}–${formatNumber(first + entries.length - 1)} of ` : ""}
            {plural(total, { one: "entry", other: "entries" })}
            {total > csvLimit ? ` · the CSV holds the newest ${formatNumber(csvLimit)}` : ""}
          </p>
          <Table>
            <caption className="sr-only">Audit log entries, newest first</caption>
            <thead>
              <tr>
                <Th>When (UTC)</Th>
                <Th>Who</Th>
                <Th>What happened</Th>
                <Th>To what</Th>
              </tr>
            </thead>
            <tbody>
              {entries.map((entry) => (
                <tr key={entry.id} data-action={entry.action} className="align-top">
                  <Td className="tabular align-top whitespace-nowrap text-ink-muted">
                    <Time at={entry.at} clock />
                    <span className="block text-xs text-ink-faint">
                      <Time at={entry.at} now={now} />
                    </span>
                  </Td>
                  <Td className="align-top">
                    {entry.actor}
                    {entry.actorEmail ? <span className="block text-xs text-ink-muted">{entry.actorEmail}</span> : null}
                    {entry.apiTokenName ? <span className="block text-xs text-ink-muted">{`through the API token “${entry.apiTokenName}”`}</span> : null}
                  </Td>
                  <Td className="max-w-xl align-top">
                    <span className="font-medium">{entry.actionLabel}</span>
                    <p className="text-sm text-ink-muted">{entry.sentence}</p>
                    <details className="mt-1 text-xs">
                      <summary className="cursor-pointer text-ink-muted">Details</summary>
                      <dl className="mt-1 grid grid-cols-[max-content_1fr] gap-x-3 gap-y-0.5">
                        <dt className="text-ink-faint">action</dt>
                        <dd>
                          <code>{entry.action}</code>
                        </dd>
                        {entry.details.map((detail) => (
                          <div key={detail.field} className="contents">
                            <dt className="text-ink-faint">{detail.field}</dt>
                            <dd className="break-words">
                              {detail.lines.map((line, index) => (
                                <span key={index} className="block">
                                  {line}
                                </span>
                              ))}
                            </dd>
                          </div>
                        ))}
                        <dt className="text-ink-faint">from address</dt>
                        <dd className="font-mono">{entry.clientAddress || "—"}</dd>
                      </dl>
                    </details>
                  </Td>
                  <Td className="align-top">
                    <span className="block text-xs text-ink-faint">{entry.targetType}</span>
                    {entry.target || <span className="text-ink-faint">—</span>}
                  </Td>
                </tr>
              ))}
            </tbody>
          </Table>
          <Pager param="page" page={page} pages={pages} search={searchParams} label="Audit log pages" />
        </>
      )}
    </div>
  );
}
