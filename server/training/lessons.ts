// Lessons (issue 12, docs/decisions/016): an ordered list of probes on a teaching scenario, with
// the trainer's notes per layer. A trainee predicts each layer's verdict before it is revealed,
// and the outcome where they say a layer decides; each prediction is graded against trace().
//
// What a page may show is decided here, in one place: `attemptView` and `presenterView` hand
// the page the layers reached so far and the question for the next one, never a later layer's
// name, verdict or number. Pure: the routes, the services and the tests share it.
import { z } from "zod";
import { compileModel, LAYERS, OUTCOMES, ProbeError, trace, type DeviceModel, type Layer, type Outcome } from "../engine/index.ts";
import { ProbeQuerySchema } from "../analysis/probe.ts";
import type { LessonProbe } from "./examples.ts";

export type { LessonProbe } from "./examples.ts";

export const MAX_LESSON_STEPS = 30;
export const MAX_NOTE_LENGTH = 1000;

export type LessonNotes = Partial<Record<Layer, string>>;
export type LessonStep = { probe: LessonProbe; notes: LessonNotes };

/** A stored lesson step: what `training_lessons.steps` holds, read back through this schema. */
export const LessonStepSchema = z.object({
  probe: ProbeQuerySchema,
  notes: z.partialRecord(z.enum(LAYERS), z.string().max(MAX_NOTE_LENGTH)).default({}),
});
export const LessonStepsSchema = z.array(LessonStepSchema).max(MAX_LESSON_STEPS);

/** The probe without empty optional fields, as a step stores it. */
export function stepProbe(probe: LessonProbe): LessonProbe {
  return {
    from: probe.from,
    interface: probe.interface,
    service: probe.service,
    ...(probe.to ? { to: probe.to } : {}),
    ...(probe.at ? { at: probe.at } : {}),
    ...(probe.account ? { account: probe.account } : {}),
  };
}

// ---------------------------------------------------------------------------------------------
// The script: each step's trace, taken once when an attempt starts

export type ScriptLayer = { layer: Layer; result: "pass" | "stop"; detail: string };
export type ScriptStep = {
  probe: LessonProbe;
  notes: LessonNotes;
  /** The probe's instant (UTC) and the device's wall clock then. */
  at: string;
  localTime: string;
  to: string | null;
  service: string;
  interface: string;
  outcome: Outcome;
  layers: ScriptLayer[];
  ruleId: string | null;
  eligibleAccounts: string[];
};
/** What an attempt is graded against: the scenario's model and every step's trace when it began. */
export type Script = { document: DeviceModel; steps: ScriptStep[] };

export type ScriptResult = { ok: true; script: Script } | { ok: false; step: number; message: string };

/** Traces every step on the model; a step whose probe no longer traces (an interface renamed) is named. */
export function scriptOf(document: DeviceModel, steps: readonly LessonStep[], now = Date.now()): ScriptResult {
  const device = compileModel(document);
  const out: ScriptStep[] = [];
  for (const [index, step] of steps.entries()) {
    try {
      // A step without `at` is traced at the moment the attempt begins, and graded against that.
      const result = trace(device, { ...step.probe, at: step.probe.at ?? now });
      out.push({
        probe: step.probe,
        notes: step.notes,
        at: result.at,
        localTime: result.localTime,
        to: result.to,
        service: result.service,
        interface: result.interface,
        outcome: result.outcome,
        layers: result.layers.map((layer) => ({ layer: layer.layer, result: layer.result, detail: layer.detail })),
        ruleId: result.ruleId,
        eligibleAccounts: [...result.eligibleAccounts],
      });
    } catch (error) {
      if (error instanceof ProbeError) return { ok: false, step: index, message: `Probe ${index + 1} no longer traces on this scenario: ${error.message}` };
      throw error;
    }
  }
  return { ok: true, script: { document, steps: out } };
}

// ---------------------------------------------------------------------------------------------
// Predictions and their grades

/** What a layer does with the probe: passes it on to the next layer, or decides the outcome. */
export const VERDICTS = ["pass", "stop"] as const;
export type Verdict = (typeof VERDICTS)[number];

export type Prediction = { verdict: Verdict; outcome: Outcome | null };
export type Graded = {
  step: number;
  layerIndex: number;
  layer: Layer;
  predicted: Prediction;
  actual: Verdict;
  /** At the deciding layer, the outcome; null elsewhere. */
  actualOutcome: Outcome | null;
  verdictCorrect: boolean;
  /** At the deciding layer, whether the outcome was predicted (null elsewhere). */
  outcomeCorrect: boolean | null;
  points: number;
  possible: number;
};

