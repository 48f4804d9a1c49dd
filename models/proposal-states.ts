// The words of a change proposal's life and of a review's verdict (PRODUCT.md §6: proposal,
// review). Pure data, so the models, the server and the pages share one list; the database's
// CHECK constraints (migrations/20261204-0001-change-proposals.ts) list the same words.

export const PROPOSAL_STATES = ["draft", "in_review", "changes_requested", "approved", "rejected", "applied", "withdrawn"] as const;
export type ProposalState = (typeof PROPOSAL_STATES)[number];

export function isProposalState(value: unknown): value is ProposalState {
  return typeof value === "string" && (PROPOSAL_STATES as readonly string[]).includes(value);
}

/** States in which a proposal is still going somewhere: counted as open in the fleet table. */
export const OPEN_PROPOSAL_STATES = ["draft", "in_review", "changes_requested", "approved"] as const satisfies readonly ProposalState[];

export const REVIEW_VERDICTS = ["approved", "changes_requested", "rejected"] as const;
export type ReviewVerdict = (typeof REVIEW_VERDICTS)[number];
