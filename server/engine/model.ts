// The device model document (schemaVersion 2): its zod schema, defaults and the semantic
// checks that zod cannot express (references, name spaces, cycles, addresses). Older versions
// are upgraded first (upgrade.ts), so everything after the upgrade sees version-2 words.

import { z } from "zod";
import { AddressSyntaxError, formatAddress, parseEntry, parseInterfaceAddress } from "./addresses.ts";
import type { AddressRange } from "./addresses.ts";
import { readPlainDocument } from "./model-shape.ts";
import { isValidTimeZone } from "./schedules.ts";
import { upgradeModel } from "./upgrade.ts";
import type { VersionOneRole } from "./upgrade.ts";
import {
  ACCESS_LEVELS,
  ALL_WEEK_SCHEDULE,
  ANY_INTERFACE,
  ANY_SERVICE,
  BUILTIN_ADDRESS_NAMES,
  BUILTIN_SERVICES,
  CUSTOM_SERVICE_KINDS,
  DAYS,
  INTERFACE_ROLES,
  isBuiltinAddressName,
  MODEL_SCHEMA_VERSION,
  looksLikeAddressEntry,
  NAME_PATTERN,
  CLOCK_TIME_PATTERN,
  PORT_PROTOCOLS,
  RULE_ACTIONS,
  SECOND_FACTORS,
  UNLISTENED_PORT_ACTIONS,
} from "./vocabulary.ts";
import type { Protocol } from "./vocabulary.ts";

/** "tcp/443", "udp/161", "icmp/echo": how rules and probes match services. */
export function serviceKey(protocol: Protocol, port: number | null): string {
  return protocol === "icmp" ? "icmp/echo" : `${protocol}/${port}`;
}

// Kept in step with model-shape.ts, the hand-written reader that gives this schema's value for
// plainly valid documents: a change here goes there too (tests/engine/model-shape.test.ts).
function schemaFor(strict: boolean) {
  const obj = <T extends z.ZodRawShape>(shape: T) => (strict ? z.strictObject(shape) : z.object(shape));
  const name = z.string().regex(NAME_PATTERN, { message: "must be 1-63 characters of A-Z a-z 0-9 . _ -" });
  const names = z.array(name);
  return obj({
    schemaVersion: z.literal(MODEL_SCHEMA_VERSION, { message: `must be ${MODEL_SCHEMA_VERSION}` }),
    device: obj({
      name,
      timezone: z
        .string()
        .default("UTC")
        .refine((tz) => isValidTimeZone(tz), { message: "is not a known IANA time zone" }),
      defaultInbound: z.enum(RULE_ACTIONS).default("allow"),
      unlistenedPort: z.enum(UNLISTENED_PORT_ACTIONS).default("drop"),
    }),
    interfaces: z
      .array(
        obj({
          name,
          role: z.enum(INTERFACE_ROLES).default("other"),
          addresses: z.array(z.string()).default([]),
          listeners: names.default([]),
        }),
      )
      .default([]),
    services: z
      .array(
        obj({
          name,
          protocol: z.enum(PORT_PROTOCOLS),
          port: z.number().int().min(1).max(65535),
          kind: z.enum(CUSTOM_SERVICE_KINDS),
        }),
      )
      .default([]),
    addresses: z.array(obj({ name, entries: z.array(z.string()) })).default([]),
    addressGroups: z.array(obj({ name, members: names })).default([]),
    serviceGroups: z.array(obj({ name, members: names })).default([]),
    schedules: z
      .array(
        obj({
          name,
          windows: z.array(
            obj({
              days: z.array(z.enum(DAYS)),
              start: z.string().regex(CLOCK_TIME_PATTERN, { message: "must be HH:MM (00:00-23:59)" }),
              end: z.string().regex(CLOCK_TIME_PATTERN, { message: "must be HH:MM (00:00-23:59)" }),
            }),
          ),
        }),
      )
      .default([]),
    inboundRules: z
      .array(
        obj({
          id: z.string().min(1, { message: "must not be empty" }),
          interface: name,
          sources: names,
          destinations: names,
          services: names,
          schedule: name.default(ALL_WEEK_SCHEDULE),
          action: z.enum(RULE_ACTIONS),
          enabled: z.boolean().default(true),
          note: z.string().default(""),
        }),
      )
      .default([]),
    accounts: z
      .array(
        obj({
          name,
          loginSources: z.array(z.string()).default([]),
          secondFactor: z.enum(SECOND_FACTORS).default("none"),
          services: names.default([]),
          accessLevel: z.enum(ACCESS_LEVELS).default("full"),
          enabled: z.boolean().default(true),
        }),
      )
      .default([]),
    operatorNetworks: names.default([]),
  });
}

