// The "predict" drill's probe sets (issue 12, point 4; docs/decisions/016): N generated probes on
// a scenario, the same for the same seed, balanced across the outcomes the scenario can give;
// each with the answer a trainee must give — the outcome and the layer that decides it — taken
// from trace() itself. Pure: the engine's exposure map says which sources get which outcome on
// which interface, service and slice of the week, so a probe of each outcome is drawn from
// there, never guessed.
import { z } from "zod";
import { parseCidr } from "../engine/addresses.ts";
import {
  changeEffect,
  checkExpectations,
  expectationWords,
  compileModel,
  exposure,
  exposureSlices,
  findingKey,
  findings,
  instantInSlice,
  OUTCOMES,
  ProbeExpectationSchema,
  trace,
  type CompiledModel,
  type DeviceModel,
  type ExpectationResult,
  type Finding,
  type Layer,
  type Outcome,
  type ProbeExpectation,
} from "../engine/index.ts";
import { formatAddress } from "../engine/addresses.ts";
import { prng } from "../engine/testing/generate-model.ts";
import type { LessonProbe } from "./examples.ts";

export const MAX_DRILL_PROBES = 50;

/** Where a drawn source is taken from when its block allows: RFC 5737 and RFC 3849 documentation space, RFC 1918 and RFC 4193 private space. */
const READABLE_SOURCES = ["192.0.2.0/24", "198.51.100.0/24", "203.0.113.0/24", "2001:db8::/32", "10.0.0.0/8", "172.16.0.0/12", "192.168.0.0/16", "fd00::/8"].map((text) => parseCidr(text).range);

export type DrillProbe = {
  probe: LessonProbe & { to: string; at: string };
  /** What the trainee must answer, as trace() gives it. */
  expected: { outcome: Outcome; decidingLayer: Layer };
};

/** Where one outcome happens: an interface × device address × service × slice, and the sources that get it there. */
type Place = { interface: string; to: string; service: string; slice: number; cidrs: readonly string[] };

/** A uniformly drawn integer in [0, n) from a seeded generator, for bigint ranges (IPv6). */
function below(random: () => number, n: bigint): bigint {
  if (n <= 1n) return 0n;
  let value = 0n;
  // 32 bits at a time, enough of them to cover n, then reduced (the bias is negligible beside 2^32 per word).
  for (let bits = 0n; 1n << bits < n * 4294967296n; bits += 32n) value = (value << 32n) | BigInt(Math.floor(random() * 4294967296));
  return value % n;
}

/** A seeded shuffle (Fisher–Yates). */
function shuffled<T>(items: readonly T[], random: () => number): T[] {
  const out = [...items];
  for (let i = out.length - 1; i > 0; i--) {
    const j = Math.floor(random() * (i + 1));
    [out[i], out[j]] = [out[j], out[i]];
  }
  return out;
}

/**
 * `count` probes on the model for the seed: the outcomes the model can give are taken in turn
 * (in an order the seed shuffles), so each appears ⌊count/k⌋ or ⌈count/k⌉ times; for each, a
 * place where it happens and a source inside its addresses are drawn. Catalogue services only;
 * no account (every eligible account counts, as in the exposure map).
 */
