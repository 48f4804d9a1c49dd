// A deliberately naive reference evaluator: section 3 of the brief read literally, one probe
// at a time, a linear scan over rules, names resolved recursively on every query. It shares
// nothing with the compiled engine except address text parsing; tests hold the two equal.

import { DateTime } from "luxon";
import { parseAddress, parseEntry } from "./addresses.ts";
import type { Address, AddressRange } from "./addresses.ts";
import { looksLikeAddressEntry } from "./model.ts";
import type { DeviceModel } from "./model.ts";
import { ALL_WEEK_SCHEDULE, BUILTIN_SERVICES, DAYS, OUTCOMES } from "./vocabulary.ts";
import type { Layer, Outcome } from "./vocabulary.ts";

export interface NaiveProbe {
  readonly from: string;
  readonly interface: string;
  readonly service: string;
  readonly to?: string;
  /** Epoch milliseconds. */
  readonly atMs: number;
  readonly account?: string;
}

export interface NaiveTrace {
  readonly outcome: Outcome;
  readonly ruleId: string | null;
  readonly eligibleAccounts: readonly string[];
  readonly layers: readonly { readonly layer: Layer; readonly result: "pass" | "stop" }[];
}

type Service = { protocol: string; port: number | null; kind: string; name: string | null };

export class NaiveEvaluator {
  private readonly entries = new Map<string, AddressRange[]>();

  constructor(private readonly model: DeviceModel) {
    for (const a of model.addresses) this.entries.set(a.name, a.entries.map((e) => parseEntry(e).range));
  }

  private inNamed(name: string, a: Address): boolean {
    if (name === "any") return true;
    if (name === "any4") return a.family === 4;
    if (name === "any6") return a.family === 6;
    const ranges = this.entries.get(name);
    if (ranges !== undefined) return ranges.some((r) => r.family === a.family && r.first <= a.value && a.value <= r.last);
    const group = this.model.addressGroups.find((g) => g.name === name);
    return group !== undefined && group.members.some((m) => this.inNamed(m, a));
  }

  private serviceNamed(name: string, s: Service): boolean {
    if (name === "any") return true;
    const own = [...BUILTIN_SERVICES, ...this.model.services].find((c) => c.name === name);
    if (own !== undefined) return own.protocol === s.protocol && (own.protocol === "icmp" || own.port === s.port);
    const group = this.model.serviceGroups.find((g) => g.name === name);
    return group !== undefined && group.members.some((m) => this.serviceNamed(m, s));
  }

  private scheduleActive(name: string, atMs: number): boolean {
    if (name === ALL_WEEK_SCHEDULE) return true;
    const schedule = this.model.schedules.find((s) => s.name === name);
    if (schedule === undefined) return false;
    const local = DateTime.fromMillis(atMs, { zone: this.model.device.timezone });
    const today = DAYS[local.weekday - 1];
    const yesterday = DAYS[(local.weekday + 5) % 7];
    const minute = local.hour * 60 + local.minute;
    return schedule.windows.some((w) => {
      const start = Number(w.start.slice(0, 2)) * 60 + Number(w.start.slice(3));
      const end = Number(w.end.slice(0, 2)) * 60 + Number(w.end.slice(3));
      const days: readonly string[] = w.days;
      if (end > start) return days.includes(today) && start <= minute && minute < end;
      // Crosses midnight (end == start: 24 hours from start).
      return (days.includes(today) && minute >= start) || (days.includes(yesterday) && minute < end);
    });
  }

  private serviceOf(text: string): Service {
    const own = [...BUILTIN_SERVICES, ...this.model.services].find((c) => c.name === text);
    if (own !== undefined) return { protocol: own.protocol, port: own.protocol === "icmp" ? null : own.port, kind: own.kind, name: own.name };
    if (text === "icmp/echo") return { protocol: "icmp", port: null, kind: "echo", name: "ping" };
    const [protocol, portText] = text.split("/");
    const port = Number(portText);
    const named = [...BUILTIN_SERVICES, ...this.model.services].find((c) => c.protocol === protocol && c.port === port);
    return named !== undefined ? { protocol, port, kind: named.kind, name: named.name } : { protocol, port, kind: "other", name: null };
  }

  private inLoginSources(items: readonly string[], a: Address): boolean {
    if (items.length === 0) return true;
    return items.some((t) => {
      if (!looksLikeAddressEntry(t)) return this.inNamed(t, a);
      const r = parseEntry(t).range;
      return r.family === a.family && r.first <= a.value && a.value <= r.last;
    });
  }

  /** Evaluates one probe (assumed valid). */
  trace(probe: NaiveProbe): NaiveTrace {
    const layers: { layer: Layer; result: "pass" | "stop" }[] = [];
    const from = parseAddress(probe.from);
    const service = this.serviceOf(probe.service);
    const iface = this.model.interfaces.find((f) => f.name === probe.interface);
    if (iface === undefined) throw new Error(`unknown interface ${probe.interface}`);
    const done = (outcome: number, ruleId: string | null, eligible: string[] = []): NaiveTrace => {
      layers[layers.length - 1].result = "stop";
      return { outcome: OUTCOMES[outcome], ruleId, eligibleAccounts: eligible, layers };
    };

    const own = iface.addresses.map((t) => parseAddress(t.split("/")[0])).filter((a) => a.family === from.family);
    layers.push({ layer: "arrival", result: "pass" });
    if (own.length === 0) return done(0, null);
    const to = probe.to !== undefined && probe.to !== "" ? parseAddress(probe.to) : own[0];

    let matched: DeviceModel["inboundRules"][number] | null = null;
    for (const rule of this.model.inboundRules) {
      if (!rule.enabled) continue;
      if (rule.interface !== "any" && rule.interface !== iface.name) continue;
      if (!rule.sources.some((n) => this.inNamed(n, from))) continue;
      if (!rule.destinations.some((n) => this.inNamed(n, to))) continue;
      if (!rule.services.some((n) => this.serviceNamed(n, service))) continue;
      if (!this.scheduleActive(rule.schedule, probe.atMs)) continue;
      matched = rule;
      break;
    }
    const allowed = matched !== null ? matched.action === "allow" : this.model.device.defaultInbound === "allow";
    layers.push({ layer: "inbound-rules", result: "pass" });
    const ruleId = matched?.id ?? null;
    if (!allowed) return done(0, ruleId);

    layers.push({ layer: "listener", result: "pass" });
    if (service.name === null || !iface.listeners.includes(service.name)) {
      if (service.protocol === "icmp") return done(0, ruleId);
      return done(this.model.device.unlistenedPort === "reset" ? 1 : 0, ruleId);
    }
    layers.push({ layer: "service-kind", result: "pass" });
    if (service.kind !== "login") return done(2, ruleId);

    const eligible = this.model.accounts.filter(
      (a) =>
        (probe.account === undefined || probe.account === "" || a.name === probe.account) &&
        a.enabled &&
        (a.services.length === 0 || (service.name !== null && a.services.includes(service.name))) &&
        this.inLoginSources(a.loginSources, from),
    );
    layers.push({ layer: "login-sources", result: "pass" });
    if (eligible.length === 0) return done(3, ruleId);
    layers.push({ layer: "second-factor", result: "pass" });
    const names = eligible.map((a) => a.name);
    return done(eligible.some((a) => a.secondFactor === "none") ? 5 : 4, ruleId, names);
  }
}
