import { Link } from "react-router";
import type { ProposalRow } from "#server/services/proposals.server";
import { formatInstant } from "#server/engine/format";
import { Table, Td, Th } from "../ui/table";
import { Time } from "../ui/time";
import { StateBadge } from "./proposal-bits";

/** What the table shows of a proposal (a row as the proposals service lists it). */
export type ListedProposal = Omit<ProposalRow, "stateLabel" | "authorUserId" | "liveRevision">;

/** Proposals as rows: title, state and approvals, window in the device's zone, author; the device when several are listed. */
export function ProposalTable({ proposals, slug, now, showDevice, caption }: { proposals: readonly ListedProposal[]; slug: string; now: string; showDevice: boolean; caption: string }) {
  return (
    <Table>
      <caption className="sr-only">{caption}</caption>
      <thead>
        <tr>
          <Th>Proposal</Th>
          {showDevice ? <Th>Device</Th> : null}
          <Th>State</Th>
          <Th>Change window</Th>
          <Th>Author</Th>
          <Th>Updated</Th>
        </tr>
      </thead>
      <tbody>
        {proposals.map((proposal) => (
          <tr key={proposal.id}>
            <Td className="max-sm:min-w-56!">
              <Link to={`/o/${slug}/devices/${proposal.deviceId}/proposals/${proposal.id}`} className="font-medium text-harbour underline-offset-4 hover:underline">
                {proposal.title}
              </Link>
              <span className="block text-xs text-ink-muted">
                on r{proposal.baseRevision}
                {proposal.stale ? " · the device moved on since" : ""}
                {proposal.appliedRevision ? ` · applied as r${proposal.appliedRevision}` : ""}
              </span>
            </Td>
            {showDevice ? (
              <Td>
                <Link to={`/o/${slug}/devices/${proposal.deviceId}/proposals`} className="font-mono text-harbour underline-offset-4 hover:underline">
                  {proposal.deviceName}
                </Link>
              </Td>
            ) : null}
            <Td>
              <StateBadge state={proposal.state} />
              {proposal.state === "in_review" || proposal.state === "approved" ? (
                <span className="block text-xs text-ink-muted">
                  {proposal.approvals} of {proposal.required} approvals
                </span>
              ) : null}
            </Td>
            <Td className="text-xs text-ink-muted max-sm:min-w-56!">
              <time dateTime={proposal.windowStart}>{formatInstant(proposal.windowStart, proposal.timezone)}</time>
              <span className="block">
                to <time dateTime={proposal.windowEnd}>{formatInstant(proposal.windowEnd, proposal.timezone)}</time>
              </span>
            </Td>
            <Td className="text-ink-muted">{proposal.authorName ?? proposal.authorEmail}</Td>
            <Td className="text-ink-muted tabular">
              <Time at={proposal.updatedAt} now={now} />
            </Td>
          </tr>
        ))}
      </tbody>
    </Table>
  );
}
