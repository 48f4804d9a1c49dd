// Exposure checks: cleartext listeners, logins and ping answering non-private sources, no
// catch-all deny. All read the one enumeration of arrivals (FindingContext.exposure).
import { EMPTY_SET, contains, countOf, isEmptySet, rangesOf, subtractSets, unionSets } from "../../address-sets.ts";
import type { AddressSet } from "../../address-sets.ts";
import type { CompiledModel } from "../../compile.ts";
import { ANSWERED, LOGIN_DENIED, LOGIN_MFA, LOGIN_PASSWORD, OUTCOMES, elementRef } from "../../vocabulary.ts";
import { formatCount } from "../../format.ts";
import { firstCidrs, NON_PRIVATE } from "../context.ts";
import { SOURCES } from "../sources.ts";
import type { Finding, FindingCheck } from "../types.ts";

// In words ("3.70 billion"): the exposure map has the exact figures.
const countText = (set: AddressSet): string => formatCount(countOf(set.v4) + countOf(set.v6)).text;

export const cleartextListener: FindingCheck = {
  code: "cleartext-listener",
  severityRule: "high when it answers non-private sources, else medium",
  source: SOURCES.cleartext,
  check: (context) =>
    context.model.interfaces.flatMap((entry, iface) =>
      entry.listeners
        .filter((name) => name === "http" || name === "telnet")
        .map((name): Finding => {
          const cls = context.engine.catalogue.findIndex((service) => service.name === name);
          const internet = context.exposure(iface, cls) !== undefined;
          return {
            code: "cleartext-listener",
            severity: internet ? "high" : "medium",
            title: `${name} listens on "${entry.name}"`,
            detail: `${name} sends credentials in clear text; use ${name === "http" ? "https" : "ssh"} instead and disable ${name}${internet ? ". It answers non-private sources" : ""}.`,
            elements: [elementRef("interface", entry.name), elementRef("service", name)],
            source: SOURCES.cleartext,
          };
        }),
    ),
};

export const internetLoginExposed: FindingCheck = {
  code: "internet-login-exposed",
  severityRule:
    "from the worst outcome non-private sources outside the operator networks get: login-password critical, login-mfa high, login-denied medium; low when only operator networks reach the login",
  source: SOURCES.exposure,
  check: (context) =>
    context.model.interfaces.flatMap((entry, iface) => {
      if (entry.role !== "wan" && entry.role !== "dmz") return [];
      return context.engine.catalogue.flatMap((service, cls) =>
        context.serviceFindings("internet-login-exposed", iface, cls, (): Finding[] => {
          // Unlistened, a service answers no login (at most a refusal).
          if (service.kind !== "login" || !context.listens(iface, cls)) return [];
          const seen = context.exposure(iface, cls);
          if (seen === undefined) return [];
          const login = [LOGIN_PASSWORD, LOGIN_MFA, LOGIN_DENIED].filter((outcome) => seen.outcomes.has(outcome));
          if (login.length === 0) return [];
          // Exposure limited to the declared operator networks is the intended remote administration;
          // the severity follows the worst outcome anyone else gets.
          const outsiders = login.filter((outcome) => !isEmptySet(subtractSets(seen.hits[outcome], context.operators)));
          const worst = outsiders[0];
          const all = login.reduce((acc, outcome) => unionSets(acc, seen.hits[outcome]), EMPTY_SET);
          const shown = worst === undefined ? login[0] : worst;
          const sources = worst === undefined ? seen.hits[shown] : subtractSets(seen.hits[worst], context.operators);
          const witness = context.witnessOf(
            context.exposureWitness(iface, cls, shown, sources),
            `${worst === undefined ? "An operator network source" : "A non-private source outside the operator networks"} gets ${OUTCOMES[shown]} from ${service.name} on "${entry.name}".`,
          );
          return [
            {
              code: "internet-login-exposed",
              severity: worst === undefined ? "low" : worst === LOGIN_PASSWORD ? "critical" : worst === LOGIN_MFA ? "high" : "medium",
              title: `${service.name} on "${entry.name}" presents a login to non-private sources`,
              detail:
                worst === undefined
                  ? `Only operator networks (${countText(all)} non-private addresses) reach the login; keep that list short and the second factor on.`
                  : `${countText(sources)} non-private sources outside the operator networks get ${OUTCOMES[worst]} at some time ` +
                    `(${firstCidrs(sources, 3).join(", ")}…); allow only operator networks and drop the rest silently.`,
              elements: [elementRef("interface", entry.name), elementRef("service", service.name)],
              source: SOURCES.exposure,
              ...(witness ? { witness } : {}),
            },
          ];
        }),
      );
    }),
};

export const internetPing: FindingCheck = {
  code: "internet-ping",
  severityRule: "low",
  source: SOURCES.ping,
  check: (context) =>
    context.model.interfaces.flatMap((entry, iface) =>
      context.engine.catalogue.flatMap((service, cls) =>
        context.serviceFindings("internet-ping", iface, cls, (): Finding[] => {
          // Unlistened, ping gets no reply.
          if (service.kind !== "echo" || !context.listens(iface, cls)) return [];
          const seen = context.exposure(iface, cls);
          if (seen === undefined || !seen.outcomes.has(ANSWERED)) return [];
          const witness = context.witnessOf(context.exposureWitness(iface, cls, ANSWERED, seen.hits[ANSWERED]), `A non-private source gets an echo reply on "${entry.name}".`);
          return [
            {
              code: "internet-ping",
              severity: "low",
              title: `ping on "${entry.name}" answers non-private sources`,
              detail: `${countText(seen.hits[ANSWERED])} non-private sources get an echo reply, which tells a scanner the device is there.`,
              elements: [elementRef("interface", entry.name), "service:ping"],
              source: SOURCES.ping,
              ...(witness ? { witness } : {}),
            },
          ];
        }),
      ),
    ),
};

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
      [...families].every((f) => engine.ruleHoldsEverySource(r.position, f)) &&
      own.every((a) => contains(rangesOf(r.destinations, a.family), a.value)),
  );
}

export const noFinalDrop: FindingCheck = {
  code: "no-final-drop",
  severityRule: "high",
  source: SOURCES.defaultDeny,
  check: (context) =>
    context.model.interfaces.flatMap((entry, iface): Finding[] => {
      const { engine } = context;
      if (entry.role !== "wan" || !engine.defaultAllow || hasCatchAllDeny(engine, iface)) return [];
      const witness = context.witnessOf(
        context.defaultActionWitness(iface, NON_PRIVATE),
        (trace) => `No enabled rule matches this probe from a non-private source; the device default (allow) lets it through to ${trace.outcome}.`,
      );
      return [
        {
          code: "no-final-drop",
          severity: "high",
          title: `No catch-all deny for "${entry.name}"`,
          detail: "The device default is allow and no enabled, always-active deny rule covers every source, destination and service of this interface; end the inbound rules with one.",
          elements: [elementRef("interface", entry.name)],
          source: SOURCES.defaultDeny,
          ...(witness ? { witness } : {}),
        },
      ];
    }),
};