export function predictDrill(model: DeviceModel, seed: number, count: number): DrillProbe[] {
  const wanted = Math.max(0, Math.min(MAX_DRILL_PROBES, Math.floor(count)));
  const device = compileModel(model);
  const map = exposure(device);
  const places = new Map<Outcome, Place[]>(OUTCOMES.map((outcome) => [outcome, []]));
  map.slices.forEach((slice, index) => {
    for (const entry of slice.entries) {
      for (const outcome of OUTCOMES) {
        if (entry.ranges[outcome].length > 0) places.get(outcome)!.push({ interface: entry.interface, to: entry.to, service: entry.service, slice: index, cidrs: entry.ranges[outcome] });
      }
    }
  });
  const random = prng(seed);
  const possible = shuffled(
    OUTCOMES.filter((outcome) => places.get(outcome)!.length > 0),
    random,
  );
  if (possible.length === 0 || wanted === 0) return [];
  const probes: DrillProbe[] = [];
  for (let i = 0; i < wanted; i++) {
    const outcome = possible[i % possible.length];
    const candidates = places.get(outcome)!;
    const place = candidates[Math.floor(random() * candidates.length)];
    const { range } = parseCidr(place.cidrs[Math.floor(random() * place.cidrs.length)]);
    // Inside the documentation or private ranges where the block has any, so a probe reads like the trade's examples (and never names a real network).
    const readable = READABLE_SOURCES.filter((r) => r.family === range.family && r.first <= range.last && range.first <= r.last);
    const pick = readable.length === 0 ? range : readable[Math.floor(random() * readable.length)];
    const first = pick.first > range.first ? pick.first : range.first;
    const last = pick.last < range.last ? pick.last : range.last;
    const from = formatAddress(range.family, first + below(random, last - first + 1n));
    const probe = { from, interface: place.interface, service: place.service, to: place.to, at: instantInSlice(device, place.slice) };
    // The answer is trace()'s, whatever the map said.
    const result = trace(device, probe);
    probes.push({ probe, expected: { outcome: result.outcome, decidingLayer: result.layers[result.layers.length - 1].layer } });
  }
  return probes;
}

// ---------------------------------------------------------------------------------------------
// Grading of every kind (docs/decisions/016, "Drills"). Each grade is computed from the engine
// — trace(), findings(), checkExpectations(), the exposure map, changeEffect() — never stored
// by a trainer by hand, so a grade is what the engine says of the trainee's answer.

/** What an answered predict question keeps: the trace in the shape the trace wording reads. */
export type DrillTrace = {
  outcome: Outcome;
  layers: Array<{ layer: Layer; result: "pass" | "stop"; detail: string }>;
  ruleId: string | null;
  eligibleAccounts: string[];
  interface: string;
  service: string;
  from: string;
  to: string | null;
  localTime: string;
};

export type ScriptedProbe = DrillProbe & { trace: DrillTrace };

/** The probes with their traces, taken once when an attempt starts (a later scenario edit never changes a started attempt). */
export function predictScript(model: DeviceModel, seed: number, count: number): ScriptedProbe[] {
  const device = compileModel(model);
  return predictDrill(model, seed, count).map((entry) => {
    const result = trace(device, entry.probe);
    return {
      ...entry,
      trace: {
        outcome: result.outcome,
        layers: result.layers.map((layer) => ({ layer: layer.layer, result: layer.result, detail: layer.detail })),
        ruleId: result.ruleId,
        eligibleAccounts: [...result.eligibleAccounts],
        interface: result.interface,
        service: result.service,
        from: result.from,
        to: result.to,
        localTime: result.localTime,
      },
    };
  });
}

export type PredictAnswer = { outcome: Outcome; layer: Layer };
export type PredictGrade = { answer: PredictAnswer; expected: PredictAnswer; outcomeCorrect: boolean; layerCorrect: boolean; points: number; possible: number };

/** A point for the outcome, a point for the deciding layer, each against trace()'s answer. */
export function gradePredict(probe: DrillProbe, answer: PredictAnswer): PredictGrade {
  const expected = { outcome: probe.expected.outcome, layer: probe.expected.decidingLayer };
  const outcomeCorrect = answer.outcome === expected.outcome;
  const layerCorrect = answer.layer === expected.layer;
  return { answer, expected, outcomeCorrect, layerCorrect, points: (outcomeCorrect ? 1 : 0) + (layerCorrect ? 1 : 0), possible: 2 };
}

// --- spot ------------------------------------------------------------------------------------

/** An element of the model a trainee may pick: "rule:allow-x", "listener:wan/ssh", "account:ada"… */
export type SpotElement = { ref: string; kind: SpotKind; label: string };
export const SPOT_KINDS = ["interface", "listener", "rule", "account", "address", "schedule", "operator-network"] as const;
export type SpotKind = (typeof SPOT_KINDS)[number];

