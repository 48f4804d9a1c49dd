import { describe, expect, test } from "vitest";
import { compileModel, LAYERS, parseModel, trace, type DeviceModel } from "#server/engine/index";
import { LAYER_LABELS } from "#server/engine/vocabulary";
import { TRAINING_EXAMPLES } from "#server/training/examples";
import { attemptView, grade, presenterView, PredictionFormSchema, questionAt, questionCount, scoreOf, scriptOf, type Graded, type Script } from "#server/training/lessons";

// Lessons (docs/decisions/016): predictions graded against trace(); what a page may show.

function model(key: string): DeviceModel {
  const parsed = parseModel(TRAINING_EXAMPLES.find((example) => example.key === key)!.document);
  if (!parsed.ok) throw new Error("invalid example");
  return parsed.model;
}

function scriptFor(key: string): Script {
  const example = TRAINING_EXAMPLES.find((entry) => entry.key === key)!;
  const result = scriptOf(model(key), example.probes.map((step) => ({ probe: step.probe, notes: step.notes })), Date.UTC(2026, 11, 8, 9));
  if (!result.ok) throw new Error(result.message);
  return result.script;
}

/** Answers every question right, or wrong where `wrongAt` says (by position, 0-based). */
function answerAll(script: Script, wrongAt: ReadonlySet<number> = new Set()): Graded[] {
  const graded: Graded[] = [];
  for (let question = questionAt(script, 0); question; question = questionAt(script, graded.length)) {
    const step = script.steps[question.step];
    const actual = step.layers[question.layerIndex].result;
    const wrong = wrongAt.has(graded.length);
    const verdict = wrong ? (actual === "pass" ? "stop" : "pass") : actual;
    graded.push(grade(script, question.step, question.layerIndex, { verdict, outcome: verdict === "stop" ? step.outcome : null }));
  }
  return graded;
}

describe("A lesson's script and grades", () => {
  test("each step of the script is the trace of its probe, layer by layer", () => {
    const script = scriptFor("login-sources");
    const device = compileModel(model("login-sources"));
    for (const step of script.steps) {
      const result = trace(device, { ...step.probe, at: step.at });
      expect(step.layers).toEqual(result.layers.map((layer) => ({ layer: layer.layer, result: layer.result, detail: layer.detail })));
      expect(step.outcome).toBe(result.outcome);
    }
  });

  test("questions come layer by layer, probe by probe, one per layer reached", () => {
    const script = scriptFor("rule-order");
    // rule-order's first probe stops at the inbound rules: two questions; the second probe reaches all six layers.
    expect(script.steps.map((step) => step.layers.length)).toEqual([2, 6]);
    expect(questionCount(script)).toBe(8);
    expect(questionAt(script, 0)).toEqual({ step: 0, layerIndex: 0 });
    expect(questionAt(script, 1)).toEqual({ step: 0, layerIndex: 1 });
    expect(questionAt(script, 2)).toEqual({ step: 1, layerIndex: 0 });
    expect(questionAt(script, 8)).toBeNull();
  });

  test("a verdict earns a point; at the deciding layer the outcome earns a second, only when the trainee said it decides", () => {
    const script = scriptFor("rule-order");
    // Probe 1, layer 2 (inbound rules) decides: silent.
    expect(grade(script, 0, 1, { verdict: "stop", outcome: "silent" })).toMatchObject({ verdictCorrect: true, outcomeCorrect: true, points: 2, possible: 2 });
    expect(grade(script, 0, 1, { verdict: "stop", outcome: "refused" })).toMatchObject({ verdictCorrect: true, outcomeCorrect: false, points: 1, possible: 2 });
    expect(grade(script, 0, 1, { verdict: "pass", outcome: "silent" })).toMatchObject({ verdictCorrect: false, outcomeCorrect: false, points: 0, possible: 2, predicted: { verdict: "pass", outcome: null } });
    // Arrival passes: one point to win, no outcome asked.
    expect(grade(script, 0, 0, { verdict: "pass", outcome: null })).toMatchObject({ verdictCorrect: true, outcomeCorrect: null, points: 1, possible: 1 });
    expect(grade(script, 0, 0, { verdict: "stop", outcome: "silent" })).toMatchObject({ verdictCorrect: false, outcomeCorrect: null, points: 0, possible: 1 });
  });

  test("all right scores everything; one wrong verdict costs its point and is listed as the miss", () => {
    const script = scriptFor("second-factor");
    const perfect = answerAll(script);
    const total = questionCount(script) + script.steps.length;
    expect(scoreOf(perfect)).toEqual({ points: total, possible: total });
    const once = answerAll(script, new Set([1]));
    expect(scoreOf(once)).toEqual({ points: total - 1, possible: total });
    const view = attemptView(script, once);
    expect(view.done).toBe(true);
    expect(view.misses?.map((miss) => [miss.step, miss.layer])).toEqual([[0, "inbound-rules"]]);
  });

  test("a prediction that the layer decides needs the outcome; the schema says so beside the field", () => {
    const parsed = PredictionFormSchema.safeParse({ step: "0", layerIndex: "1", verdict: "stop", outcome: "" });
    expect(parsed.success).toBe(false);
    expect(parsed.error?.issues[0].path).toEqual(["outcome"]);
    expect(PredictionFormSchema.safeParse({ step: "0", layerIndex: "1", verdict: "pass", outcome: "" }).success).toBe(true);
    expect(PredictionFormSchema.safeParse({ step: "0", layerIndex: "1", verdict: "maybe" }).success).toBe(false);
  });
});