/** The schema of a posted prediction: a verdict, and the outcome whenever the trainee says the layer decides. */
export const PredictionFormSchema = z
  .object({
    step: z.coerce.number().int().min(0).max(MAX_LESSON_STEPS),
    layerIndex: z.coerce.number().int().min(0).max(LAYERS.length - 1),
    verdict: z.enum(VERDICTS, { message: "Choose what this layer does." }),
    outcome: z
      .string()
      .optional()
      .transform((value) => value || null)
      .pipe(z.enum(OUTCOMES, { message: "Choose an outcome." }).nullable()),
  })
  .superRefine((value, context) => {
    if (value.verdict === "stop" && value.outcome === null) context.addIssue({ code: "custom", path: ["outcome"], message: "You say this layer decides: choose the outcome it gives." });
  });

/** The question after `answered` predictions: the step and the layer asked next, or null when the lesson is done. */
export function questionAt(script: Script, answered: number): { step: number; layerIndex: number } | null {
  let left = answered;
  for (const [step, entry] of script.steps.entries()) {
    if (left < entry.layers.length) return { step, layerIndex: left };
    left -= entry.layers.length;
  }
  return null;
}

/** The total number of questions (a layer each), for the end of the lesson only. */
export function questionCount(script: Script): number {
  return script.steps.reduce((total, step) => total + step.layers.length, 0);
}

/**
 * One prediction graded against the script: a point for the verdict; at the deciding layer a
 * second point for the outcome (given only when the trainee said the layer decides).
 */
export function grade(script: Script, step: number, layerIndex: number, predicted: Prediction): Graded {
  const entry = script.steps[step];
  const layer = entry.layers[layerIndex];
  const deciding = layerIndex === entry.layers.length - 1;
  const verdictCorrect = predicted.verdict === layer.result;
  const outcomeCorrect = deciding ? predicted.verdict === "stop" && predicted.outcome === entry.outcome : null;
  return {
    step,
    layerIndex,
    layer: layer.layer,
    predicted: { verdict: predicted.verdict, outcome: predicted.verdict === "stop" ? predicted.outcome : null },
    actual: layer.result,
    actualOutcome: deciding ? entry.outcome : null,
    verdictCorrect,
    outcomeCorrect,
    points: (verdictCorrect ? 1 : 0) + (outcomeCorrect ? 1 : 0),
    possible: deciding ? 2 : 1,
  };
}

export function scoreOf(graded: readonly Graded[]): { points: number; possible: number } {
  return graded.reduce((sum, entry) => ({ points: sum.points + entry.points, possible: sum.possible + entry.possible }), { points: 0, possible: 0 });
}

// ---------------------------------------------------------------------------------------------
// What a page may show

/** The model elements a layer looks at, for the trainee to predict from. */
export type Evidence =
  | { kind: "arrival"; interface: string; role: string; addresses: string[]; family: 4 | 6 }
  | { kind: "inbound-rules"; rules: Array<{ position: number; id: string; interface: string; sources: string[]; destinations: string[]; services: string[]; schedule: string; action: string; enabled: boolean }>; defaultInbound: string; timezone: string }
  | { kind: "listener"; interface: string; listeners: string[]; unlistenedPort: string }
  | { kind: "service-kind"; service: string; protocol: string; port: number | null; serviceKind: string }
  | { kind: "login-sources"; accounts: Array<{ name: string; enabled: boolean; loginSources: string[]; services: string[] }>; account: string | null }
  | { kind: "second-factor"; accounts: Array<{ name: string; secondFactor: string }> };

const BUILTIN_KINDS: Record<string, { protocol: string; port: number | null; kind: string }> = {
  ssh: { protocol: "tcp", port: 22, kind: "login" },
  https: { protocol: "tcp", port: 443, kind: "login" },
  http: { protocol: "tcp", port: 80, kind: "login" },
  telnet: { protocol: "tcp", port: 23, kind: "login" },
  snmp: { protocol: "udp", port: 161, kind: "other" },
  ping: { protocol: "icmp", port: null, kind: "echo" },
};

export function evidenceOf(document: DeviceModel, step: ScriptStep, layer: Layer): Evidence {
  const iface = document.interfaces.find((entry) => entry.name === step.interface);
  switch (layer) {
    case "arrival":
      return { kind: "arrival", interface: step.interface, role: iface?.role ?? "other", addresses: iface?.addresses ?? [], family: step.probe.from.includes(":") ? 6 : 4 };
    case "inbound-rules":
      return {
        kind: "inbound-rules",
        rules: document.inboundRules.map((rule, index) => ({ position: index + 1, id: rule.id, interface: rule.interface, sources: rule.sources, destinations: rule.destinations, services: rule.services, schedule: rule.schedule, action: rule.action, enabled: rule.enabled })),
        defaultInbound: document.device.defaultInbound,
        timezone: document.device.timezone,
      };
    case "listener":
      return { kind: "listener", interface: step.interface, listeners: iface?.listeners ?? [], unlistenedPort: document.device.unlistenedPort };
    case "service-kind": {
      const custom = document.services.find((service) => service.name === step.service);
      const builtin = BUILTIN_KINDS[step.service];
      const port = /^(tcp|udp)\/(\d+)$/.exec(step.service);
      if (custom) return { kind: "service-kind", service: custom.name, protocol: custom.protocol, port: custom.port, serviceKind: custom.kind };
      if (builtin) return { kind: "service-kind", service: step.service, protocol: builtin.protocol, port: builtin.port, serviceKind: builtin.kind };
      return { kind: "service-kind", service: step.service, protocol: port?.[1] ?? "icmp", port: port ? Number(port[2]) : null, serviceKind: "other" };
    }
    case "login-sources":
      return { kind: "login-sources", accounts: document.accounts.map((account) => ({ name: account.name, enabled: account.enabled, loginSources: account.loginSources, services: account.services })), account: step.probe.account ?? null };
    case "second-factor":
      return { kind: "second-factor", accounts: document.accounts.map((account) => ({ name: account.name, secondFactor: account.secondFactor })) };
  }
}

