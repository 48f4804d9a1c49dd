// Findings: hardening checks with a severity, the affected elements, why it matters and
// the published source (or "common practice, no source").

import { FAMILY, parseEntry } from "./addresses.ts";
import type { Family } from "./addresses.ts";
import {
  EMPTY_SET,
  countOf,
  intersect,
  isEmptySet,
  rangesOf,
  rangesToCidrs,
  setFromRanges,
  setToCidrs,
  subtract,
  subtractSets,
  unionSets,
} from "./address-sets.ts";
import type { AddressSet, Ranges } from "./address-sets.ts";
import { firstMatchRules, intersectsSet, isRedundant, loginReachable } from "./analysis.ts";
import type { CompiledModel, OutcomePartition } from "./compile.ts";
import { outcomeSets } from "./exposure.ts";
import { ANSWERED, LOGIN_DENIED, LOGIN_MFA, LOGIN_PASSWORD, OUTCOMES, SILENT, elementRef, isBuiltinAddressName, severityRank } from "./vocabulary.ts";
import type { ElementRef, Severity } from "./vocabulary.ts";

export const FINDING_CODES = [
  "default-account-name",
  "unrestricted-account",
  "no-second-factor",
  "cleartext-listener",
  "internet-login-exposed",
  "internet-ping",
  "broad-login-sources",
  "shadowed-rule",
  "redundant-rule",
  "no-final-drop",
  "lockout",
  "rule-never-active",
  "unused-object",
] as const;
export type FindingCode = (typeof FINDING_CODES)[number];

export interface Finding {
  readonly code: FindingCode;
  readonly severity: Severity;
  readonly title: string;
  readonly detail: string;
  /** Affected elements as "kind:name", e.g. "account:admin", "interface:outside", "rule:r-7". */
  readonly elements: readonly ElementRef[];
  readonly source: string;
}

/** Factory-default administrator names scanners try first (common practice, no source). */
export const DEFAULT_ACCOUNT_NAMES = ["admin", "administrator", "root", "superuser", "supervisor", "sysadmin", "guest", "default", "support"];

/**
 * Space that is not "non-private": RFC 1918, RFC 6598, loopback, link-local, multicast,
 * "this network" and reserved IPv4 space; for IPv6 everything outside global unicast
 * 2000::/3 (RFC 4291: unique local fc00::/7, link-local, multicast, loopback, unspecified
 * and IETF-reserved space). Documentation ranges count as global.
 */
export const NON_GLOBAL: AddressSet = setFromRanges(
  [
    "0.0.0.0/8", // RFC 1122 §3.2.1.3
    "10.0.0.0/8", // RFC 1918
    "100.64.0.0/10", // RFC 6598
    "127.0.0.0/8", // RFC 1122 loopback
    "169.254.0.0/16", // RFC 3927
    "172.16.0.0/12", // RFC 1918
    "192.168.0.0/16", // RFC 1918
    "224.0.0.0/4", // RFC 5771 multicast
    "240.0.0.0/4", // RFC 1112 reserved (incl. 255.255.255.255)
    "::/3", // RFC 4291: outside global unicast
    "4000::/2",
    "8000::/1",
  ].map((t) => parseEntry(t).range),
);

export function nonPrivate(family: Family): Ranges {
  return subtract([0n, FAMILY[family].max], rangesOf(NON_GLOBAL, family), family);
}

const SOURCES = {
  defaultAccount: "PCI DSS v4.0 2.2.2; CIS Controls v8 4.7",
  restrictSources: "NIST SP 800-53 rev 5 AC-17; CIS Controls v8 12.3",
  mfa: "PCI DSS v4.0 8.4.1; NIST SP 800-53 rev 5 IA-2(1); CIS Controls v8 6.5",
  cleartext: "CIS Controls v8 4.6; PCI DSS v4.0 2.2.7",
  exposure: "NIST SP 800-53 rev 5 AC-17; CIS Controls v8 12.3; common practice, no source (any reply reveals the device)",
  ping: "CIS Controls v8 4.8; common practice, no source (any reply reveals the device)",
  ruleOrder: "common practice, no source (inbound rules are read top to bottom, first match wins)",
  defaultDeny: "NIST SP 800-41 rev 1 (default deny); NIST SP 800-53 rev 5 SC-7(5)",
  lockout: "common practice, no source (keep a tested break-glass path)",
  hygiene: "common practice, no source",
} as const;

