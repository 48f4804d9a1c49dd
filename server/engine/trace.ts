// Trace: one probe through every layer, each layer's verdict and the deciding rule/account.

import { formatAddress } from "./addresses.ts";
import type { CompiledModel, ProbeInput, ResolvedProbe } from "./compile.ts";
import { runValueAt } from "./domain.ts";
import { OUTCOMES } from "./vocabulary.ts";
import type { Layer, Outcome } from "./vocabulary.ts";

export interface TraceLayer {
  readonly layer: Layer;
  /** "stop" on the layer that decided the outcome (always the last one listed), "pass" before it. */
  readonly result: "pass" | "stop";
  readonly detail: string;
  readonly ruleId?: string;
}

export interface TraceResult {
  readonly outcome: Outcome;
  /** The probe's instant, ISO 8601 in UTC. */
  readonly at: string;
  /** The same instant on the device's wall clock, with its offset. */
  readonly localTime: string;
  readonly from: string;
  readonly interface: string;
  readonly service: string;
  /** The destination used (RFC 5952 for IPv6); null when arrival failed without one. */
  readonly to: string | null;
  readonly layers: readonly TraceLayer[];
  /** The inbound rule that matched (allow or deny), or null when none did or arrival failed. */
  readonly ruleId: string | null;
  readonly eligibleAccounts: readonly string[];
}

/** What a trace needs from an evaluator: the first matching rule and the eligible accounts. */
export interface LayerOracle {
  /** Position of the first matching inbound rule, or -1. */
  firstMatch(probe: ResolvedProbe): number;
  /** Indices of eligible accounts, in document order. */
  eligible(probe: ResolvedProbe, serviceName: string): number[];
}

const oracles = new WeakMap<CompiledModel, LayerOracle>();

/** The compiled oracle: partitions and bitsets. */
export function compiledOracle(engine: CompiledModel): LayerOracle {
  let oracle = oracles.get(engine);
  if (oracle === undefined) oracles.set(engine, (oracle = makeOracle(engine)));
  return oracle;
}

function makeOracle(engine: CompiledModel): LayerOracle {
  return {
    firstMatch(probe) {
      const entry = engine.entry(probe.iface, probe.to, probe.serviceClass.index, engine.sliceAt(probe.atMs));
      const slot = runValueAt(entry.rules.owner, engine.elementOf(probe.from));
      return slot < 0 ? slot : engine.positionOfSlot(slot);
    },
    eligible(probe, serviceName) {
      return engine.eligibleAccounts(probe.from.family, engine.elementOf(probe.from), serviceName, probe.account);
    },
  };
}

/** Traces a probe; throws ProbeError for input errors. */
export function traceProbe(engine: CompiledModel, probe: ProbeInput, oracle: LayerOracle = compiledOracle(engine), nowMs?: number): TraceResult {
  return traceResolved(engine, engine.resolveProbe(probe, nowMs), oracle);
}

