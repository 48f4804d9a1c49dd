import type { Route } from "./+types/audit";
import { requireRole } from "#server/auth/guard.server";
import { PAGE_ROLES } from "#server/auth/roles";
import { listAuditEvents } from "#server/services/audit.server";
import { EmptyState } from "#app/components/ui/empty-state";
import { Table, Td, Th } from "#app/components/ui/table";

export const meta: Route.MetaFunction = () => [{ title: "Audit log · Sallyport" }];

// Reviewers and above: the record is evidence for change review and audits; trainees do not need it.
export async function loader({ context }: Route.LoaderArgs) {
  const access = requireRole(context, PAGE_ROLES.auditLog);
  const events = await listAuditEvents(access.organisation.id);
  return {
    events: events.map((event) => ({
      id: String(event.id),
      at: event.createdAt.toISOString(),
      actor: event.actorEmail,
      action: event.action,
      target: `${event.targetType}${event.targetId ? ` ${event.targetId.slice(0, 8)}` : ""}`,
      changes: JSON.stringify(event.changes),
      clientAddress: event.clientAddress,
    })),
  };
}

export default function AuditLog({ loaderData }: Route.ComponentProps) {
  if (loaderData.events.length === 0) return <EmptyState title="No changes recorded yet" />;
  return (
    <>
      <p className="mb-4 text-sm text-ink-muted">Append-only: entries cannot be edited or deleted, by anyone. The latest 200 are shown.</p>
      <Table>
        <thead>
          <tr>
            <Th>When (UTC)</Th>
            <Th>Who</Th>
            <Th>What</Th>
            <Th>Target</Th>
            <Th>Details</Th>
          </tr>
        </thead>
        <tbody>
          {loaderData.events.map((event) => (
            <tr key={event.id}>
              <Td className="tabular whitespace-nowrap text-ink-muted">{event.at.replace("T", " ").slice(0, 19)}</Td>
              <Td>
                {event.actor}
                <div className="text-xs text-ink-faint">{event.clientAddress}</div>
              </Td>
              <Td>
                <code>{event.action}</code>
              </Td>
              <Td className="text-ink-muted">{event.target}</Td>
              <Td className="max-w-xs font-mono text-xs break-all text-ink-muted">{event.changes}</Td>
            </tr>
          ))}
        </tbody>
      </Table>
    </>
  );
}