/** Every finding for a compiled model, most severe first. */
export function findingsOf(engine: CompiledModel): Finding[] {
  const out: Finding[] = [];
  const model = engine.model;
  const add = (f: Finding): void => {
    out.push(f);
  };

  // Accounts.
  for (const a of engine.accounts) {
    const doc = model.accounts[a.index];
    const element = elementRef("account", a.name);
    if (DEFAULT_ACCOUNT_NAMES.includes(a.name.toLowerCase())) {
      add({
        code: "default-account-name",
        severity: a.enabled ? "high" : "low",
        title: `Account "${a.name}" has a factory-default name`,
        detail: `Scanners try default administrator names first; rename it to a named, non-standard account${a.enabled ? "" : " (it is disabled; remove it)"}.`,
        elements: [element],
        source: SOURCES.defaultAccount,
      });
    }
    if (!a.enabled) continue;
    if (doc.loginSources.length === 0) {
      add({
        code: "unrestricted-account",
        severity: "high",
        title: `Account "${a.name}" may log in from anywhere`,
        detail: "It has no login sources; list the operator networks it may log in from.",
        elements: [element],
        source: SOURCES.restrictSources,
      });
    }
    if (!a.secondFactor) {
      add({
        code: "no-second-factor",
        severity: "high",
        title: `Account "${a.name}" has no second factor`,
        detail: "A password alone logs in; require TOTP (RFC 6238) on every administrator account.",
        elements: [element],
        source: SOURCES.mfa,
      });
    }
    if (doc.loginSources.length > 0) {
      const names = doc.loginSources.filter(isBuiltinAddressName);
      const v4 = countOf(a.loginSources.v4);
      const v6 = countOf(a.loginSources.v6);
      if (names.length > 0 || v4 >= 1n << 24n || v6 >= 1n << 96n) {
        add({
          code: "broad-login-sources",
          severity: "medium",
          title: `Account "${a.name}" has very broad login sources`,
          detail: `Login sources cover ${v4} IPv4 and ${v6} IPv6 addresses${names.length > 0 ? ` (including "${names.join('", "')}")` : ""}; thresholds: 2^24 IPv4 or 2^96 IPv6 (a /32) addresses.`,
          elements: [element],
          source: SOURCES.restrictSources,
        });
      }
    }
  }

  // Exposure to non-private sources, per interface × service over every slice and every
  // device address a probe arriving there may be sent to (PRODUCT.md §3: `to` may be an
  // address of another interface), so a console reached through an inside address counts too.
  type Seen = { outcomes: Set<number>; hits: AddressSet[] };
  const exposed = new Map<string, Seen>();
  const global: Record<Family, Ranges> = { 4: nonPrivate(4), 6: nonPrivate(6) };
  const everyAddress = engine.addresses.map((_, index) => index);
  // Many (interface, destination, service) cells see the same outcome partitions, so the
  // non-private hits of each distinct partition are computed once.
  const hitsOf = new Map<unknown, { outcome: number; hit: AddressSet }[]>();
  const distinctHits = (partition: OutcomePartition): { outcome: number; hit: AddressSet }[] => {
    const cached = hitsOf.get(partition.outcome);
    if (cached !== undefined) return cached;
    const list: { outcome: number; hit: AddressSet }[] = [];
    const sets = outcomeSets(engine, partition);
    sets.counts.forEach((n, o) => {
      if (o === SILENT || n === 0n) return;
      const hit = intersect(sets.ranges[o], global[sets.family]);
      if (hit.length === 0) return;
      list.push({ outcome: o, hit: sets.family === 4 ? { v4: hit, v6: [] } : { v4: [], v6: hit } });
    });
    hitsOf.set(partition.outcome, list);
    return list;
  };
  const mergedHits = new Map<string, Set<AddressSet>>();
  engine.interfaceAddresses.forEach((_own, iface) => {
    for (const to of everyAddress) {
      for (let cls = 0; cls < engine.catalogue.length; cls++) {
        const key = `${iface}|${cls}`;
        const seen = exposed.get(key) ?? { outcomes: new Set<number>(), hits: OUTCOMES.map(() => EMPTY_SET) };
        const merged = mergedHits.get(key) ?? new Set<AddressSet>();
        for (const partition of engine.weekOutcomes(iface, to, cls)) {
          for (const { outcome: o, hit } of distinctHits(partition)) {
            seen.outcomes.add(o);
            // A set already merged into this outcome's hits adds nothing (same object, same outcome).
            if (merged.has(hit)) continue;
            merged.add(hit);
            seen.hits[o] = unionSets(seen.hits[o], hit);
          }
        }
        mergedHits.set(key, merged);
        exposed.set(key, seen);
      }
    }
  });
  const operators = model.operatorNetworks.reduce((acc, n) => unionSets(acc, engine.addressSetOf(n)), EMPTY_SET);
  const countText = (set: AddressSet): string => (countOf(set.v4) + countOf(set.v6)).toString();
  model.interfaces.forEach((f, iface) => {
    const element = elementRef("interface", f.name);
    for (const name of f.listeners) {
      if (name !== "http" && name !== "telnet") continue;
      const cls = engine.catalogue.findIndex((s) => s.name === name);
      const seen = exposed.get(`${iface}|${cls}`);
      const internet = seen !== undefined && seen.outcomes.size > 0;
      add({
        code: "cleartext-listener",
        severity: internet ? "high" : "medium",
        title: `${name} listens on "${f.name}"`,
        detail: `${name} sends credentials in clear text; use ${name === "http" ? "https" : "ssh"} instead and disable ${name}${internet ? ". It answers non-private sources" : ""}.`,
        elements: [element, elementRef("service", name)],
        source: SOURCES.cleartext,
      });
    }
    engine.catalogue.forEach((s, cls) => {
      const seen = exposed.get(`${iface}|${cls}`);
      if (seen === undefined || seen.outcomes.size === 0) return;
      if (s.kind === "login" && (f.role === "outside" || f.role === "dmz")) {
        const login = [LOGIN_PASSWORD, LOGIN_MFA, LOGIN_DENIED].filter((o) => seen.outcomes.has(o));
        if (login.length === 0) return;
        // Exposure limited to the declared operator networks is the intended remote administration;
        // the severity follows the worst outcome anyone else gets.
        const outsiders = login.filter((o) => !isEmptySet(subtractSets(seen.hits[o], operators)));
        const worst = outsiders[0];
        const all = login.reduce((acc, o) => unionSets(acc, seen.hits[o]), EMPTY_SET);
        add({
          code: "internet-login-exposed",
          severity: worst === undefined ? "low" : worst === LOGIN_PASSWORD ? "critical" : worst === LOGIN_MFA ? "high" : "medium",
          title: `${s.name} on "${f.name}" presents a login to non-private sources`,
          detail:
            worst === undefined
              ? `Only operator networks (${countText(all)} non-private addresses) reach the login; keep that list short and the second factor on.`
              : `${countText(subtractSets(seen.hits[worst], operators))} non-private sources outside the operator networks get ${OUTCOMES[worst]} at some time ` +
                `(${setToCidrs(subtractSets(seen.hits[worst], operators)).slice(0, 3).join(", ")}…); allow only operator networks and drop the rest silently.`,
          elements: [element, elementRef("service", s.name)],
          source: SOURCES.exposure,
        });
      } else if (s.kind === "echo" && seen.outcomes.has(ANSWERED)) {
        add({
          code: "internet-ping",
          severity: "low",
          title: `ping on "${f.name}" answers non-private sources`,
          detail: `${countText(seen.hits[ANSWERED])} non-private sources get an echo reply, which tells a scanner the device is there.`,
          elements: [element, "service:ping"],
          source: SOURCES.ping,
        });
      }
    });
    if (f.role === "outside" && engine.defaultAllow && !hasCatchAllDeny(engine, iface)) {
      add({
        code: "no-final-drop",
        severity: "high",
        title: `No catch-all deny for "${f.name}"`,
        detail: "The device default is allow and no enabled, always-active deny rule covers every source, destination and service of this interface; end the inbound rules with one.",
        elements: [element],
        source: SOURCES.defaultDeny,
      });
    }
  });

  // Rules.
  const used = firstMatchRules(engine);
  for (const r of engine.rules) {
    if (!r.enabled) continue;
    const element = elementRef("rule", r.id);
    if (r.schedule >= 0 && !engine.week.slices.some((s) => s.active[r.schedule])) {
      add({
        code: "rule-never-active",
        severity: "low",
        title: `Rule "${r.id}" is never active`,
        detail: `Its schedule "${model.schedules[r.schedule].name}" has no active time in the week.`,
        elements: [element, elementRef("schedule", model.schedules[r.schedule].name)],
        source: SOURCES.hygiene,
      });
      continue;
    }
    if (!used.has(r.position)) {
      add({
        code: "shadowed-rule",
        severity: "medium",
        title: `Rule "${r.id}" is never the first match`,
        detail: "For every probe an earlier rule matches first (or the rule can match no probe at all); it has no effect.",
        elements: [element],
        source: SOURCES.ruleOrder,
      });
    } else if (isRedundant(engine, r.position)) {
      add({
        code: "redundant-rule",
        severity: "low",
        title: `Rule "${r.id}" is redundant`,
        detail: "Removing this rule alone changes no outcome: wherever it decides, the next matching rule or the default acts the same way.",
        elements: [element],
        source: SOURCES.ruleOrder,
      });
    }
  }

  // Lockout: operator networks with no login path at any time.
  if (model.operatorNetworks.length > 0) {
    const reachable = loginReachable(engine);
    for (const name of model.operatorNetworks) {
      const set = engine.addressSetOf(name);
      if (intersectsSet(set, reachable)) continue;
      add({
        code: "lockout",
        severity: "critical",
        title: `Operator network "${name}" has no login path`,
        detail: `No address in ${[...rangesToCidrs(set.v4, 4), ...rangesToCidrs(set.v6, 6)].slice(0, 4).join(", ")} can reach a login with an eligible account on any interface, service or time.`,
        elements: [elementRef("operator-network", name)],
        source: SOURCES.lockout,
      });
    }
  }

  out.push(...unusedObjects(engine));
  return out.sort(
    (a, b) =>
      severityRank(b.severity) - severityRank(a.severity) ||
      a.code.localeCompare(b.code) ||
      a.elements.join(" ").localeCompare(b.elements.join(" ")),
  );
}