export function traceResolved(engine: CompiledModel, probe: ResolvedProbe, oracle: LayerOracle): TraceResult {
  const model = engine.model;
  const ifaceName = model.interfaces[probe.iface].name;
  const cls = probe.serviceClass;
  const serviceName = cls.service?.name ?? probe.serviceLabel;
  const familyLabel = probe.from.family === 4 ? "IPv4" : "IPv6";
  const layers: TraceLayer[] = [];
  const fromText = formatAddress(probe.from.family, probe.from.value);
  let toText: string | null = null;
  const finish = (outcome: number, ruleId: string | null, eligible: readonly string[] = []): TraceResult => {
    const last = layers[layers.length - 1];
    layers[layers.length - 1] = last.ruleId === undefined
      ? { layer: last.layer, result: "stop", detail: last.detail }
      : { layer: last.layer, result: "stop", detail: last.detail, ruleId: last.ruleId };
    return {
      outcome: OUTCOMES[outcome],
      at: new Date(probe.atMs).toISOString(),
      localTime: engine.clock.localText(probe.atMs),
      from: fromText,
      interface: ifaceName,
      service: serviceName,
      to: toText,
      layers,
      ruleId,
      eligibleAccounts: eligible,
    };
  };

  // 1. Arrival.
  if (probe.to < 0) {
    layers.push({ layer: "arrival", result: "stop", detail: `interface "${ifaceName}" has no ${familyLabel} address, so the probe never arrives` });
    return finish(0, null);
  }
  const target = engine.addresses[probe.to];
  toText = target.text;
  const onOther = target.iface !== probe.iface ? ` (an address of interface "${model.interfaces[target.iface].name}")` : "";
  layers.push({ layer: "arrival", result: "pass", detail: `interface "${ifaceName}" has ${familyLabel}; destination ${toText}${onOther}` });

  // 2. Inbound rules, first match wins.
  const position = oracle.firstMatch(probe);
  const rule = position >= 0 ? model.inboundRules[position] : null;
  if (rule !== null) {
    const allowed = rule.action === "allow";
    layers.push({
      layer: "inbound-rules",
      result: allowed ? "pass" : "stop",
      detail: `rule "${rule.id}" (${rule.action}) is the first match${allowed ? "" : ": dropped without any answer"}`,
      ruleId: rule.id,
    });
    if (!allowed) return finish(0, rule.id);
  } else {
    const allowed = engine.defaultAllow;
    layers.push({
      layer: "inbound-rules",
      result: allowed ? "pass" : "stop",
      detail: `no inbound rule matches; the device default is ${model.device.defaultInbound}${allowed ? "" : ": dropped without any answer"}`,
    });
    if (!allowed) return finish(0, null);
  }
  const ruleId = rule?.id ?? null;

  // 3. Listener.
  const listening = cls.service !== null && engine.listening[probe.iface].has(cls.service.name);
  if (!listening) {
    const what = cls.service !== null ? `${cls.service.name} is not listening` : `nothing listens on ${probe.serviceLabel}`;
    if (cls.kind === "echo") {
      layers.push({ layer: "listener", result: "stop", detail: `${what} on "${ifaceName}": the echo request gets no reply` });
      return finish(0, ruleId);
    }
    const reset = engine.unlistenedReset;
    layers.push({
      layer: "listener",
      result: "stop",
      detail: `${what} on "${ifaceName}": ${reset ? (cls.protocol === "udp" ? "an ICMP port-unreachable" : "a TCP reset") + " reveals the device" : "the packet is dropped (unlistenedPort drop)"}`,
    });
    return finish(reset ? 1 : 0, ruleId);
  }
  layers.push({ layer: "listener", result: "pass", detail: `${serviceName} is listening on "${ifaceName}"` });

  // 4. Service kind.
  if (cls.kind !== "login") {
    layers.push({
      layer: "service-kind",
      result: "stop",
      detail: cls.kind === "echo" ? `${serviceName} is an echo service: it replies` : `${serviceName} is a non-login service: it answers`,
    });
    return finish(2, ruleId);
  }
  layers.push({ layer: "service-kind", result: "pass", detail: `${serviceName} presents a login (page or banner)` });

  // 5. Login sources.
  const eligible = oracle.eligible(probe, serviceName);
  const names = eligible.map((i) => model.accounts[i].name);
  if (eligible.length === 0) {
    const scope = probe.account >= 0 ? `account "${model.accounts[probe.account].name}" may not` : "no enabled account may";
    layers.push({ layer: "login-sources", result: "stop", detail: `${scope} log in from ${fromText} on ${serviceName}; the login is refused` });
    return finish(3, ruleId);
  }
  layers.push({ layer: "login-sources", result: "pass", detail: `eligible: ${names.join(", ")}` });

  // 6. Second factor.
  const weak = eligible.filter((i) => model.accounts[i].secondFactor === "none").map((i) => model.accounts[i].name);
  layers.push({
    layer: "second-factor",
    result: "stop",
    detail: weak.length > 0 ? `no second factor on ${weak.join(", ")}: a password alone logs in` : "every eligible account requires a second factor",
  });
  return finish(weak.length > 0 ? 5 : 4, ruleId, names);
}