/** The model view of a spot drill: every element a trainee may pick, in the document's order. */
export function spotElements(model: DeviceModel): SpotElement[] {
  const out: SpotElement[] = [];
  for (const iface of model.interfaces) out.push({ ref: `interface:${iface.name}`, kind: "interface", label: `${iface.name} (${iface.addresses.join(", ") || "no address"})` });
  for (const iface of model.interfaces) for (const listener of iface.listeners) out.push({ ref: `listener:${iface.name}/${listener}`, kind: "listener", label: `${listener} listening on ${iface.name}` });
  model.inboundRules.forEach((rule, index) =>
    out.push({ ref: `rule:${rule.id}`, kind: "rule", label: `${index + 1}. ${rule.id}: ${rule.action} ${rule.sources.join(", ")} → ${rule.interface} ${rule.services.join(", ")}${rule.enabled ? "" : " (disabled)"}` }),
  );
  for (const account of model.accounts) out.push({ ref: `account:${account.name}`, kind: "account", label: `${account.name} (from ${account.loginSources.join(", ") || "nowhere"}; second factor ${account.secondFactor})` });
  for (const address of model.addresses) out.push({ ref: `address:${address.name}`, kind: "address", label: `${address.name} (${address.entries.join(", ")})` });
  for (const schedule of model.schedules) out.push({ ref: `schedule:${schedule.name}`, kind: "schedule", label: schedule.name });
  for (const network of model.operatorNetworks) out.push({ ref: `operator-network:${network}`, kind: "operator-network", label: `operator network ${network}` });
  return out;
}

/**
 * The element that causes a finding, as the engine shows it: for a shadowed or redundant rule,
 * the earlier rule that decides its witness probe (the one doing the shadowing); for an
 * exposure finding on an interface and a service, the listener; otherwise the finding's first
 * element.
 */
export function spotCause(model: DeviceModel, finding: Finding): string | null {
  const [first, second] = finding.elements;
  if ((finding.code === "shadowed-rule" || finding.code === "redundant-rule") && finding.witness?.ruleId) return `rule:${finding.witness.ruleId}`;
  if (first?.startsWith("interface:") && second?.startsWith("service:")) {
    const iface = first.slice("interface:".length);
    const service = second.slice("service:".length);
    if (model.interfaces.some((entry) => entry.name === iface && entry.listeners.includes(service))) return `listener:${iface}/${service}`;
    return first;
  }
  if (!first) return null;
  return first.startsWith("address-group:") ? null : first;
}

/** The scenario's findings a spot drill may ask about: those whose cause is an element of the model view. */
export function spotFindings(model: DeviceModel): Array<{ key: string; finding: Finding; cause: string }> {
  const refs = new Set(spotElements(model).map((element) => element.ref));
  return findings(compileModel(model)).flatMap((finding) => {
    const cause = spotCause(model, finding);
    return cause && refs.has(cause) ? [{ key: findingKey(finding), finding, cause }] : [];
  });
}

export type SpotGrade = { picked: string; cause: string; correct: boolean; points: number; possible: number };

export function gradeSpot(cause: string, picked: string): SpotGrade {
  const correct = picked === cause;
  return { picked, cause, correct, points: correct ? 1 : 0, possible: 1 };
}

// --- goals (fix and order) ------------------------------------------------------------------

/** A goal is a probe expectation of the engine's (probe → outcome, all week or at a week time). */
export type DrillGoal = ProbeExpectation;
export const MAX_DRILL_GOALS = 20;
export const DrillGoalsSchema = z.array(ProbeExpectationSchema).max(MAX_DRILL_GOALS);

export type GoalCheck = { id: string; words: string; holds: boolean; result: string; witness?: ExpectationResult["witness"] };

/** Each goal checked exactly on the model (every slice for "all week": trace() on each). */
export function checkGoals(device: CompiledModel, goals: readonly DrillGoal[]): GoalCheck[] {
  return checkExpectations(device, goals).map((result) => ({ id: result.id, words: result.expectation, holds: result.holds, result: result.words, ...(result.witness ? { witness: result.witness } : {}) }));
}

// --- fix --------------------------------------------------------------------------------------

/** How far the trainee's model is from the trainer's answer, by effect (sources whose outcome differs). */
export type Collateral = { changed: boolean; headline: string; gains: string; loses: string; rules: { added: string[]; removed: string[]; changed: string[] } };

export type FixGrade = { goals: GoalCheck[]; pass: boolean; collateral: Collateral; points: number; possible: number };

