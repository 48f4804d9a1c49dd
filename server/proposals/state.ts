// A proposal's life as a state machine (docs/decisions/010): which step may follow which, in
// one table, so the service, the pages and the tests agree. Pure, browser-safe.
import { OPEN_PROPOSAL_STATES, PROPOSAL_STATES, type ProposalState } from "#models/proposal-states.ts";

export { OPEN_PROPOSAL_STATES, PROPOSAL_STATES, type ProposalState };

/**
 * What can happen to a proposal. `approve` is an approval that leaves the proposal short of the
 * approvals it needs; `complete-approval` the one that brings it there. `edit` is any change of
 * the draft or its window, `bring-up-to-date` a re-application on the live revision: both
 * reset the approvals.
 */
export const PROPOSAL_ACTIONS = ["edit", "submit", "comment", "request-changes", "approve", "complete-approval", "reject", "withdraw", "bring-up-to-date", "apply"] as const;
export type ProposalAction = (typeof PROPOSAL_ACTIONS)[number];

/** The characters a written reason needs at least: an override, an acknowledgement, an outside-window apply. */
export const WRITTEN_REASON_MIN = 20;

/** An approved proposal whose draft changes goes back to review: its approvals no longer count. */
const AFTER_EDIT: Partial<Record<ProposalState, ProposalState>> = { draft: "draft", in_review: "in_review", changes_requested: "changes_requested", approved: "in_review" };

const TRANSITIONS: Record<ProposalAction, Partial<Record<ProposalState, ProposalState>>> = {
  edit: AFTER_EDIT,
  "bring-up-to-date": AFTER_EDIT,
  submit: { draft: "in_review", changes_requested: "in_review" },
  comment: { draft: "draft", in_review: "in_review", changes_requested: "changes_requested", approved: "approved" },
  "request-changes": { in_review: "changes_requested", approved: "changes_requested" },
  approve: { in_review: "in_review", approved: "approved" },
  "complete-approval": { in_review: "approved", approved: "approved" },
  reject: { in_review: "rejected", changes_requested: "rejected", approved: "rejected" },
  withdraw: { draft: "withdrawn", in_review: "withdrawn", changes_requested: "withdrawn", approved: "withdrawn" },
  apply: { approved: "applied" },
};

/** The state after the action, or null when the action is not open in this state. */
export function nextState(state: ProposalState, action: ProposalAction): ProposalState | null {
  return TRANSITIONS[action][state] ?? null;
}

export function isOpenState(state: ProposalState): boolean {
  return (OPEN_PROPOSAL_STATES as readonly ProposalState[]).includes(state);
}

export const PROPOSAL_STATE_LABELS: Record<ProposalState, string> = {
  draft: "Draft",
  in_review: "In review",
  changes_requested: "Changes requested",
  approved: "Approved",
  rejected: "Rejected",
  applied: "Applied",
  withdrawn: "Withdrawn",
};

/** What an action is called when it is refused ("This proposal cannot be submitted: it is applied"). */
const ACTION_WORDS: Record<ProposalAction, string> = {
  edit: "edited",
  "bring-up-to-date": "brought up to date",
  submit: "submitted",
  comment: "commented on",
  "request-changes": "sent back for changes",
  approve: "approved",
  "complete-approval": "approved",
  reject: "rejected",
  withdraw: "withdrawn",
  apply: "applied",
};

/** Why the action is not open: the state said in words. */
export function notOpenWords(state: ProposalState, action: ProposalAction): string {
  const why: Partial<Record<ProposalState, string>> = {
    draft: "it is still a draft: the author submits it for review first",
    in_review: "it is waiting for review",
    changes_requested: "changes were requested: the author changes the draft and submits it again",
    approved: "it is approved and waiting to be applied",
    rejected: "it was rejected",
    applied: "it is applied already",
    withdrawn: "it was withdrawn",
  };
  return `This proposal cannot be ${ACTION_WORDS[action]}: ${why[state] ?? PROPOSAL_STATE_LABELS[state].toLowerCase()}.`;
}
