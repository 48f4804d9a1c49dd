import type { Route } from "./+types/proposals";
import { hasAtLeastRole, PAGE_ROLES, PROPOSAL_READ_ROLE } from "#server/auth/roles";
import { requireDevice } from "#server/http/device-access.server";
import { isOpenState } from "#server/proposals/state";
import { listProposals } from "#server/services/proposals.server";
import { ProposalTable } from "#app/components/proposals/proposal-table";
import { ButtonLink } from "#app/components/ui/button";
import { EmptyState } from "#app/components/ui/empty-state";

export const meta: Route.MetaFunction = () => [{ title: "Proposals · Sallyport" }];

export async function loader({ context }: Route.LoaderArgs) {
  const access = requireDevice(context, PROPOSAL_READ_ROLE);
  const proposals = await listProposals(access.organisation.id, { deviceId: access.device.id });
  return {
    slug: access.organisation.slug,
    base: `/o/${access.organisation.slug}/devices/${access.device.id}`,
    open: proposals.filter((proposal) => isOpenState(proposal.state)),
    closed: proposals.filter((proposal) => !isOpenState(proposal.state)),
    canPropose: hasAtLeastRole(access.role, PAGE_ROLES.proposeChange),
    now: new Date().toISOString(),
  };
}

export default function DeviceProposals({ loaderData }: Route.ComponentProps) {
  const { open, closed, slug, base, canPropose, now } = loaderData;
  return (
    <div className="space-y-8">
      <section aria-labelledby="open-heading">
        <div className="mb-3 flex flex-wrap items-end justify-between gap-3">
          <div>
            <h2 id="open-heading" className="font-semibold">
              Open proposals
            </h2>
            <p className="mt-1 max-w-2xl text-sm text-ink-muted">
              A proposal is a change drafted apart from the live model, reviewed by someone else, and applied as one revision inside its change window.
            </p>
          </div>
          {canPropose ? <ButtonLink to={`${base}/proposals/new`}>Propose a change</ButtonLink> : null}
        </div>
        {open.length === 0 ? (
          <EmptyState title="No open proposals">
            {canPropose ? "Propose a change to draft it on a copy of the current revision; nothing changes on the device until it is approved and applied." : "Engineers, admins and owners propose changes; reviewers approve them."}
          </EmptyState>
        ) : (
          <ProposalTable proposals={open} slug={slug} now={now} showDevice={false} caption="Open proposals of this device" />
        )}
      </section>
      {closed.length > 0 ? (
        <section aria-labelledby="closed-heading">
          <h2 id="closed-heading" className="mb-3 font-semibold">
            Applied, rejected and withdrawn
          </h2>
          <ProposalTable proposals={closed} slug={slug} now={now} showDevice={false} caption="Closed proposals of this device" />
        </section>
      ) : null}
    </div>
  );
}
