import { describe, expect, test } from "vitest";
import { compileModel, findings, LAYERS, parseModel, trace } from "#server/engine/index";
import { parseEntry, parseInterfaceAddress } from "#server/engine/addresses";
import { TRAINING_EXAMPLES } from "#server/training/examples";

// The shipped teaching scenarios (issue 12): each a valid model, each teaching one layer, each
// probe's stated deciding layer and outcome equal to what trace() says.

/** Documentation ranges (RFC 5737 §3, RFC 3849) and inside space (RFC 1918 §3, RFC 4193 §3.1). */
const DOCUMENTATION = ["192.0.2.0/24", "198.51.100.0/24", "203.0.113.0/24", "2001:db8::/32"].map((text) => parseEntry(text).range);
const INSIDE = ["10.0.0.0/8", "172.16.0.0/12", "192.168.0.0/16", "fc00::/7"].map((text) => parseEntry(text).range);
const within = (range: { family: number; first: bigint; last: bigint }, blocks: typeof DOCUMENTATION) => blocks.some((block) => block.family === range.family && block.first <= range.first && range.last <= block.last);

describe("The invented examples shipped with Sallyport", () => {
  test("There are at least six, with distinct keys and device names, teaching the layers the issue names", () => {
    expect(TRAINING_EXAMPLES.length).toBeGreaterThanOrEqual(6);
    expect(new Set(TRAINING_EXAMPLES.map((example) => example.key)).size).toBe(TRAINING_EXAMPLES.length);
    expect(new Set(TRAINING_EXAMPLES.map((example) => example.document.device.name)).size).toBe(TRAINING_EXAMPLES.length);
    // A listener that should not be there, rule order, login sources, the second factor, a schedule window, an IPv6-only path.
    for (const key of ["stray-listener", "rule-order", "login-sources", "second-factor", "schedule-window", "ipv6-only-path"]) {
      expect(TRAINING_EXAMPLES.map((example) => example.key)).toContain(key);
    }
  });

  for (const example of TRAINING_EXAMPLES) {
    describe(`${example.title} (${example.key})`, () => {
      const parsed = parseModel(example.document);

      test("is a valid model without warnings", () => {
        expect(parsed.ok ? [] : parsed.errors).toEqual([]);
        expect(parsed.warnings).toEqual([]);
      });

      test(`its first probe is decided by the layer it teaches (${example.teaches})`, () => {
        if (!parsed.ok) throw new Error("invalid example");
        const result = trace(compileModel(parsed.model), example.probes[0].probe);
        // PRODUCT.md §3: the first layer that stops decides the outcome; it is the last one listed.
        expect(result.layers.at(-1)?.layer).toBe(example.teaches);
        expect(result.layers.at(-1)?.result).toBe("stop");
      });

      test("every probe is decided where the example says, with the outcome it says, and notes only layers the probe reaches", () => {
        if (!parsed.ok) throw new Error("invalid example");
        const device = compileModel(parsed.model);
        for (const step of example.probes) {
          const result = trace(device, step.probe);
          expect({ decides: result.layers.at(-1)?.layer, outcome: result.outcome }, JSON.stringify(step.probe)).toEqual({ decides: step.decides, outcome: step.outcome });
          const reached = new Set(result.layers.map((layer) => layer.layer));
          for (const layer of Object.keys(step.notes)) {
            expect(LAYERS).toContain(layer);
            expect(reached.has(layer as (typeof LAYERS)[number]), `${example.key}: a note on ${layer}, which ${JSON.stringify(step.probe)} does not reach`).toBe(true);
          }
        }
      });

      test("uses documentation addresses outside (RFC 5737, RFC 3849) and private space inside (RFC 1918, RFC 4193)", () => {
        if (!parsed.ok) throw new Error("invalid example");
        const ranges = [
          ...parsed.model.interfaces.flatMap((entry) => entry.addresses.map((text) => parseInterfaceAddress(text)).map((address) => ({ family: address.family, first: address.value, last: address.value }))),
          ...parsed.model.addresses.flatMap((object) => object.entries.map((text) => parseEntry(text).range)),
          ...example.probes.map((step) => parseEntry(step.probe.from).range),
        ];
        for (const range of ranges) expect(within(range, DOCUMENTATION) || within(range, INSIDE), JSON.stringify({ ...range, first: String(range.first), last: String(range.last) })).toBe(true);
      });
    });
  }

  test("The rule-order example's operations centre is locked out, as its lesson says (the lockout finding)", () => {
    const example = TRAINING_EXAMPLES.find((entry) => entry.key === "rule-order")!;
    const parsed = parseModel(example.document);
    if (!parsed.ok) throw new Error("invalid example");
    expect(findings(compileModel(parsed.model)).map((finding) => finding.code)).toContain("lockout");
  });
});
