// The one error family for expected failures: a request the product refuses for a reason the
// user can act on (bad input, a name taken, a stale revision, a role too low). Services throw
// it; one helper in `server/http/refusals.server.ts` turns it into the response, so route
// modules never need an `instanceof` ladder. Anything else that is thrown is a bug (500).
// Pure: no framework, no database, so the workspace core and the services can both use it.

/** The HTTP statuses an expected failure may answer with. */
export type RefusalStatus = 400 | 401 | 403 | 404 | 405 | 409 | 413 | 415 | 422 | 429;

export type RefusalOptions = {
  /** The form field the message belongs beside; none for a message about the whole form. */
  field?: string;
  /** Extra response headers, e.g. Retry-After for a throttled sign-in. */
  headers?: Record<string, string>;
  /** Problems with document paths (a model that did not validate). */
  issues?: readonly RefusalIssue[];
  /** The edit was based on an older revision: what the current one is and what changed since. */
  conflict?: RevisionConflictFacts;
  /** Why a change is blocked (the gate of server/proposals/gate.server.ts): kind, words and details. */
  reasons?: readonly RefusalReason[];
  /**
   * The message without the reasons' words, for a page that lists the reasons once on its own
   * (the message keeps them, for API clients that read only the message).
   */
  lead?: string;
  /** What the refused change would have done, when it was judged by its effect (a direct save the gate blocks). */
  effect?: RefusalEffect;
};

/** A change's effect in short: the headline in words, distinct sources that gain and lose (decimal), findings new and resolved, the rule changes in words. */
export type RefusalEffect = { headline: string; gains: string; loses: string; findingsNew: number; findingsResolved: number; rules: readonly string[] };

export type RefusalReason = { kind: string; words: string; details: readonly string[] };

export type RevisionConflictFacts = {
  currentNumber: number;
  changes: ReadonlyArray<{ section: string; change: "added" | "removed" | "changed" | "moved"; element: string; details: string[] }>;
};

export type RefusalIssue = { path: string; message: string };

export class Refusal extends Error {
  readonly field?: string;
  readonly headers: Record<string, string>;
  readonly issues: readonly RefusalIssue[];
  readonly conflict?: RevisionConflictFacts;
  readonly reasons: readonly RefusalReason[];
  readonly lead?: string;
  readonly effect?: RefusalEffect;

  constructor(
    message: string,
    readonly status: RefusalStatus = 400,
    options: RefusalOptions = {},
  ) {
    super(message);
    this.name = "Refusal";
    this.field = options.field;
    this.headers = options.headers ?? {};
    this.issues = options.issues ?? [];
    this.conflict = options.conflict;
    this.reasons = options.reasons ?? [];
    this.lead = options.lead;
    this.effect = options.effect;
  }
}

export function isRefusal(error: unknown): error is Refusal {
  return error instanceof Refusal;
}