const STRICT_SCHEMA = schemaFor(true);
/** The loose schema (unknown fields dropped), built when a document first has one: most never do. */
let looseSchema: ReturnType<typeof schemaFor> | undefined;
const looseSchemaOnce = (): ReturnType<typeof schemaFor> => (looseSchema ??= schemaFor(false));

/** The version-2 document as parseModel checks it first (strict: unknown fields refused); the API's document describes it. */
export const MODEL_DOCUMENT_SCHEMA = STRICT_SCHEMA;

/** A validated device model document with every default filled in and CIDRs normalised. */
export type DeviceModel = z.output<ReturnType<typeof schemaFor>>;
/** The document as written (optional fields may be missing). */
export type DeviceModelInput = z.input<ReturnType<typeof schemaFor>>;
export type DeviceInterface = DeviceModel["interfaces"][number];
export type InboundRule = DeviceModel["inboundRules"][number];
export type Account = DeviceModel["accounts"][number];
export type Schedule = DeviceModel["schedules"][number];

/**
 * A validated version-1 document, as revisions saved before version 2 hold it: the same shape
 * with version 1's words (its schedule names are plain strings either way). Read it through
 * parseModel, which upgrades it.
 */
export type VersionOneModel = Omit<DeviceModel, "schemaVersion" | "interfaces"> & {
  schemaVersion: 1;
  interfaces: Array<Omit<DeviceInterface, "role"> & { role: VersionOneRole }>;
};
/** A version-1 document as written (optional fields may be missing). */
export type VersionOneModelInput = Omit<DeviceModelInput, "schemaVersion" | "interfaces"> & {
  schemaVersion: 1;
  interfaces?: Array<Omit<NonNullable<DeviceModelInput["interfaces"]>[number], "role"> & { role?: VersionOneRole }>;
};

export interface ValidationIssue {
  /** e.g. `inboundRules[3].sources[0]`; empty for the document itself. */
  readonly path: string;
  readonly message: string;
}

/** `upgradedFrom` is there when the input was an older version, read as the current one. */
export type ParseResult =
  | { readonly ok: true; readonly model: DeviceModel; readonly warnings: readonly ValidationIssue[]; readonly upgradedFrom?: 1 }
  | { readonly ok: false; readonly errors: readonly ValidationIssue[]; readonly warnings: readonly ValidationIssue[]; readonly upgradedFrom?: 1 };

export function formatPath(path: readonly PropertyKey[]): string {
  let out = "";
  for (const part of path) {
    if (typeof part === "number") out += `[${part}]`;
    else out += out === "" ? String(part) : `.${String(part)}`;
  }
  return out;
}

// Defined with the other words in vocabulary.ts, so the browser's pickers tell literals apart the same way.
export { looksLikeAddressEntry } from "./vocabulary.ts";

/**
 * Why an account may not name `name` among its services, or null when it may: PRODUCT.md §3,
 * an account's services name catalogue services of kind login only (ping, snmp, custom
 * services of kind other, service groups and `any` are refused). Shared with the device editor.
 */