/**
 * Pass only when every goal holds. The collateral change is the effect of going from the
 * trainer's answer to the trainee's model: nothing changed means the trainee's fix behaves
 * exactly as the answer for every source, place and time. A point per goal, and one more for no
 * collateral change.
 */
export function gradeFix(sandbox: DeviceModel, answer: DeviceModel, goals: readonly DrillGoal[]): FixGrade {
  const answerDevice = compileModel(answer);
  const device = compileModel(sandbox, { basis: answerDevice });
  const checks = checkGoals(device, goals);
  const effect = changeEffect(answerDevice, device);
  const rules = effect.rules;
  const collateral: Collateral = {
    changed: effect.changed,
    headline: effect.headline,
    gains: effect.totals.gains,
    loses: effect.totals.loses,
    rules: { added: rules.added.map((rule) => rule.id), removed: rules.removed.map((rule) => rule.id), changed: rules.changed.map((rule) => rule.id) },
  };
  const held = checks.filter((check) => check.holds).length;
  const pass = checks.length > 0 && held === checks.length;
  return { goals: checks, pass, collateral, points: held + (pass && !effect.changed ? 1 : 0), possible: checks.length + 1 };
}

// --- order ------------------------------------------------------------------------------------

/** Sources that get any answer at all (anything but "no answer"), summed over every interface address × service × slice of the week. */
export function exposedCount(device: CompiledModel): bigint {
  let total = 0n;
  for (const slice of exposureSlices(device)) {
    for (const entry of slice.entries) for (const outcome of OUTCOMES) if (outcome !== "silent") total += BigInt(entry.counts[outcome]);
  }
  return total;
}

/** The model with its inbound rules in the given order; null unless the order names each rule once. */
export function reorderRules(model: DeviceModel, order: readonly string[]): DeviceModel | null {
  if (order.length !== model.inboundRules.length || new Set(order).size !== order.length) return null;
  const byId = new Map(model.inboundRules.map((rule) => [rule.id, rule]));
  const rules = order.map((id) => byId.get(id));
  if (rules.some((rule) => rule === undefined)) return null;
  return { ...model, inboundRules: rules as DeviceModel["inboundRules"] };
}

/** Moves one rule of an order up or down by one place (the keyboard and no-script way to reorder). */
export function moveInOrder(order: readonly string[], id: string, direction: "up" | "down"): string[] {
  const from = order.indexOf(id);
  const to = direction === "up" ? from - 1 : from + 1;
  if (from < 0 || to < 0 || to >= order.length) return [...order];
  const out = [...order];
  [out[from], out[to]] = [out[to], out[from]];
  return out;
}

export type OrderGrade = { goals: GoalCheck[]; exposed: string; best: string; pass: boolean; points: number; possible: number };

/**
 * An order is graded on its goals and on its exposure against the best known order (the
 * trainer's answer, or the trainee's own when it is better and every goal holds there too):
 * a point per goal, one more when every goal holds with no more exposed addresses than the best.
 */
export function gradeOrder(model: DeviceModel, order: readonly string[], goals: readonly DrillGoal[], best: bigint): OrderGrade | null {
  const reordered = reorderRules(model, order);
  if (!reordered) return null;
  const device = compileModel(reordered);
  const checks = checkGoals(device, goals);
  const exposed = exposedCount(device);
  const held = checks.filter((check) => check.holds).length;
  const pass = held === checks.length && exposed <= best;
  return { goals: checks, exposed: exposed.toString(), best: best.toString(), pass, points: held + (pass ? 1 : 0), possible: checks.length + 1 };
}

/** The best exposure of an order drill: the trainer's order's, when every goal holds there. */
export function bestExposure(model: DeviceModel, answerOrder: readonly string[], goals: readonly DrillGoal[]): { exposed: bigint; goalsHold: boolean } | null {
  const reordered = reorderRules(model, answerOrder);
  if (!reordered) return null;
  const device = compileModel(reordered);
  return { exposed: exposedCount(device), goalsHold: checkGoals(device, goals).every((check) => check.holds) };
}

// ---------------------------------------------------------------------------------------------
// Attempts: the script an attempt is graded against, and what its page may show

