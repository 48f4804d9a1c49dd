import { describe, expect, test } from "vitest";
import { compileModel, findings, instantInSlice, LAYERS, OUTCOMES, parseModel, trace, type DeviceModel, type DeviceModelInput } from "#server/engine/index";
import {
  checkGoals,
  drillView,
  exposedCount,
  gradeFix,
  gradeOrder,
  gradePredict,
  gradeSpot,
  moveInOrder,
  predictScript,
  reorderRules,
  spotCause,
  spotElements,
  spotFindings,
  type DrillGoal,
  type FixScript,
  type PredictScript,
  type SpotScript,
} from "#server/training/drills";
import { trainingExample, TRAINING_EXAMPLES } from "#server/training/examples";

// Drills graded by the engine (issue 12, point 4; docs/decisions/016, "Drills"): every grade
// here is related to trace() on the same model, never to a value written by hand.

function validated(input: DeviceModelInput): DeviceModel {
  const parsed = parseModel(input);
  if (!parsed.ok) throw new Error(`invalid model: ${JSON.stringify(parsed.errors.slice(0, 3))}`);
  return parsed.model;
}

function example(key: string): DeviceModel {
  const found = trainingExample(key);
  if (!found) throw new Error(`no example ${key}`);
  return validated(found.document);
}

function goal(id: string, from: string, iface: string, service: string, expect: DrillGoal["expect"]): DrillGoal {
  return { id, note: "", kind: "probe", from, interface: iface, service, when: "all-week", expect };
}

/** Whether a goal holds, by trace() alone: the probe gets the outcome in every slice of the week. */
function holdsByTrace(model: DeviceModel, entry: DrillGoal): boolean {
  const device = compileModel(model);
  return device.week.slices.every((_, slice) => trace(device, { from: entry.from, interface: entry.interface, service: entry.service, at: instantInSlice(device, slice) }).outcome === entry.expect);
}

describe("Call the outcome (predict)", () => {
  test("every scripted probe carries trace()'s own answer and trace, and answering with it scores every point", () => {
    for (const shipped of TRAINING_EXAMPLES) {
      const model = validated(shipped.document);
      const device = compileModel(model);
      for (const probe of predictScript(model, 7, 12)) {
        const result = trace(device, probe.probe);
        // The deciding layer is the last one the trace lists (PRODUCT.md §3, the six layers in order).
        expect(probe.expected).toEqual({ outcome: result.outcome, decidingLayer: result.layers.at(-1)!.layer });
        expect(probe.trace.layers.map((layer) => layer.layer)).toEqual(result.layers.map((layer) => layer.layer));
        expect(gradePredict(probe, { outcome: result.outcome, layer: result.layers.at(-1)!.layer })).toMatchObject({ points: 2, possible: 2, outcomeCorrect: true, layerCorrect: true });
      }
    }
  });

  test("a wrong layer or a wrong outcome costs exactly its own point", () => {
    const model = example("rule-order");
    const [probe] = predictScript(model, 3, 1);
    const otherLayer = LAYERS.find((layer) => layer !== probe.expected.decidingLayer)!;
    const otherOutcome = OUTCOMES.find((outcome) => outcome !== probe.expected.outcome)!;
    expect(gradePredict(probe, { outcome: probe.expected.outcome, layer: otherLayer })).toMatchObject({ points: 1, outcomeCorrect: true, layerCorrect: false });
    expect(gradePredict(probe, { outcome: otherOutcome, layer: probe.expected.decidingLayer })).toMatchObject({ points: 1, outcomeCorrect: false, layerCorrect: true });
    expect(gradePredict(probe, { outcome: otherOutcome, layer: otherLayer }).points).toBe(0);
  });

  test("the page's view holds no probe beyond the one asked, nor its answer", () => {
    const model = example("login-sources");
    const probes = predictScript(model, 11, 6);
    const script: PredictScript = { kind: "predict", document: model, probes, answers: [gradePredict(probes[0], { outcome: "silent", layer: "arrival" })] };
    const view = drillView(script);
    if (view.kind !== "predict") throw new Error("wrong kind");
    expect(view.answered).toHaveLength(1);
    expect(view.current?.index).toBe(1);
    const text = JSON.stringify(view);
    // The asked probe is shown without its trace or expected answer; later probes not at all.
    expect(text).not.toContain(JSON.stringify(probes[1].trace));
    for (const later of probes.slice(2)) expect(text).not.toContain(JSON.stringify(later.probe));
    expect(Object.keys(view.current!).sort()).toEqual(["index", "probe"]);
  });
});

