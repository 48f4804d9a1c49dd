import fc from "fast-check";
import { describe, expect, test } from "vitest";
import { compileModel, exposure, findings, parseModel, trace, type DeviceModel, type DeviceModelInput, type ExposureEntry } from "#server/engine/index";
import { formatAddress, parseEntry, parseInterfaceAddress } from "#server/engine/addresses";
import { anonymiseModel, AnonymiseError } from "#server/training/anonymise";
import { TRAINING_EXAMPLES } from "#server/training/examples";
import { propertyParameters, type PropertyBudget } from "#tests/support/property-runs";

// Anonymising a copy for teaching (docs/decisions/016): names replaced, addresses remapped into
// the documentation ranges, and every outcome kept.
//
// The "real" public addresses the generated models use are the benchmarking blocks, which no
// one is given: RFC 2544 §C.2.2 (198.18.0.0/15) and RFC 5180 §5 (2001:2::/48); a made-up
// unique-local prefix stands for a site's own (RFC 4193 §3.1).

/** RFC 5737 §3 and RFC 3849. */
const DOCUMENTATION = ["192.0.2.0/24", "198.51.100.0/24", "203.0.113.0/24", "2001:db8::/32"].map((text) => parseEntry(text).range);
/** RFC 1918 §3 (kept), and fd00::/16 (where unique-local blocks go). */
const KEPT_OR_LOCAL = ["10.0.0.0/8", "172.16.0.0/12", "192.168.0.0/16", "fd00::/16"].map((text) => parseEntry(text).range);
type Range = (typeof DOCUMENTATION)[number];
const inside = (range: Range, blocks: readonly Range[]) => blocks.some((block) => block.family === range.family && block.first <= range.first && range.last <= block.last);

function validated(input: DeviceModelInput): DeviceModel {
  const parsed = parseModel(input);
  if (!parsed.ok) throw new Error(`invalid model: ${JSON.stringify(parsed.errors.slice(0, 3))}`);
  return parsed.model;
}

// ---------------------------------------------------------------------------------------------
// Random models

const V4_PUBLIC = [0xc6120000, 0xc6120400, 0xc6130000]; // 198.18.0.0, 198.18.4.0, 198.19.0.0 (RFC 2544)
const V4_DOC = [0xcb007100]; // 203.0.113.0 — a model may already use documentation addresses
const V4_PRIVATE = [0x0a000000, 0x0a140000]; // 10.0.0.0, 10.20.0.0 (RFC 1918)
const v4 = (n: number) => [24, 16, 8, 0].map((shift) => (n >>> shift) & 255).join(".");

const entryArbitrary = fc.oneof(
  // Public IPv4: single addresses, small blocks and short ranges, so they fit the 768 documentation addresses.
  fc.record({ base: fc.constantFrom(...V4_PUBLIC, ...V4_DOC), offset: fc.integer({ min: 0, max: 255 }), prefix: fc.integer({ min: 27, max: 32 }), kind: fc.constantFrom("cidr", "single", "range") }).map(({ base, offset, prefix, kind }) => {
    const value = base + offset;
    if (kind === "single") return v4(value);
    if (kind === "range") return `${v4(value)}-${v4(Math.min(base + 255, value + (offset % 7)))}`;
    const size = 2 ** (32 - prefix);
    return `${v4(Math.floor(value / size) * size)}/${prefix}`;
  }),
  fc.record({ base: fc.constantFrom(...V4_PRIVATE), offset: fc.integer({ min: 0, max: 65535 }), prefix: fc.integer({ min: 12, max: 32 }) }).map(({ base, offset, prefix }) => {
    const size = 2 ** (32 - prefix);
    return `${v4(Math.floor((base + offset) / size) * size)}/${prefix}`;
  }),
  fc.record({ group: fc.integer({ min: 0, max: 0xffff }), prefix: fc.integer({ min: 48, max: 128 }), local: fc.boolean() }).map(({ group, prefix, local }) => {
    const head = local ? "fd3c:9a12:7b44" : "2001:2:0";
    const text = `${head}:${group.toString(16)}::`;
    return prefix === 128 ? `${text}1` : `${head}::/${prefix}`;
  }),
);

const NAMES = ["noc-oslo", "vendor-acme-support", "home-office-ingrid", "partner-dc", "branch-7"];
const SERVICES = ["ssh", "https", "http", "ping", "snmp", "any"];

