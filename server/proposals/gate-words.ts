// The kinds of reason the gate (gate.server.ts) gives, and their labels: pure, so the pages can
// show them. A new kind gets its label here, or fails typecheck.

export const GATE_REASON_KINDS = ["lockout", "work-from"] as const;
export type GateReasonKind = (typeof GATE_REASON_KINDS)[number];

/** One reason a change is blocked: what kind, a sentence, and the facts behind it (sources, services). */
export type GateReason = { kind: GateReasonKind; words: string; details: string[] };

export const GATE_REASON_LABELS: Record<GateReasonKind, string> = {
  lockout: "Lockout guard: operator network",
  "work-from": "Lockout guard: where you work from",
};