describe("Find the cause (spot)", () => {
  test("a shadowed rule's cause is the earlier rule that decides its witness probe, as trace() shows", () => {
    const model = example("rule-order");
    const device = compileModel(model);
    const shadowed = findings(device).find((finding) => finding.code === "shadowed-rule" && finding.elements.includes("rule:allow-ops-centre"));
    expect(shadowed?.witness).toBeDefined();
    const cause = spotCause(model, shadowed!);
    // The witness probe is decided by the rule that shadows (first match wins: PRODUCT.md §3, inbound rules).
    expect(cause).toBe(`rule:${trace(device, shadowed!.witness!.probe).ruleId}`);
    expect(cause).toBe("rule:drop-internet");
    expect(spotElements(model).map((element) => element.ref)).toContain(cause);
  });

  test("an exposure finding's cause is the listener it is about, one of the model view's elements", () => {
    const model = example("stray-listener");
    const listed = spotFindings(model);
    const listeners = listed.filter((entry) => entry.cause.startsWith("listener:"));
    expect(listeners.length).toBeGreaterThan(0);
    const refs = new Set(spotElements(model).map((element) => element.ref));
    for (const entry of listed) expect(refs.has(entry.cause)).toBe(true);
    for (const entry of listeners) {
      const [iface, service] = entry.cause.slice("listener:".length).split("/");
      expect(model.interfaces.find((candidate) => candidate.name === iface)?.listeners).toContain(service);
      // Its witness, where it has one, arrives on that interface for that service.
      if (entry.finding.witness) expect(trace(compileModel(model), entry.finding.witness.probe)).toMatchObject({ interface: iface });
    }
  });

  test("a pick is right only when it is the engine's cause, and the view hides the cause until then", () => {
    expect(gradeSpot("rule:drop-internet", "rule:drop-internet")).toMatchObject({ correct: true, points: 1, possible: 1 });
    expect(gradeSpot("rule:drop-internet", "rule:allow-ops-centre")).toMatchObject({ correct: false, points: 0 });
    const model = example("rule-order");
    const found = spotFindings(model)[0];
    const script: SpotScript = { kind: "spot", document: model, finding: { key: found.key, code: found.finding.code, title: found.finding.title, detail: found.finding.detail, severity: found.finding.severity }, cause: found.cause, elements: spotElements(model), answers: [] };
    const view = drillView(script);
    expect(JSON.stringify(view)).not.toContain('"cause"');
  });
});

describe("Repair the model (fix)", () => {
  const scenario = example("rule-order");
  // The operations centre must reach the console (with its second factor); the rest of the internet must get no answer.
  const goals = [goal("goal-1", "192.0.2.70", "outside", "https", "login-mfa"), goal("goal-2", "203.0.113.9", "outside", "https", "silent")];
  const answer = reorderRules(scenario, ["allow-ops-centre", "drop-internet", "allow-depot-admins", "drop-inside"])!;

  test("goal checks equal trace() in every slice of the week", () => {
    for (const model of [scenario, answer]) {
      const checks = checkGoals(compileModel(model), goals);
      expect(checks.map((check) => check.holds)).toEqual(goals.map((entry) => holdsByTrace(model, entry)));
    }
  });

  test("an incomplete fix is not a pass; the trainer's fix passes with no collateral change", () => {
    // Deleting the drop lets the operations centre in, but the rest of the internet now gets the login page.
    const incomplete = { ...scenario, inboundRules: scenario.inboundRules.filter((rule) => rule.id !== "drop-internet") };
    expect(holdsByTrace(incomplete, goals[0])).toBe(true);
    expect(holdsByTrace(incomplete, goals[1])).toBe(false);
    const partial = gradeFix(incomplete, answer, goals);
    expect(partial.pass).toBe(false);
    expect(partial.points).toBe(1);
    expect(partial.collateral.changed).toBe(true);

    const right = gradeFix(answer, answer, goals);
    expect(right).toMatchObject({ pass: true, points: 3, possible: 3 });
    expect(right.collateral.changed).toBe(false);
    // The scenario as shipped misses goal 1.
    expect(gradeFix(scenario, answer, goals).pass).toBe(false);
  });

  test("a fix that meets every goal but changes more than needed passes, shows the collateral change and loses that point", () => {
    // Every goal holds, and SSH from the operations centre is switched off as well: not asked for.
    const overdone = { ...answer, interfaces: answer.interfaces.map((entry) => (entry.name === "outside" ? { ...entry, listeners: entry.listeners.filter((name) => name !== "ssh") } : entry)) };
    expect(goals.every((entry) => holdsByTrace(overdone, entry))).toBe(true);
    const graded = gradeFix(overdone, answer, goals);
    expect(graded.pass).toBe(true);
    expect(graded.collateral.changed).toBe(true);
    expect(BigInt(graded.collateral.loses)).toBeGreaterThan(0n);
    expect(graded.points).toBe(goals.length);
  });

  test("the fix view never holds the trainer's answer model", () => {
    const script: FixScript = { kind: "fix", document: scenario, goals, answer: { ...answer, device: { ...answer.device, name: "answer-only-name" } }, sandbox: scenario, checks: [] };
    expect(JSON.stringify(drillView(script))).not.toContain("answer-only-name");
  });
});