const modelArbitrary = fc
  .record({
    interfaces: fc.array(
      fc.record({
        role: fc.constantFrom("wan", "lan", "dmz", "management", "other"),
        v4: fc.constantFrom(...V4_PUBLIC, ...V4_DOC, ...V4_PRIVATE),
        host: fc.integer({ min: 1, max: 254 }),
        prefix: fc.constantFrom(24, 28, 32),
        v6: fc.constantFrom("none", "2001:2:0:1::1/64", "fd3c:9a12:7b44:2::1/64", "2001:db8:5::1/48"),
        listeners: fc.subarray(["ssh", "https", "http", "ping", "snmp"]),
      }),
      { minLength: 1, maxLength: 3 },
    ),
    objects: fc.array(fc.array(entryArbitrary, { minLength: 1, maxLength: 3 }), { minLength: 1, maxLength: NAMES.length }),
    rules: fc.array(
      fc.record({
        iface: fc.integer({ min: -1, max: 2 }),
        sources: fc.array(fc.integer({ min: -3, max: NAMES.length - 1 }), { minLength: 1, maxLength: 2 }),
        services: fc.subarray(SERVICES, { minLength: 1 }),
        action: fc.constantFrom("allow", "deny"),
        scheduled: fc.boolean(),
      }),
      { maxLength: 6 },
    ),
    accounts: fc.array(fc.record({ sources: fc.array(fc.oneof(fc.integer({ min: 0, max: NAMES.length - 1 }), entryArbitrary), { maxLength: 2 }), totp: fc.boolean() }), { maxLength: 3 }),
    defaultInbound: fc.constantFrom("allow", "deny"),
    unlistenedPort: fc.constantFrom("drop", "reset"),
  })
  .map((spec): DeviceModelInput => {
    const objectNames = spec.objects.map((_, index) => NAMES[index]);
    const addressName = (index: number) => (index < 0 ? ["any", "any4", "any6"][-index - 1] : objectNames[index % objectNames.length]);
    const interfaces = spec.interfaces.map((entry, index) => ({
      name: `port-${index}`,
      role: entry.role,
      // Each interface its own host, so no address sits on two interfaces.
      addresses: [`${v4(entry.v4 + 16 * index + (entry.host % 16))}/${entry.prefix}`, ...(entry.v6 === "none" ? [] : [entry.v6.replace("::1/", `::${index + 1}/`)])],
      listeners: entry.listeners,
    }));
    return {
      schemaVersion: 2,
      device: { name: "customer-edge", timezone: "Europe/Oslo", defaultInbound: spec.defaultInbound, unlistenedPort: spec.unlistenedPort },
      interfaces,
      addresses: spec.objects.map((entries, index) => ({ name: objectNames[index], entries })),
      addressGroups: [{ name: "all-partners", members: objectNames.slice(0, 2) }],
      schedules: [{ name: "acme-support-hours", windows: [{ days: ["mon", "tue", "wed", "thu", "fri"], start: "08:00", end: "17:30" }] }],
      inboundRules: spec.rules.map((rule, index) => ({
        id: `allow-acme-${index}`,
        interface: rule.iface < 0 || rule.iface >= interfaces.length ? "any" : interfaces[rule.iface].name,
        sources: [...new Set(rule.sources.map(addressName))],
        destinations: ["any"],
        services: rule.services,
        schedule: rule.scheduled ? "acme-support-hours" : "all-week",
        action: rule.action,
        note: "ticket ACME-1234 for Ingrid",
      })),
      accounts: spec.accounts.map((account, index) => ({
        name: index === 0 ? "admin" : `ingrid-${index}`,
        loginSources: [...new Set(account.sources.map((source) => (typeof source === "number" ? objectNames[source % objectNames.length] : source)))],
        secondFactor: account.totp ? "totp" : "none",
      })),
      operatorNetworks: [objectNames[0]],
    };
  });

const BUDGET: PropertyBudget = { numRuns: 60, timeoutMs: 40_000 };

const keyOf = (entry: ExposureEntry) => `${entry.interface}|${entry.to}|${entry.service}`;

/** Sources worth probing from: each entry's edges and their neighbours, in its family. */
function sampleSources(model: DeviceModel): string[] {
  const texts = [...model.addresses.flatMap((object) => object.entries), ...model.accounts.flatMap((account) => account.loginSources.filter((item) => /[.:]/.test(item)))];
  const out = new Set<string>(["203.0.113.50", "192.0.2.1", "2001:db8::50"]);
  for (const text of texts) {
    const { range } = parseEntry(text);
    const max = range.family === 4 ? 0xffffffffn : (1n << 128n) - 1n;
    for (const value of [range.first - 1n, range.first, range.last, range.last + 1n]) if (value >= 0n && value <= max) out.add(formatAddress(range.family, value));
  }
  return [...out];
}

