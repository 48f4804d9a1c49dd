import { describe, expect, test } from "vitest";
import { compileModel, findings, parseModel, trace } from "#server/engine/index.ts";

// An invented edge device whose inbound rules protect only the outside address: a probe on the
// outside interface sent to the inside address still gets the login page (PRODUCT.md §3: `to`
// may be an address of another interface; the listener is that of the arrival interface).
const MODEL = {
  schemaVersion: 2,
  device: { name: "quayside-edge" },
  interfaces: [
    { name: "outside", role: "wan", addresses: ["203.0.113.1/24"], listeners: ["https"] },
    { name: "inside", role: "lan", addresses: ["10.0.0.1/24"], listeners: ["https", "ssh"] },
  ],
  addresses: [
    { name: "ops", entries: ["198.51.100.0/28"] },
    { name: "out-addr", entries: ["203.0.113.1"] },
  ],
  inboundRules: [
    { id: "ops-in", interface: "outside", sources: ["ops"], destinations: ["out-addr"], services: ["https"], action: "allow" },
    { id: "drop-out", interface: "outside", sources: ["any"], destinations: ["out-addr"], services: ["any"], action: "deny" },
  ],
  accounts: [{ name: "ops-rhea", loginSources: ["ops"], secondFactor: "totp" }],
  operatorNetworks: ["ops"],
};

function device() {
  const parsed = parseModel(MODEL);
  if (!parsed.ok) throw new Error(JSON.stringify(parsed.errors));
  return compileModel(parsed.model);
}

describe("Findings consider every device address a probe may be sent to", () => {
  test("the trace shows the gap: an internet source reaches the login through the inside address", () => {
    const result = trace(device(), { from: "192.0.2.9", interface: "outside", service: "https", to: "10.0.0.1", at: "2026-12-02T10:00:00Z" });
    expect(result.outcome).toBe("login-denied");
    expect(result.ruleId).toBeNull();
  });

  test("internet-login-exposed is reported for the outside interface, not only for operator networks", () => {
    const list = findings(device());
    const exposed = list.find((finding) => finding.code === "internet-login-exposed" && finding.elements.includes("interface:outside") && finding.elements.includes("service:https"));
    expect(exposed).toBeDefined();
    expect(exposed!.severity).not.toBe("low");
    expect(exposed!.detail).not.toMatch(/^Only operator networks/);
  });

  test("no-final-drop is reported: the deny covers the outside address only", () => {
    const list = findings(device());
    expect(list.some((finding) => finding.code === "no-final-drop" && finding.elements.includes("interface:outside"))).toBe(true);
  });
});