type ScriptBase = { document: DeviceModel };
export type PredictScript = ScriptBase & { kind: "predict"; probes: ScriptedProbe[]; answers: PredictGrade[] };
export type SpotScript = ScriptBase & { kind: "spot"; finding: { key: string; code: string; title: string; detail: string; severity: string }; cause: string; elements: SpotElement[]; answers: SpotGrade[] };
export type FixScript = ScriptBase & { kind: "fix"; goals: DrillGoal[]; answer: DeviceModel; sandbox: DeviceModel; checks: FixGrade[] };
export type OrderScript = ScriptBase & { kind: "order"; goals: DrillGoal[]; order: string[]; best: string; checks: Array<OrderGrade & { order: string[] }> };
/** What `training_attempts.script` holds for a drill: the scenario's model when the attempt began and the kind's own part. */
export type DrillScript = PredictScript | SpotScript | FixScript | OrderScript;

/** Points and possible of a drill attempt so far: predict and spot add up their answers; fix and order count their latest check. */
export function drillScore(script: DrillScript): { points: number; possible: number; finished: boolean } {
  switch (script.kind) {
    case "predict": {
      const sum = script.answers.reduce((total, answer) => ({ points: total.points + answer.points, possible: total.possible + answer.possible }), { points: 0, possible: 0 });
      return { ...sum, finished: script.answers.length >= script.probes.length };
    }
    case "spot":
      return { points: script.answers[0]?.points ?? 0, possible: 1, finished: script.answers.length > 0 };
    case "fix": {
      const last = script.checks.at(-1);
      return { points: last?.points ?? 0, possible: last?.possible ?? script.goals.length + 1, finished: last?.pass ?? false };
    }
    case "order": {
      const last = script.checks.at(-1);
      return { points: last?.points ?? 0, possible: last?.possible ?? script.goals.length + 1, finished: last?.pass ?? false };
    }
  }
}

/** How many questions a drill attempt asks (probes, one pick, or goals and the exposure point). */
export function drillQuestionCount(script: DrillScript): number {
  return script.kind === "predict" ? script.probes.length : script.kind === "spot" ? 1 : script.goals.length + 1;
}

export type DrillView =
  | { kind: "predict"; count: number; answered: Array<{ probe: DrillProbe["probe"]; grade: PredictGrade; trace: DrillTrace }>; current: { index: number; probe: DrillProbe["probe"] } | null }
  | { kind: "spot"; finding: SpotScript["finding"]; elements: SpotElement[]; answer: SpotGrade | null }
  | { kind: "fix"; goals: string[]; sandbox: DeviceModel; checks: FixGrade[] }
  | { kind: "order"; goals: string[]; rules: Array<{ id: string; words: string }>; checks: Array<OrderGrade & { order: string[] }> };

/**
 * What a drill attempt's page may show, decided here: a predict drill's answered probes with
 * their traces and the next probe's question only (never a later probe's answer); a spot
 * drill's cause only once picked; a fix drill never shows the trainer's answer model (only
 * the effect against it); an order drill the trainee's current order.
 */
export function drillView(script: DrillScript): DrillView {
  switch (script.kind) {
    case "predict": {
      const answered = script.answers.map((grade, index) => ({ probe: script.probes[index].probe, grade, trace: script.probes[index].trace }));
      const next = script.answers.length < script.probes.length ? { index: script.answers.length, probe: script.probes[script.answers.length].probe } : null;
      return { kind: "predict", count: script.probes.length, answered, current: next };
    }
    case "spot":
      return { kind: "spot", finding: script.finding, elements: script.elements, answer: script.answers[0] ?? null };
    case "fix":
      return { kind: "fix", goals: script.goals.map((goal) => expectationWords(goal)), sandbox: script.sandbox, checks: script.checks };
    case "order": {
      const byId = new Map(script.document.inboundRules.map((rule) => [rule.id, rule]));
      return {
        kind: "order",
        goals: script.goals.map((goal) => expectationWords(goal)),
        rules: script.order.map((id) => {
          const rule = byId.get(id)!;
          return { id, words: `${rule.action} ${rule.sources.join(", ")} → ${rule.interface} ${rule.services.join(", ")}${rule.schedule === "all-week" ? "" : ` (${rule.schedule})`}${rule.enabled ? "" : " — disabled"}` };
        }),
        checks: script.checks,
      };
    }
  }
}