describe("Anonymising a copy of a device", () => {
  test("keeps every outcome: the copy's exposure counts equal the original's, address by mapped address", () => {
    fc.assert(
      fc.property(modelArbitrary, (input) => {
        const original = validated(input);
        const copy = anonymiseModel(original, "teaching-copy");
        const copied = validated(copy.document);
        const before = exposure(compileModel(original));
        const after = exposure(compileModel(copied));
        // Schedules keep their windows, so the week splits into the same slices.
        expect(after.slices.map((slice) => [slice.startMinute, slice.endMinute])).toEqual(before.slices.map((slice) => [slice.startMinute, slice.endMinute]));
        // Pointwise too: each sampled source's outcome, on every interface and service, is its mapped address's in the copy.
        const originalDevice = compileModel(original);
        const copiedDevice = compileModel(copied);
        const at = "2026-12-08T09:00:00Z";
        for (const from of sampleSources(original)) {
          for (const iface of original.interfaces) {
            for (const service of ["ssh", "https", "ping", "snmp"]) {
              const was = trace(originalDevice, { from, interface: iface.name, service, at });
              const is = trace(copiedDevice, { from: copy.mapAddress(from), interface: copy.names.interfaces.get(iface.name)!, service, at });
              expect(is.outcome, `${from} on ${iface.name} ${service}`).toBe(was.outcome);
            }
          }
        }
        before.slices.forEach((slice, index) => {
          const mapped = new Map(after.slices[index].entries.map((entry) => [keyOf(entry), entry.counts]));
          expect(mapped.size).toBe(slice.entries.length);
          for (const entry of slice.entries) {
            const key = keyOf({ ...entry, interface: copy.names.interfaces.get(entry.interface)!, to: copy.mapAddress(entry.to) });
            expect(mapped.get(key), key).toEqual(entry.counts);
          }
        });
      }),
      propertyParameters(BUDGET),
    );
  }, BUDGET.timeoutMs);

  test("moves every public address into the documentation ranges (RFC 5737, RFC 3849), keeps RFC 1918 space, and leaves no chosen name or note", () => {
    fc.assert(
      fc.property(modelArbitrary, (input) => {
        const original = validated(input);
        const copied = validated(anonymiseModel(original, "teaching-copy").document);
        const ranges: Range[] = [
          ...copied.interfaces.flatMap((entry) => entry.addresses.map((text) => parseInterfaceAddress(text)).map((address) => ({ family: address.family, first: address.value, last: address.value }))),
          ...copied.addresses.flatMap((object) => object.entries.map((text) => parseEntry(text).range)),
          ...copied.accounts.flatMap((account) => account.loginSources.filter((text) => /[.:]/.test(text)).map((text) => parseEntry(text).range)),
        ];
        for (const range of ranges) expect(inside(range, DOCUMENTATION) || inside(range, KEPT_OR_LOCAL), `${range.first}-${range.last}`).toBe(true);
        const text = JSON.stringify(copied);
        for (const chosen of ["noc-oslo", "acme", "ingrid", "Ingrid", "customer-edge", "port-", "198.18.", "198.19.", "2001:2:", "fd3c:"]) expect(text).not.toContain(chosen);
        // A factory-default name is the trade's, not the customer's: it stays, and so does its finding.
        expect(copied.accounts.map((account) => account.name).includes("admin")).toBe(original.accounts.some((account) => account.name === "admin"));
      }),
      propertyParameters({ numRuns: 60, timeoutMs: 20_000 }),
    );
  }, 20_000);

  test("copying never changes the model it copies", () => {
    const original = validated(TRAINING_EXAMPLES[0].document);
    const before = JSON.stringify(original);
    anonymiseModel(original, "teaching-copy");
    expect(JSON.stringify(original)).toBe(before);
  });

  test("a shipped example keeps its findings' codes and its probes' outcomes, with the probe's addresses mapped", () => {
    for (const example of TRAINING_EXAMPLES) {
      const original = validated(example.document);
      const copy = anonymiseModel(original, "teaching-copy");
      const copied = compileModel(validated(copy.document));
      expect(findings(copied).map((finding) => finding.code).sort()).toEqual(findings(compileModel(original)).map((finding) => finding.code).sort());
      for (const step of example.probes) {
        const probe = { ...step.probe, from: copy.mapAddress(step.probe.from), interface: copy.names.interfaces.get(step.probe.interface)!, account: step.probe.account ? copy.names.accounts.get(step.probe.account) : undefined };
        expect(trace(copied, probe).outcome, `${example.key} ${JSON.stringify(step.probe)}`).toBe(step.outcome);
      }
    }
  });

  test("a device whose public IPv4 blocks cannot fit in the 768 documentation addresses is refused in words, not half anonymised", () => {
    const model = validated({
      schemaVersion: 2,
      device: { name: "wide-edge" },
      interfaces: [{ name: "wan", role: "wan", addresses: ["198.18.0.1/24"], listeners: ["https"] }],
      addresses: [{ name: "partners", entries: ["198.18.0.0/22"] }],
    });
    expect(() => anonymiseModel(model, "copy")).toThrow(AnonymiseError);
    expect(() => anonymiseModel(model, "copy")).toThrow(/do not fit in the 768 documentation addresses of RFC 5737/);
  });

  test("0.0.0.0/0 written as an entry covers every moved block, so it stays as written", () => {
    const model = validated({
      schemaVersion: 2,
      device: { name: "edge" },
      interfaces: [{ name: "wan", role: "wan", addresses: ["198.18.0.1/32"], listeners: ["https"] }],
      addresses: [{ name: "everyone", entries: ["0.0.0.0/0"] }, { name: "partner", entries: ["198.18.0.128/25"] }],
    });
    const copy = anonymiseModel(model, "copy");
    expect(copy.document.addresses[0].entries).toEqual(["0.0.0.0/0"]);
    expect(copy.document.addresses[1].entries).toHaveLength(1);
    expect(inside(parseEntry(copy.document.addresses[1].entries[0]).range, DOCUMENTATION)).toBe(true);
  });
});
