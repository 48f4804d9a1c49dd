// The gate: the one place that says whether a change may go ahead as it is. Given the model
// before (the proposal's base, or the live revision for a direct save) and after, it returns
// the blocking reasons, each with its kind, its words and the details behind them: the lockout
// guard (an operator network loses every login path), the address the author works from losing
// its login, and the device's expectations that held before and fail after — or can no longer
// be checked (docs/decisions/011). Callers only read `kind`, `words` and `details`.
import { compareExpectations, formatWeekMinute, instantOfWeekMinute, lockoutGuard, outcomeRank, trace, type CompiledModel, type Expectation, type ExpectationResult } from "../engine/index.ts";

import { OUTCOME_LABELS } from "../engine/vocabulary.ts";
import type { GateReason } from "./gate-words.ts";

export { GATE_REASON_KINDS, GATE_REASON_LABELS, gateBlocks, gateSubject, type GateReason, type GateReasonKind } from "./gate-words.ts";

export type GateInput = {
  before: CompiledModel;
  after: CompiledModel;
  /** The address the author declared they work from ("" or absent: none). */
  workFrom?: string;
  /** The device's expectations, checked on both models. */
  expectations?: readonly Expectation[];
};

/** The failing probe `trace` replays, in words: "198.51.100.7 → wan https (to 203.0.113.2) at … gets Login with password". */
function witnessWords(result: ExpectationResult): string[] {
  const witness = result.witness;
  if (!witness) return [];
  return [`witness: ${witness.from} → ${witness.interface} ${witness.service}${witness.to ? ` (to ${witness.to})` : ""} at ${witness.at} gets ${OUTCOME_LABELS[witness.outcome]}`];
}

/** Lists of addresses are cut here; the count of the rest is said. */
const DETAILS_SHOWN = 12;

/** Every blocking reason; empty when the change may go ahead. */
export function gateReasons(input: GateInput): GateReason[] {
  const reasons: GateReason[] = [];
  for (const entry of lockoutGuard(input.before, input.after)) {
    const shown = entry.lostRanges.slice(0, DETAILS_SHOWN);
    reasons.push({
      kind: "lockout",
      words: `Operator network “${entry.operatorNetwork}” would lose every login path: no address in it would reach a login with an eligible account, on any interface, service or time.`,
      details: [...shown.map((range) => `no login any more from ${range}`), ...(entry.lostRanges.length > shown.length ? [`and ${entry.lostRanges.length - shown.length} more ranges`] : [])],
    });
  }
  const workFrom = input.workFrom?.trim();
  if (workFrom) {
    const before = loginPaths(input.before, workFrom);
    if (before.length > 0 && loginPaths(input.after, workFrom).length === 0) {
      reasons.push({
        kind: "work-from",
        words: `${workFrom}, where you said you work from, would lose every login it has.`,
        details: before.map((path) => `it logs in today on ${path}`),
      });
    }
  }
  for (const change of compareExpectations(input.before, input.after, input.expectations ?? [])) {
    if (!change.broken) continue;
    const now = change.after.status === "unknown" ? "can no longer be checked" : "fails";
    reasons.push({
      kind: "expectation",
      words: `Expectation “${change.id}” held before this change and ${now} after it: ${change.after.words}`,
      details: [`expected: ${change.expectation}`, `before: ${change.before.words}`, ...witnessWords(change.after)],
    });
  }
  return reasons;
}

const LOGIN = outcomeRank("login-mfa");

/**
 * Every interface × login service on which the address gets a login (with or without a second
 * factor) at some time of the week, with the first such time when not at every time: the
 * evaluation is exact per slice of the week (PRODUCT.md §3: schedules split the week into
 * slices), traced at each slice's start.
 */
export function loginPaths(device: CompiledModel, address: string): string[] {
  const starts = [...new Set(device.week.slices.map((slice) => slice.start))].sort((a, b) => a - b);
  const paths = new Map<string, { minutes: number[] }>();
  for (const minute of starts) {
    const at = instantOfWeekMinute(device, minute);
    for (const entry of device.model.interfaces) {
      for (const service of device.catalogue) {
        if (service.kind !== "login") continue;
        const result = trace(device, { from: address, interface: entry.name, service: service.name, at });
        if (outcomeRank(result.outcome) < LOGIN) continue;
        const key = `${entry.name} ${service.name}`;
        const path = paths.get(key) ?? { minutes: [] };
        path.minutes.push(minute);
        paths.set(key, path);
      }
    }
  }
  return [...paths].map(([key, { minutes }]) => (minutes.length === starts.length ? key : `${key} (from ${formatWeekMinute(minutes[0])})`));
}