export function accountServiceProblem(
  name: string,
  model: { readonly services?: readonly { name: string; kind: string }[]; readonly serviceGroups?: readonly { name: string }[] },
): string | null {
  const service = BUILTIN_SERVICES.find((s) => s.name === name) ?? model.services?.find((s) => s.name === name);
  if (service?.kind === "login") return null;
  const why = "accounts name login services only";
  if (service !== undefined) return `"${name}" is a service of kind ${service.kind} (${why})`;
  if (name === ANY_SERVICE) return `"${name}" is not a service name (${why}; an empty list means all of them)`;
  if (model.serviceGroups?.some((g) => g.name === name)) return `"${name}" is a service group (${why})`;
  return `unknown service "${name}" (${why})`;
}

/**
 * The ranges of each address object's entries as validation parsed them, by the entries array
 * parseModel returned (with a copy of its texts, so an array changed in place is parsed again):
 * compiling reads them instead of parsing every entry a second time (at 16,000 rules, 160,000
 * entries and about a tenth of a compile).
 */
const PARSED_ENTRIES = new WeakMap<readonly string[], { readonly texts: readonly string[]; readonly ranges: readonly AddressRange[] }>();

/** The parsed ranges of an address object's entries when parseModel validated this very array and it is unchanged; otherwise undefined. */
export function parsedEntries(entries: readonly string[]): readonly AddressRange[] | undefined {
  const known = PARSED_ENTRIES.get(entries);
  if (known === undefined || known.texts.length !== entries.length) return undefined;
  for (let i = 0; i < entries.length; i++) if (known.texts[i] !== entries[i]) return undefined;
  return known.ranges;
}

/**
 * Validates a document: its version (an older one is upgraded), then shape with zod, then
 * references, name spaces, cycles and addresses.
 */
export function parseModel(input: unknown): ParseResult {
  const upgrade = upgradeModel(input);
  if (!upgrade.ok) return { ok: false, errors: upgrade.errors, warnings: [] };
  const upgraded = upgrade.from === 1 ? { upgradedFrom: upgrade.from } : {};
  const result = parseCurrent(upgrade.document, [...upgrade.warnings]);
  return { ...result, ...upgraded };
}

function parseCurrent(input: unknown, warnings: ValidationIssue[]): ParseResult {
  const errors: ValidationIssue[] = [];
  // A plainly valid document is read by hand (model-shape.ts): the schema's value, found faster;
  // anything else goes through the schema, which alone says what is wrong.
  const plain = readPlainDocument(input);
  const strict = plain !== undefined ? ({ success: true, data: plain } as const) : STRICT_SCHEMA.safeParse(input);
  if (!strict.success) {
    for (const issue of strict.error.issues) {
      if (issue.code === "unrecognized_keys") {
        for (const key of issue.keys) {
          warnings.push({ path: formatPath([...issue.path, key]), message: "unknown field ignored" });
        }
      } else {
        errors.push({ path: formatPath(issue.path), message: issue.message });
      }
    }
    if (errors.length > 0) return { ok: false, errors, warnings };
  }
  // With no unknown field the strict parse's output is the loose one's: parse again only to
  // drop unknown fields (a cold parse of a large model costs as much as its compilation).
  let model: DeviceModel;
  if (strict.success) model = strict.data;
  else {
    const loose = looseSchemaOnce().safeParse(input);
    if (!loose.success) {
      return { ok: false, errors: loose.error.issues.map((i) => ({ path: formatPath(i.path), message: i.message })), warnings };
    }
    model = loose.data;
  }
  checkSemantics(model, errors, warnings);
  return errors.length > 0 ? { ok: false, errors, warnings } : { ok: true, model, warnings };
}

