// Seeded synthetic device models for property tests and the benchmark. Invented names;
// "internet" addresses come from the documentation ranges (RFC 5737, RFC 3849), inside
// addresses from RFC 1918 / RFC 4193 space.

import { formatAddress } from "../addresses.ts";
import type { DeviceModelInput, VersionOneModelInput } from "../model.ts";
import { ALL_WEEK_SCHEDULE, BUILTIN_ADDRESS_NAMES, DAYS, INTERFACE_ROLES, MODEL_SCHEMA_VERSION } from "../vocabulary.ts";

/** mulberry32: a small, fast, seedable PRNG returning [0, 1). */
export function prng(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

export interface ModelSize {
  readonly interfaces: number;
  readonly rules: number;
  readonly addressObjects: number;
  readonly entries: number;
  readonly groups: number;
  readonly accounts: number;
  readonly schedules: number;
  /** Address pools: "narrow" keeps addresses close together so rules overlap often (tests). */
  readonly spread: "narrow" | "wide";
  /** Share of inbound rules limited to a schedule. */
  readonly scheduledShare: number;
  /** "random": any quarter hour, crossing midnight, 24 h windows (tests); "office": whole-hour support and maintenance windows. */
  readonly scheduleStyle: "random" | "office";
}

export const BENCH_SIZE: ModelSize = {
  interfaces: 16,
  rules: 2000,
  addressObjects: 5000,
  entries: 20000,
  groups: 200,
  accounts: 50,
  schedules: 10,
  spread: "wide",
  scheduledShare: 0.03,
  scheduleStyle: "office",
};

/**
 * The benchmark model at another number of inbound rules: address objects, entries and groups
 * in the proportion BENCH_SIZE has at 2,000 rules; interfaces, accounts and schedules as there.
 */
export function benchSize(rules: number): ModelSize {
  const scale = rules / BENCH_SIZE.rules;
  return {
    ...BENCH_SIZE,
    rules,
    addressObjects: Math.max(1, Math.round(BENCH_SIZE.addressObjects * scale)),
    entries: Math.max(1, Math.round(BENCH_SIZE.entries * scale)),
    groups: Math.max(1, Math.round(BENCH_SIZE.groups * scale)),
  };
}

export const SMALL_SIZE: ModelSize = {
  interfaces: 3,
  rules: 12,
  addressObjects: 8,
  entries: 16,
  groups: 3,
  accounts: 4,
  schedules: 3,
  spread: "narrow",
  scheduledShare: 0.3,
  scheduleStyle: "random",
};

const ZONES = ["UTC", "Europe/Berlin", "America/New_York", "Australia/Lord_Howe", "Asia/Kolkata"];
const SERVICES = ["https", "http", "ssh", "telnet", "ping", "snmp", "webconsole", "syslog-in"];

export interface Generated<Model = DeviceModelInput> {
  readonly model: Model;
  /** Addresses worth probing from: inside and around the model's entries. */
  readonly sampleSources: readonly string[];
}

/** Builds a valid model document from a seed. */
export function generateModel(seed: number, size: ModelSize): Generated {
  const rnd = prng(seed);
  const int = (n: number): number => Math.floor(rnd() * n);
  const pick = <T>(xs: readonly T[]): T => xs[int(xs.length)];
  const chance = (p: number): boolean => rnd() < p;
  const narrow = size.spread === "narrow";

  // Address pools: IPv4 as numbers, IPv6 as bigints.
  const v4Bases = narrow
    ? [0xc0000200, 0xc6336400, 0x0a000000, 0xcb007100] // 192.0.2.0, 198.51.100.0, 10.0.0.0, 203.0.113.0
    : [0x0a000000, 0xac100000, 0xc0a80000, 0xc0000200, 0xc6336400, 0xcb007100, 0x64400000, 0x08000000, 0x2d000000];
  const v6Bases = narrow ? [0x20010db8n << 96n, 0xfd00n << 112n] : [0x20010db8n << 96n, 0xfd00n << 112n, 0x2a00n << 112n];
  const v4Span = narrow ? 512 : 1 << 24;
  const v6Span = narrow ? 512n : 1n << 80n;
  const sources: string[] = [];
  const v4 = (): number => (pick(v4Bases) + int(v4Span)) >>> 0;
  const v6 = (): bigint => pick(v6Bases) + BigInt(int(Number(v6Span > 1n << 50n ? 1n << 50n : v6Span))) * (v6Span > 1n << 50n ? 1n << 30n : 1n);
  const v4Text = (n: number): string => formatAddress(4, BigInt(n));
  const v6Text = (n: bigint): string => formatAddress(6, n);
  const entry = (): string => {
    const family6 = chance(0.3);
    const kind = int(3);
    if (family6) {
      const a = v6();
      sources.push(v6Text(a));
      if (kind === 0) {
        const prefix = narrow ? 120 + int(9) : 48 + int(81);
        const hostBits = BigInt(128 - prefix);
        return `${v6Text((a >> hostBits) << hostBits)}/${prefix}`;
      }
      if (kind === 1) return v6Text(a);
      const b = a + BigInt(int(narrow ? 40 : 100000));
      sources.push(v6Text(b), v6Text(b + 1n));
      return `${v6Text(a)}-${v6Text(b)}`;
    }
    const a = v4();
    sources.push(v4Text(a), v4Text(Math.max(0, a - 1)));
    if (kind === 0) {
      const prefix = narrow ? 24 + int(9) : 16 + int(17);
      const block = 2 ** (32 - prefix);
      const base = Math.floor(a / block) * block;
      sources.push(v4Text(Math.min(0xffffffff, base + block)));
      return `${v4Text(base)}/${prefix}`;
    }
    if (kind === 1) return v4Text(a);
    const b = Math.min(0xffffffff, a + int(narrow ? 40 : 5000));
    sources.push(v4Text(b), v4Text(Math.min(0xffffffff, b + 1)));
    return `${v4Text(a)}-${v4Text(b)}`;
  };

  const interfaces = Array.from({ length: size.interfaces }, (_, i) => {
    const addresses = [`${v4Text(((narrow ? 0xc0a80000 : 0xc0a80000) + i * 256 + 1) >>> 0)}/24`];
    if (chance(0.7)) addresses.push(`${v6Text((0xfd00n << 112n) + (BigInt(i) << 64n) + 1n)}/64`);
    if (chance(0.3)) addresses.push(`${v4Text((0xcb007100 + 64 + i) >>> 0)}/24`);
    return {
      name: `if${i}`,
      role: pick(INTERFACE_ROLES),
      addresses,
      listeners: SERVICES.filter(() => chance(0.5)),
    };
  });
  const deviceAddressTexts = interfaces.flatMap((f) => f.addresses.map((a) => a.split("/")[0]));

  const perObject = Math.max(1, Math.round(size.entries / size.addressObjects));
  const addresses = Array.from({ length: size.addressObjects }, (_, i) => ({
    name: `net-${i}`,
    entries: Array.from({ length: Math.max(1, perObject + int(3) - 1) }, entry),
  }));
  addresses.push({ name: "device-addrs", entries: deviceAddressTexts });
  interfaces.forEach((f) => addresses.push({ name: `${f.name}-addrs`, entries: f.addresses.map((a) => a.split("/")[0]) }));
  const addressNames = addresses.map((a) => a.name);

  const groups: { name: string; members: string[] }[] = [];
  for (let i = 0; i < size.groups; i++) {
    const members = Array.from({ length: 2 + int(narrow ? 3 : 10) }, () =>
      i > 0 && chance(0.3) ? groups[int(i)].name : pick(addressNames),
    );
    groups.push({ name: `grp-${i}`, members: [...new Set(members)] });
  }
  const groupNames = groups.map((g) => g.name);
  const sourceName = (): string => {
    const r = rnd();
    if (r < 0.04) return pick(BUILTIN_ADDRESS_NAMES);
    if (r < 0.3 && groupNames.length > 0) return pick(groupNames);
    return pick(addressNames);
  };

  const hhmm = (m: number): string => `${String(Math.floor(m / 60)).padStart(2, "0")}:${String(m % 60).padStart(2, "0")}`;
  const officeWindow = (): { days: (typeof DAYS)[number][]; start: string; end: string } => {
    const shape = int(4);
    if (shape === 0) return { days: DAYS.slice(0, 5), start: hhmm((7 + int(3)) * 60), end: hhmm((16 + int(4)) * 60) };
    if (shape === 1) return { days: [pick(["sat", "sun"])], start: hhmm((20 + int(4)) * 60), end: hhmm((1 + int(4)) * 60) };
    if (shape === 2) return { days: [...DAYS], start: hhmm((21 + int(3)) * 60), end: hhmm((5 + int(2)) * 60) };
    return { days: [pick(DAYS)], start: hhmm(int(24) * 60), end: hhmm(int(24) * 60) };
  };
  const schedules = Array.from({ length: size.schedules }, (_, i) => ({
    name: `sched-${i}`,
    windows: Array.from({ length: 1 + int(2) }, () => {
      if (size.scheduleStyle === "office") return officeWindow();
      const start = int(24 * 4) * 15;
      const shape = int(3); // 0 same day, 1 crosses midnight, 2 end == start (24 h)
      const end = shape === 2 ? start : shape === 1 ? (start + 600 + int(600)) % 1440 : Math.min(1439, start + 15 + int(600));
      return { days: DAYS.filter(() => chance(0.5)), start: hhmm(start), end: hhmm(end) };
    }),
  }));

  const serviceGroups = [
    { name: "admin-web", members: ["https", "webconsole"] },
    { name: "admin-all", members: ["admin-web", "ssh", "telnet", "http"] },
  ];
  const serviceChoices = [...SERVICES, "admin-web", "admin-all"];

  const inboundRules = Array.from({ length: size.rules }, (_, i) => {
    const iface = chance(0.1) ? "any" : `if${int(size.interfaces)}`;
    return {
    id: `r${i}`,
    interface: iface,
    sources: Array.from({ length: 1 + int(3) }, sourceName),
    destinations: chance(0.6) ? ["any"] : [iface === "any" || chance(0.3) ? "device-addrs" : chance(0.9) ? `${iface}-addrs` : pick(addressNames)],
    services: chance(0.2) ? ["any"] : [...new Set(Array.from({ length: 1 + int(3) }, () => pick(serviceChoices)))],
    schedule: chance(size.scheduledShare) && schedules.length > 0 ? pick(schedules).name : ALL_WEEK_SCHEDULE,
    action: chance(0.5) ? ("allow" as const) : ("deny" as const),
    enabled: chance(0.95),
  };
  });
  if (chance(0.7)) {
    inboundRules.push({ id: "final-drop", interface: "any", sources: ["any"], destinations: ["any"], services: ["any"], schedule: ALL_WEEK_SCHEDULE, action: "deny", enabled: true });
  }

  const accounts = Array.from({ length: size.accounts }, (_, i) => ({
    name: `acct-${i}`,
    loginSources: chance(0.2) ? [] : Array.from({ length: 1 + int(2) }, () => (chance(0.3) ? entry() : pick([...addressNames, ...groupNames]))),
    secondFactor: chance(0.6) ? ("totp" as const) : ("none" as const),
    services: chance(0.3) ? ["https", "ssh", "webconsole"].filter(() => chance(0.5)) : [],
    enabled: chance(0.9),
  }));

  const model: DeviceModelInput = {
    schemaVersion: MODEL_SCHEMA_VERSION,
    device: {
      name: `gen-${seed >>> 0}`,
      timezone: pick(ZONES),
      defaultInbound: chance(0.5) ? "allow" : "deny",
      unlistenedPort: chance(0.5) ? "drop" : "reset",
    },
    interfaces,
    services: [
      { name: "webconsole", protocol: "tcp", port: 8443, kind: "login" },
      { name: "syslog-in", protocol: "udp", port: 514, kind: "other" },
    ],
    addresses,
    addressGroups: groups,
    serviceGroups,
    schedules,
    inboundRules,
    accounts,
    operatorNetworks: [pick(addressNames)],
  };
  for (let i = 0; i < 8; i++) sources.push(v4Text(v4()), v6Text(v6()));
  sources.push("0.0.0.0", "255.255.255.255", "::", "ffff:ffff:ffff:ffff:ffff:ffff:ffff:ffff", ...deviceAddressTexts);
  return { model, sampleSources: [...new Set(sources)] };
}

/**
 * Version 1's words, written out here from PRODUCT.md §4 rather than taken from upgrade.ts, so
 * a property test checks the upgrade against a second statement of the mapping: each role sits
 * at the position of the version-2 role it became (INTERFACE_ROLES).
 */
const VERSION_1_ROLE_WORDS = ["outside", "inside", "dmz", "mgmt", "other"] as const;
const VERSION_1_ALL_WEEK = "always";

/** The same model as generateModel(seed, size), written as a version-1 document. */
export function generateVersionOneModel(seed: number, size: ModelSize): Generated<VersionOneModelInput> {
  const { model, sampleSources } = generateModel(seed, size);
  const roleWord = (role: (typeof INTERFACE_ROLES)[number] | undefined) => (role === undefined ? undefined : VERSION_1_ROLE_WORDS[INTERFACE_ROLES.indexOf(role)]);
  return {
    model: {
      ...model,
      schemaVersion: 1,
      interfaces: model.interfaces?.map((entry) => ({ ...entry, role: roleWord(entry.role) })),
      inboundRules: model.inboundRules?.map((rule) => (rule.schedule === ALL_WEEK_SCHEDULE ? { ...rule, schedule: VERSION_1_ALL_WEEK } : rule)),
    },
    sampleSources,
  };
}
