import { Form, Link, useSearchParams } from "react-router";
import { DateTime } from "luxon";
import type { Route } from "./+types/changes";
import { requireRole } from "#server/auth/guard.server";
import { hasAtLeastRole } from "#server/auth/roles";
import { isProposalState, PROPOSAL_STATES, type ProposalState } from "#models/proposal-states";
import { PROPOSAL_STATE_LABELS } from "#server/proposals/state";
import { listProposals, proposalFilterChoices, type ProposalFilter } from "#server/services/proposals.server";
import { ProposalTable } from "#app/components/proposals/proposal-table";
import { PageErrorBoundary } from "#app/components/error-panel";
import { PageHeader } from "#app/components/ui/card";
import { EmptyState } from "#app/components/ui/empty-state";
import { formatNumber, plural } from "#server/engine/format";
import { isUuid } from "#server/validation/ids";

export const meta: Route.MetaFunction = () => [{ title: "Changes · Sallyport" }];

// A refusal shows inside the organisation's frame.
export const ErrorBoundary = PageErrorBoundary;


/** The filters from the URL, read leniently: an unknown value means no filter, so old links still open. */
function filtersOf(params: URLSearchParams) {
  const state = params.get("state") ?? "open";
  const device = params.get("device") ?? "";
  const author = params.get("author") ?? "";
  return {
    state: state === "all" || state === "open" || isProposalState(state) ? state : "open",
    device: isUuid(device) ? device : "",
    author: isUuid(author) ? author : "",
    review: params.get("review") === "mine",
    week: params.get("window") === "week",
  };
}

export async function loader({ request, context }: Route.LoaderArgs) {
  const access = requireRole(context);
  const filters = filtersOf(new URL(request.url).searchParams);
  // This week: Monday 00:00 to Monday 00:00, UTC (ISO 8601 weeks start on Monday).
  const monday = DateTime.utc().startOf("week");
  const filter: ProposalFilter = {
    ...(filters.state === "all" ? {} : { state: filters.state as ProposalState | "open" }),
    ...(filters.device ? { deviceId: filters.device } : {}),
    ...(filters.author ? { authorUserId: filters.author } : {}),
    ...(filters.review ? { waitingForReviewBy: access.user.id } : {}),
    ...(filters.week ? { windowFrom: monday.toJSDate(), windowTo: monday.plus({ weeks: 1 }).toJSDate() } : {}),
  };
  const [proposals, choices] = await Promise.all([listProposals(access.organisation.id, filter), proposalFilterChoices(access.organisation.id)]);
  return { proposals, choices, filters, slug: access.organisation.slug, canReview: hasAtLeastRole(access.role, "reviewer"), now: new Date().toISOString() };
}

// A long author or device name must not push the page sideways on a phone.
const SELECT = "h-9 max-w-full rounded-control border border-line-strong bg-surface px-2 text-sm";

export default function Changes({ loaderData }: Route.ComponentProps) {
  const [searchParams] = useSearchParams();
  const { proposals, choices, filters, slug, canReview, now } = loaderData;
  return (
    <>
      <PageHeader title="Changes" description="Every proposal of the organisation's devices: drafts, those waiting for review, approved ones waiting for their change window, and what was applied." />
      <Form method="get" role="search" className="mb-4 flex flex-wrap items-end gap-3">
        <label className="max-w-full min-w-0 text-sm">
          <span className="mb-1 block font-medium">State</span>
          <select name="state" defaultValue={filters.state} className={SELECT}>
            <option value="open">Open (not yet applied or closed)</option>
            <option value="all">Any state</option>
            {PROPOSAL_STATES.map((state) => (
              <option key={state} value={state}>
                {PROPOSAL_STATE_LABELS[state]}
              </option>
            ))}
          </select>
        </label>
        <label className="max-w-full min-w-0 text-sm">
          <span className="mb-1 block font-medium">Device</span>
          <select name="device" defaultValue={filters.device} className={SELECT}>
            <option value="">Any device</option>
            {choices.devices.map((device) => (
              <option key={device.id} value={device.id}>
                {device.label}
              </option>
            ))}
          </select>
        </label>
        <label className="max-w-full min-w-0 text-sm">
          <span className="mb-1 block font-medium">Author</span>
          <select name="author" defaultValue={filters.author} className={SELECT}>
            <option value="">Anyone</option>
            {choices.authors.map((author) => (
              <option key={author.id} value={author.id}>
                {author.label}
              </option>
            ))}
          </select>
        </label>
        <label className="inline-flex h-9 items-center gap-2 text-sm">
          <input type="checkbox" name="window" value="week" defaultChecked={filters.week} />
          Window this week
        </label>
        {canReview ? (
          <label className="inline-flex h-9 items-center gap-2 text-sm">
            <input type="checkbox" name="review" value="mine" defaultChecked={filters.review} />
            Waiting for my review
          </label>
        ) : null}
        <button type="submit" className="h-9 rounded-control border border-line-strong bg-surface px-3 text-sm font-medium hover:bg-surface-sunken">
          Apply
        </button>
        <span className="text-sm text-ink-muted" aria-live="polite">
          {plural(proposals.length, { one: "proposal", other: "proposals" })}
        </span>
      </Form>
      {canReview && !filters.review ? (
        <p className="mb-4 text-sm">
          <Link to={`?review=mine`} className="text-harbour underline underline-offset-4">
            Show what waits for my review
          </Link>
        </p>
      ) : null}
      {proposals.length === 0 ? (
        <EmptyState title={searchParams.toString() ? "No proposal matches these filters" : "No open proposals"}>
          Proposals are made from a device's Proposals tab ({formatNumber(choices.devices.length)} of the organisation's devices have had one).
        </EmptyState>
      ) : (
        <ProposalTable proposals={proposals} slug={slug} now={now} showDevice caption="Proposals of the organisation" />
      )}
    </>
  );
}
