// Plain-language wording of a trace, shared by the canvas, the step list and tests. Pure.
import type { TraceResult } from "#server/engine/trace";
import { LAYER_LABELS, type Outcome } from "#server/engine/vocabulary";

/** The layers' titles: the vocabulary's labels, so the reach table, its CSV and the canvas agree. */
export const LAYER_TITLES = LAYER_LABELS;

export type TraceView = Pick<TraceResult, "outcome" | "layers" | "ruleId" | "eligibleAccounts" | "interface" | "service" | "from" | "to">;

/** One sentence for the outcome, naming what decided it, e.g. "No answer: dropped by inbound rule drop-rest (position 4)". */
export function outcomeSentence(trace: TraceView, rulePosition?: number): string {
  const stop = trace.layers[trace.layers.length - 1];
  const rule = trace.ruleId ? `inbound rule ${trace.ruleId}${rulePosition ? ` (position ${rulePosition})` : ""}` : "";
  switch (trace.outcome) {
    case "silent":
      if (stop?.layer === "arrival") return `No answer: interface ${trace.interface} has no address of this family.`;
      if (stop?.layer === "inbound-rules") return rule ? `No answer: dropped by ${rule}.` : "No answer: no inbound rule matched and the device's default is deny.";
      return `No answer: ${trace.service} is not listening on ${trace.interface}, and unlistened ports are dropped.`;
    case "refused":
      return `Refused: nothing listens for ${trace.service} on ${trace.interface}, but the device answers with a reset — which reveals it.`;
    case "answered":
      return `Answered: ${trace.service} replies on ${trace.interface}, so the device is revealed.`;
    case "login-denied":
      return "Login page shown, login refused: no account allows this source.";
    case "login-mfa":
      return `Login page shown: ${trace.eligibleAccounts.join(", ")} may log in from here, each with a second factor.`;
    case "login-password":
      return `Login page shown: a password alone logs in (${trace.eligibleAccounts.join(", ")} without a second factor).`;
  }
}

/**
 * What the deciding layer decided, in a few words — "decides: password login" — so the layer
 * is marked by what happened, never as if the attacker was stopped when the door opened.
 */
export const DECIDED_WORDS: Record<Outcome, string> = {
  silent: "no answer",
  refused: "refused, device revealed",
  answered: "it answers",
  "login-denied": "login refused",
  "login-mfa": "login with second factor",
  "login-password": "password login",
};

export function decidesText(outcome: Outcome): string {
  return `decides: ${DECIDED_WORDS[outcome]}`;
}

/** A trainee's prediction of a layer: it passes the probe on, or it decides the outcome here. */
export const VERDICT_CHOICES: Record<"pass" | "stop", string> = {
  pass: "Passes it on to the next layer",
  stop: "Decides the outcome here",
};