describe("What a page may show", () => {
  test("before any layer is revealed, the view names the first layer only: no later layer, no count of layers, no verdict, no outcome", () => {
    for (const example of TRAINING_EXAMPLES) {
      const script = scriptFor(example.key);
      const view = attemptView(script, []);
      expect(view.probe.revealed).toEqual([]);
      expect(view.probe.question?.layer).toBe("arrival");
      expect(view.probe.outcome).toBeNull();
      const text = JSON.stringify(view);
      for (const layer of LAYERS.slice(1)) {
        expect(text, `${example.key}: ${layer}`).not.toContain(`"${layer}"`);
        expect(text, `${example.key}: ${LAYER_LABELS[layer]}`).not.toContain(LAYER_LABELS[layer]);
      }
      // The trace's own words for later layers are not there either.
      expect(text).not.toMatch(/first match|listening|eligible|second factor/);
    }
  });

  test("after each answer exactly one more layer is revealed, and the next one is named only once the previous passed", () => {
    const script = scriptFor("login-sources");
    const graded = answerAll(script);
    for (let answered = 0; answered <= graded.length; answered++) {
      const view = attemptView(script, graded.slice(0, answered));
      const question = questionAt(script, answered);
      if (!question) break;
      expect(view.probe.index).toBe(question.step);
      expect(view.probe.revealed.map((layer) => layer.layer)).toEqual(script.steps[question.step].layers.slice(0, question.layerIndex).map((layer) => layer.layer));
      const text = JSON.stringify(view);
      for (const later of script.steps[question.step].layers.slice(question.layerIndex + 1)) expect(text).not.toContain(`"${later.layer}"`);
    }
  });

  test("a probe not reached yet cannot be asked for: the current one shows instead", () => {
    const script = scriptFor("rule-order");
    expect(attemptView(script, [], 1).probe.index).toBe(0);
    const afterFirst = answerAll(script).slice(0, 2);
    expect(attemptView(script, afterFirst, 0).probe.outcome?.outcome).toBe("silent");
    expect(attemptView(script, afterFirst, 1).probe.revealed).toEqual([]);
  });

  test("presenter mode steps → and ← through every layer of every probe, clamped to what exists", () => {
    const script = scriptFor("rule-order");
    const start = presenterView(script, 0, 0);
    expect(start.previous).toBeNull();
    expect(start.view.revealed).toEqual([]);
    expect(JSON.stringify(start.view)).not.toContain('"inbound-rules"');
    expect(start.next).toEqual({ probe: 0, shown: 1 });
    expect(presenterView(script, 0, 2).next).toEqual({ probe: 1, shown: 0 });
    expect(presenterView(script, 0, 2).view.outcome?.outcome).toBe("silent");
    expect(presenterView(script, 1, 0).previous).toEqual({ probe: 0, shown: 2 });
    expect(presenterView(script, 1, 99).view.revealed).toHaveLength(6);
    expect(presenterView(script, 1, 99).next).toBeNull();
    expect(presenterView(script, -4, -1).view.index).toBe(0);
  });
});

describe("The lesson editor's probe form", () => {
  test("reads a probe with empty optional fields and a note per layer; refuses control characters in a note", async () => {
    const { StepFormSchema } = await import("#server/training/schemas");
    const parsed = StepFormSchema.safeParse({ intent: "add-step", version: "1", from: "203.0.113.9", interface: "wan", service: "https", to: "", at: "", account: "", "note-arrival": "  **wan** has it  ", "note-listener": "" });
    expect(parsed.success && parsed.data).toEqual({ probe: { from: "203.0.113.9", interface: "wan", service: "https", to: undefined, at: undefined, account: undefined }, notes: { arrival: "**wan** has it" } });
    const bell = StepFormSchema.safeParse({ from: "203.0.113.9", interface: "wan", service: "https", "note-arrival": "ring\u0007" });
    expect(bell.success).toBe(false);
    expect(bell.error?.issues[0].path).toEqual(["note-arrival"]);
    const missing = StepFormSchema.safeParse({ interface: "wan", service: "https" });
    expect(missing.error?.issues[0].path).toEqual(["from"]);
  });
});