/** An enabled, always-active deny rule covering every source, destination address and service of the interface. */
function hasCatchAllDeny(engine: CompiledModel, iface: number): boolean {
  // Probes arrive only in the interface's own families, but may be sent to any device address of them.
  const families = new Set(engine.interfaceAddresses[iface].map((a) => engine.addresses[a].family));
  const own = engine.addresses.filter((a) => families.has(a.family));
  return engine.rules.some(
    (r) =>
      r.enabled &&
      !r.allow &&
      (r.iface === -1 || r.iface === iface) &&
      r.anyService &&
      (r.schedule < 0 || engine.week.slices.every((s) => s.active[r.schedule])) &&
      [...families].every((f) => countOf(rangesOf(r.sources, f)) === FAMILY[f].size) &&
      own.every((a) => intersect(rangesOf(r.destinations, a.family), [a.value, a.value]).length > 0),
  );
}

function unusedObjects(engine: CompiledModel): Finding[] {
  const model = engine.model;
  const addressRefs = new Set<string>([
    ...model.inboundRules.flatMap((r) => [...r.sources, ...r.destinations]),
    ...model.addressGroups.flatMap((g) => g.members),
    ...model.accounts.flatMap((a) => a.loginSources),
    ...model.operatorNetworks,
  ]);
  const serviceRefs = new Set<string>([
    ...model.inboundRules.flatMap((r) => r.services),
    ...model.serviceGroups.flatMap((g) => g.members),
    ...model.interfaces.flatMap((f) => f.listeners),
    ...model.accounts.flatMap((a) => a.services),
  ]);
  const scheduleRefs = new Set(model.inboundRules.map((r) => r.schedule));
  const unused: ElementRef[] = [
    ...model.addresses.filter((a) => !addressRefs.has(a.name)).map((a) => elementRef("address", a.name)),
    ...model.addressGroups.filter((g) => !addressRefs.has(g.name)).map((g) => elementRef("address-group", g.name)),
    ...model.services.filter((s) => !serviceRefs.has(s.name)).map((s) => elementRef("service", s.name)),
    ...model.serviceGroups.filter((g) => !serviceRefs.has(g.name)).map((g) => elementRef("service-group", g.name)),
    ...model.schedules.filter((s) => !scheduleRefs.has(s.name)).map((s) => elementRef("schedule", s.name)),
  ];
  return unused.map((element) => ({
    code: "unused-object" as const,
    severity: "info" as const,
    title: `${element.split(":")[0]} "${element.slice(element.indexOf(":") + 1)}" is not used`,
    detail: "Nothing refers to it; remove it to keep the model readable.",
    elements: [element],
    source: SOURCES.hygiene,
  }));
}

