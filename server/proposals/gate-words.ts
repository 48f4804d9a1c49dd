// The kinds of reason the gate (gate.server.ts) gives, and their labels: pure, so the pages can
// show them. A new kind gets its label here, or fails typecheck.

export const GATE_REASON_KINDS = ["lockout", "work-from", "expectation"] as const;
export type GateReasonKind = (typeof GATE_REASON_KINDS)[number];

/** One reason a change is blocked: what kind, a sentence, and the facts behind it (sources, services). */
export type GateReason = { kind: GateReasonKind; words: string; details: string[] };

export const GATE_REASON_LABELS: Record<GateReasonKind, string> = {
  lockout: "Lockout guard: operator network",
  "work-from": "Lockout guard: where you work from",
  expectation: "Expectation no longer holds",
};

/** The lockout guard's kinds; the others are the team's expectations. */
const LOCKOUT_KINDS: ReadonlySet<GateReasonKind> = new Set(["lockout", "work-from"]);

/**
 * What blocks, as the subject of a sentence: "the lockout guard", "a failing expectation"
 * (or "failing expectations"), or both. Refusals and the page's labels start from it.
 */
export function gateSubject(reasons: ReadonlyArray<{ kind: string }>): { words: string; plural: boolean } {
  const lockout = reasons.some((reason) => LOCKOUT_KINDS.has(reason.kind as GateReasonKind));
  const expectations = reasons.filter((reason) => reason.kind === "expectation").length;
  const failing = expectations > 1 ? "failing expectations" : "a failing expectation";
  if (lockout && expectations > 0) return { words: `the lockout guard and ${failing}`, plural: true };
  if (expectations > 0) return { words: failing, plural: expectations > 1 };
  return { words: "the lockout guard", plural: false };
}

/** "the lockout guard blocks", "failing expectations block" … */
export function gateBlocks(reasons: ReadonlyArray<{ kind: string }>): string {
  const subject = gateSubject(reasons);
  return `${subject.words} ${subject.plural ? "block" : "blocks"}`;
}