export type RevealedLayer = { layer: Layer; evidence: Evidence; result: "pass" | "stop"; detail: string; note: string | null; graded: Graded | null };
export type ProbeView = {
  /** 0-based. */
  index: number;
  probe: LessonProbe;
  at: string;
  localTime: string;
  /** The scenario's time zone, for the instant. */
  timezone: string;
  to: string | null;
  /** The layers reached and revealed, in order. */
  revealed: RevealedLayer[];
  /** The layer reached and not yet revealed: its name and evidence, never its verdict. */
  question: { layerIndex: number; layer: Layer; evidence: Evidence } | null;
  /** Once the deciding layer is revealed: the outcome and what decided it. */
  outcome: { outcome: Outcome; ruleId: string | null; rulePosition: number | null; eligibleAccounts: string[]; decidedBy: Layer } | null;
};

function probeView(script: Script, index: number, shown: number, graded: readonly Graded[]): ProbeView {
  const step = script.steps[index];
  const revealed = step.layers.slice(0, shown).map((layer, layerIndex): RevealedLayer => ({
    layer: layer.layer,
    evidence: evidenceOf(script.document, step, layer.layer),
    result: layer.result,
    detail: layer.detail,
    note: step.notes[layer.layer]?.trim() || null,
    graded: graded.find((entry) => entry.step === index && entry.layerIndex === layerIndex) ?? null,
  }));
  const done = shown >= step.layers.length;
  const next = done ? null : step.layers[shown].layer;
  const rulePosition = step.ruleId ? script.document.inboundRules.findIndex((rule) => rule.id === step.ruleId) + 1 || null : null;
  return {
    index,
    probe: step.probe,
    at: step.at,
    localTime: step.localTime,
    timezone: script.document.device.timezone,
    to: done || shown > 0 ? step.to : null,
    revealed,
    question: next ? { layerIndex: shown, layer: next, evidence: evidenceOf(script.document, step, next) } : null,
    outcome: done ? { outcome: step.outcome, ruleId: step.ruleId, rulePosition, eligibleAccounts: step.eligibleAccounts, decidedBy: step.layers[step.layers.length - 1].layer } : null,
  };
}

export type AttemptView = {
  probeCount: number;
  /** The probe on the page. */
  probe: ProbeView;
  /** The probe the next question is on (null when done): the page links there. */
  currentProbe: number | null;
  score: { points: number; possible: number };
  done: boolean;
  /** At the end: every prediction that missed, in order. */
  misses: Graded[] | null;
};

/**
 * What an attempt's page shows after these graded predictions (in order), on probe `wanted`
 * (0-based; a probe not yet reached shows the current one instead).
 */
export function attemptView(script: Script, graded: readonly Graded[], wanted?: number): AttemptView {
  const question = questionAt(script, graded.length);
  const reached = question ? question.step : script.steps.length - 1;
  const index = wanted !== undefined && wanted >= 0 && wanted <= reached ? wanted : reached;
  const shown = question && index === question.step ? question.layerIndex : script.steps[index].layers.length;
  const done = question === null;
  return {
    probeCount: script.steps.length,
    probe: probeView(script, index, shown, graded),
    currentProbe: question ? question.step : null,
    score: scoreOf(graded),
    done,
    misses: done ? graded.filter((entry) => entry.points < entry.possible) : null,
  };
}

/** Presenter mode: probe `probe` (0-based) with its first `shown` layers revealed; clamped to what exists. */
export function presenterView(script: Script, probe: number, shown: number): { view: ProbeView; previous: { probe: number; shown: number } | null; next: { probe: number; shown: number } | null } {
  const index = Math.min(Math.max(0, probe), script.steps.length - 1);
  const total = script.steps[index].layers.length;
  const clamped = Math.min(Math.max(0, shown), total);
  const previous = clamped > 0 ? { probe: index, shown: clamped - 1 } : index > 0 ? { probe: index - 1, shown: script.steps[index - 1].layers.length } : null;
  const next = clamped < total ? { probe: index, shown: clamped + 1 } : index < script.steps.length - 1 ? { probe: index + 1, shown: 0 } : null;
  return { view: probeView(script, index, clamped, []), previous, next };
}