describe("Put the rules in order (order)", () => {
  // Invented: Tallow & Pine's console. A drop placed above the broad SSH allow keeps the internet out of SSH.
  const model = validated({
    schemaVersion: 2,
    device: { name: "tallow-gw", timezone: "UTC", defaultInbound: "allow", unlistenedPort: "drop" },
    interfaces: [{ name: "wan", role: "wan", addresses: ["198.51.100.9/24"], listeners: ["https", "ssh"] }],
    addresses: [{ name: "office", entries: ["192.0.2.0/28"] }],
    inboundRules: [
      { id: "allow-ssh-any", interface: "wan", sources: ["any"], destinations: ["any"], services: ["ssh"], action: "allow" },
      { id: "allow-office", interface: "wan", sources: ["office"], destinations: ["any"], services: ["https", "ssh"], action: "allow" },
      { id: "drop-rest", interface: "wan", sources: ["any"], destinations: ["any"], services: ["any"], action: "deny" },
    ],
    accounts: [{ name: "ops-ines", loginSources: ["office"], secondFactor: "totp" }],
    operatorNetworks: ["office"],
  });
  const goals = [goal("goal-1", "192.0.2.5", "wan", "https", "login-mfa")];
  const orders = [
    ["allow-ssh-any", "allow-office", "drop-rest"],
    ["allow-ssh-any", "drop-rest", "allow-office"],
    ["allow-office", "allow-ssh-any", "drop-rest"],
    ["allow-office", "drop-rest", "allow-ssh-any"],
    ["drop-rest", "allow-ssh-any", "allow-office"],
    ["drop-rest", "allow-office", "allow-ssh-any"],
  ];

  test("an order passes exactly when its goals hold (by trace) with the fewest exposed addresses of all orders that meet them", () => {
    const meeting = orders.filter((order) => goals.every((entry) => holdsByTrace(reorderRules(model, order)!, entry)));
    const best = meeting.map((order) => exposedCount(compileModel(reorderRules(model, order)!))).reduce((low, value) => (value < low ? value : low));
    for (const order of orders) {
      const graded = gradeOrder(model, order, goals, best)!;
      const holds = goals.every((entry) => holdsByTrace(reorderRules(model, order)!, entry));
      expect(graded.goals.every((check) => check.holds)).toBe(holds);
      expect(graded.pass).toBe(holds && BigInt(graded.exposed) === best);
    }
    // The tight order keeps the internet off SSH; the loose one that also meets the goal does not.
    expect(gradeOrder(model, ["allow-office", "drop-rest", "allow-ssh-any"], goals, best)!.pass).toBe(true);
    expect(gradeOrder(model, ["allow-office", "allow-ssh-any", "drop-rest"], goals, best)!).toMatchObject({ pass: false, points: 1, possible: 2 });
  });

  test("the exposed count adds up the sources that get any answer, as trace() gives it for a sample", () => {
    const tight = compileModel(reorderRules(model, ["allow-office", "drop-rest", "allow-ssh-any"])!);
    const loose = compileModel(reorderRules(model, ["allow-office", "allow-ssh-any", "drop-rest"])!);
    // 203.0.113.7 (outside the office) reaches SSH only in the loose order.
    expect(trace(tight, { from: "203.0.113.7", interface: "wan", service: "ssh" }).outcome).toBe("silent");
    expect(trace(loose, { from: "203.0.113.7", interface: "wan", service: "ssh" }).outcome).not.toBe("silent");
    expect(exposedCount(loose)).toBeGreaterThan(exposedCount(tight));
  });

  test("moving a rule swaps it with its neighbour; an order that does not name each rule once is refused", () => {
    expect(moveInOrder(["a", "b", "c"], "b", "up")).toEqual(["b", "a", "c"]);
    expect(moveInOrder(["a", "b", "c"], "c", "down")).toEqual(["a", "b", "c"]);
    expect(reorderRules(model, ["allow-office", "drop-rest"])).toBeNull();
    expect(reorderRules(model, ["allow-office", "drop-rest", "drop-rest"])).toBeNull();
    expect(gradeOrder(model, ["allow-office", "nope", "drop-rest"], goals, 0n)).toBeNull();
  });
});