function checkSemantics(model: DeviceModel, errors: ValidationIssue[], warnings: ValidationIssue[]): void {
  const fail = (path: string, message: string): void => {
    errors.push({ path, message });
  };

  // Name spaces.
  const addressKinds = new Map<string, "address" | "group">();
  const serviceKinds = new Map<string, "service" | "group">();
  const claim = <K>(space: Map<string, K>, reserved: readonly string[], name: string, kind: K, path: string, what: string): void => {
    if (reserved.includes(name)) fail(path, `"${name}" is a built-in ${what} name`);
    else if (space.has(name)) fail(path, `duplicate ${what} name "${name}"`);
    else space.set(name, kind);
  };
  const builtinServiceNames = [...BUILTIN_SERVICES.map((s) => s.name), ANY_SERVICE];
  model.addresses.forEach((a, i) => claim(addressKinds, BUILTIN_ADDRESS_NAMES, a.name, "address", `addresses[${i}].name`, "address"));
  model.addressGroups.forEach((g, i) => claim(addressKinds, BUILTIN_ADDRESS_NAMES, g.name, "group", `addressGroups[${i}].name`, "address"));
  model.services.forEach((s, i) => claim(serviceKinds, builtinServiceNames, s.name, "service", `services[${i}].name`, "service"));
  model.serviceGroups.forEach((g, i) => claim(serviceKinds, builtinServiceNames, g.name, "group", `serviceGroups[${i}].name`, "service"));
  const scheduleNames = new Map<string, number>();
  model.schedules.forEach((s, i) => claim(scheduleNames, [ALL_WEEK_SCHEDULE], s.name, i, `schedules[${i}].name`, "schedule"));
  const interfaceNames = new Map<string, number>();
  model.interfaces.forEach((f, i) => claim(interfaceNames, [ANY_INTERFACE], f.name, i, `interfaces[${i}].name`, "interface"));
  const accountNames = new Map<string, number>();
  model.accounts.forEach((a, i) => claim(accountNames, [], a.name, i, `accounts[${i}].name`, "account"));
  const ruleIds = new Set<string>();
  model.inboundRules.forEach((r, i) => {
    if (ruleIds.has(r.id)) fail(`inboundRules[${i}].id`, `duplicate rule id "${r.id}"`);
    ruleIds.add(r.id);
  });

  // Catalogue: one service per protocol/port.
  const byKey = new Map<string, string>(BUILTIN_SERVICES.map((s) => [serviceKey(s.protocol, s.port), s.name]));
  model.services.forEach((s, i) => {
    const key = serviceKey(s.protocol, s.port);
    const other = byKey.get(key);
    if (other !== undefined) fail(`services[${i}]`, `${key} is already the service "${other}"`);
    else byKey.set(key, s.name);
  });
  const catalogue = new Set([...BUILTIN_SERVICES.map((s) => s.name), ...model.services.map((s) => s.name)]);

  // Interfaces: addresses parse, each address on one interface only; listeners are catalogue services.
  const addressOwner = new Map<string, string>();
  model.interfaces.forEach((f, i) => {
    f.addresses.forEach((text, j) => {
      const path = `interfaces[${i}].addresses[${j}]`;
      try {
        const a = parseInterfaceAddress(text);
        const key = `${a.family}:${a.value}`;
        const owner = addressOwner.get(key);
        if (owner !== undefined) fail(path, `address ${formatAddress(a.family, a.value)} is already on interface "${owner}"`);
        else addressOwner.set(key, f.name);
      } catch (e) {
        fail(path, messageOf(e));
      }
    });
    f.listeners.forEach((l, j) => {
      if (!catalogue.has(l)) fail(`interfaces[${i}].listeners[${j}]`, `unknown service "${l}" (listeners name catalogue services)`);
    });
  });

  // Address objects: entries parse; host bits are normalised with a warning.
  /** The entry's text, normalised (with a warning) when a CIDR has host bits; errors are recorded. */
  const normalisedEntry = (text: string, path: string, ranges?: AddressRange[]): string => {
    try {
      const parsed = parseEntry(text);
      ranges?.push(parsed.range);
      if (parsed.normalised === undefined) return text;
      warnings.push({ path, message: `host bits set in "${text}"; normalised to ${parsed.normalised}` });
      return parsed.normalised;
    } catch (e) {
      fail(path, messageOf(e));
      return text;
    }
  };
  model.addresses.forEach((a, i) => {
    const ranges: AddressRange[] = [];
    a.entries = a.entries.map((text, j) => normalisedEntry(text, `addresses[${i}].entries[${j}]`, ranges));
    if (ranges.length === a.entries.length) PARSED_ENTRIES.set(a.entries, { texts: a.entries.slice(), ranges });
  });

  const isAddressName = (n: string): boolean => addressKinds.has(n) || isBuiltinAddressName(n);
  const isServiceName = (n: string): boolean => serviceKinds.has(n) || catalogue.has(n) || n === ANY_SERVICE;
  const checkAddressNames = (list: readonly string[], path: string): void => {
    list.forEach((n, j) => {
      if (!isAddressName(n)) fail(`${path}[${j}]`, `unknown address "${n}"`);
    });
  };

  model.addressGroups.forEach((g, i) => checkAddressNames(g.members, `addressGroups[${i}].members`));
  model.serviceGroups.forEach((g, i) =>
    g.members.forEach((n, j) => {
      if (!isServiceName(n)) fail(`serviceGroups[${i}].members[${j}]`, `unknown service "${n}"`);
    }),
  );
  reportCycles(model.addressGroups, "addressGroups", fail);
  reportCycles(model.serviceGroups, "serviceGroups", fail);

  model.inboundRules.forEach((r, i) => {
    const path = `inboundRules[${i}]`;
    if (r.interface !== ANY_INTERFACE && !interfaceNames.has(r.interface)) fail(`${path}.interface`, `unknown interface "${r.interface}"`);
    checkAddressNames(r.sources, `${path}.sources`);
    checkAddressNames(r.destinations, `${path}.destinations`);
    r.services.forEach((n, j) => {
      if (!isServiceName(n)) fail(`${path}.services[${j}]`, `unknown service "${n}"`);
    });
    if (r.schedule !== ALL_WEEK_SCHEDULE && !scheduleNames.has(r.schedule)) fail(`${path}.schedule`, `unknown schedule "${r.schedule}"`);
  });

  model.accounts.forEach((a, i) => {
    a.loginSources = a.loginSources.map((text, j) => {
      const path = `accounts[${i}].loginSources[${j}]`;
      if (!looksLikeAddressEntry(text)) {
        if (!isAddressName(text)) fail(path, `unknown address "${text}"`);
        return text;
      }
      return normalisedEntry(text, path);
    });
    a.services.forEach((n, j) => {
      const problem = accountServiceProblem(n, model);
      if (problem !== null) fail(`accounts[${i}].services[${j}]`, problem);
    });
  });
  checkAddressNames(model.operatorNetworks, "operatorNetworks");
}

/** Reports every cycle among groups once, naming the path around it. */
function reportCycles(
  groups: readonly { name: string; members: string[] }[],
  field: string,
  fail: (path: string, message: string) => void,
): void {
  const index = new Map(groups.map((g, i) => [g.name, i]));
  const state = new Uint8Array(groups.length); // 0 new, 1 on stack, 2 done
  const stack: number[] = [];
  const visit = (i: number): void => {
    state[i] = 1;
    stack.push(i);
    groups[i].members.forEach((member, j) => {
      const k = index.get(member);
      if (k === undefined) return;
      if (state[k] === 1) {
        const cycle = [...stack.slice(stack.indexOf(k)).map((n) => groups[n].name), member];
        fail(`${field}[${i}].members[${j}]`, `group cycle ${cycle.map((n) => `"${n}"`).join(" → ")}`);
      } else if (state[k] === 0) {
        visit(k);
      }
    });
    stack.pop();
    state[i] = 2;
  };
  groups.forEach((_, i) => {
    if (state[i] === 0) visit(i);
  });
}

function messageOf(e: unknown): string {
  if (e instanceof AddressSyntaxError) return e.message;
  return e instanceof Error ? e.message : String(e);
}
