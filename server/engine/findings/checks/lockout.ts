// Lockout: an operator network with no login path at any time.
import { rangesToCidrs } from "../../address-sets.ts";
import { intersectsSet } from "../../analysis.ts";
import { elementRef } from "../../vocabulary.ts";
import { SOURCES } from "../sources.ts";
import type { Finding, FindingCheck } from "../types.ts";

export const lockout: FindingCheck = {
  code: "lockout",
  severityRule: "critical",
  source: SOURCES.lockout,
  check: (context) => {
    const { engine, model } = context;
    if (model.operatorNetworks.length === 0) return [];
    return model.operatorNetworks.flatMap((name): Finding[] => {
      const set = engine.addressSetOf(name);
      if (intersectsSet(set, context.loginReachable)) return [];
      const witness = context.witnessOf(
        context.loginProbeFrom(set),
        (trace) => `A source in "${name}" gets ${trace.outcome} here, not a login.`,
        "Over every interface, destination, login service and slice of the week, no source in this network gets login-mfa or login-password.",
      );
      return [
        {
          code: "lockout",
          severity: "critical",
          title: `Operator network "${name}" has no login path`,
          detail: `No address in ${[...rangesToCidrs(set.v4, 4), ...rangesToCidrs(set.v6, 6)].slice(0, 4).join(", ")} can reach a login with an eligible account on any interface, service or time.`,
          elements: [elementRef("operator-network", name)],
          source: SOURCES.lockout,
          ...(witness ? { witness } : {}),
        },
      ];
    });
  },
};
