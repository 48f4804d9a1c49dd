// A hand-written reader of the version-2 document's shape: for a document the strict zod
// schema in model.ts accepts, the very value that schema's parse gives (defaults filled in,
// fresh objects and arrays, keys in the schema's order); for anything else, or anything it is
// unsure of, undefined, and the schema runs to say what is wrong. So it decides nothing on its
// own: it only spares a large valid model the schema's generic walk, which on the 2,000-rule
// benchmark model cost as much as compiling it. tests/engine/model-shape.test.ts checks it
// against the schema on random valid and invalid documents.

import { isValidTimeZone } from "./schedules.ts";
import {
  ACCESS_LEVELS,
  ALL_WEEK_SCHEDULE,
  CUSTOM_SERVICE_KINDS,
  DAYS,
  INTERFACE_ROLES,
  MODEL_SCHEMA_VERSION,
  NAME_PATTERN,
  CLOCK_TIME_PATTERN,
  PORT_PROTOCOLS,
  RULE_ACTIONS,
  SECOND_FACTORS,
  UNLISTENED_PORT_ACTIONS,
} from "./vocabulary.ts";
import type { DeviceModel } from "./model.ts";

/** Thrown inside the reader when the input is not plainly valid: the schema takes over. */
const UNSURE = Symbol("unsure");

type Plain = Record<string, unknown>;

/**
 * An object with the prototype a JSON object has, holding only `keys` (the schema's keys,
 * read as zod reads them: every enumerable key, inherited or own, counts).
 */
function object(value: unknown, keys: ReadonlySet<string>): Plain {
  if (typeof value !== "object" || value === null || Object.getPrototypeOf(value) !== Object.prototype) throw UNSURE;
  for (const key in value) if (!keys.has(key)) throw UNSURE;
  return value as Plain;
}

function array(value: unknown): readonly unknown[] {
  if (!Array.isArray(value)) throw UNSURE;
  return value;
}

function string(value: unknown): string {
  if (typeof value !== "string") throw UNSURE;
  return value;
}

function name(value: unknown): string {
  if (typeof value !== "string" || !NAME_PATTERN.test(value)) throw UNSURE;
  return value;
}

function names(value: unknown): string[] {
  const list = array(value);
  const out = new Array<string>(list.length);
  for (let i = 0; i < list.length; i++) out[i] = name(list[i]);
  return out;
}

function strings(value: unknown): string[] {
  const list = array(value);
  const out = new Array<string>(list.length);
  for (let i = 0; i < list.length; i++) out[i] = string(list[i]);
  return out;
}

function oneOf<T extends string>(value: unknown, words: readonly T[]): T {
  if (typeof value !== "string" || !(words as readonly string[]).includes(value)) throw UNSURE;
  return value as T;
}

function boolean(value: unknown): boolean {
  if (typeof value !== "boolean") throw UNSURE;
  return value;
}

/** An array field with a default of [] (zod's default stands for undefined as for a missing key). */
function listOr<T>(value: unknown, read: (element: unknown) => T): T[] {
  if (value === undefined) return [];
  const list = array(value);
  const out = new Array<T>(list.length);
  for (let i = 0; i < list.length; i++) out[i] = read(list[i]);
  return out;
}

const keysOf = (...keys: string[]): ReadonlySet<string> => new Set(keys);
const DOCUMENT = keysOf("schemaVersion", "device", "interfaces", "services", "addresses", "addressGroups", "serviceGroups", "schedules", "inboundRules", "accounts", "operatorNetworks");
const DEVICE = keysOf("name", "timezone", "defaultInbound", "unlistenedPort");
const INTERFACE = keysOf("name", "role", "addresses", "listeners");
const SERVICE = keysOf("name", "protocol", "port", "kind");
const ADDRESS = keysOf("name", "entries");
const GROUP = keysOf("name", "members");
const SCHEDULE = keysOf("name", "windows");
const WINDOW = keysOf("days", "start", "end");
const RULE = keysOf("id", "interface", "sources", "destinations", "services", "schedule", "action", "enabled", "note");
const ACCOUNT = keysOf("name", "loginSources", "secondFactor", "services", "accessLevel", "enabled");

type Group = DeviceModel["addressGroups"][number];

function group(value: unknown): Group {
  const g = object(value, GROUP);
  return { name: name(g.name), members: names(g.members) };
}

function read(input: unknown): DeviceModel {
  const doc = object(input, DOCUMENT);
  if (doc.schemaVersion !== MODEL_SCHEMA_VERSION) throw UNSURE;
  const d = object(doc.device, DEVICE);
  const timezone = d.timezone === undefined ? "UTC" : string(d.timezone);
  const device = {
    name: name(d.name),
    timezone,
    defaultInbound: d.defaultInbound === undefined ? "allow" : oneOf(d.defaultInbound, RULE_ACTIONS),
    unlistenedPort: d.unlistenedPort === undefined ? "drop" : oneOf(d.unlistenedPort, UNLISTENED_PORT_ACTIONS),
  };
  // Checked after the shape, as zod's refinement runs on a value of the right type.
  if (!isValidTimeZone(timezone)) throw UNSURE;
  return {
    schemaVersion: MODEL_SCHEMA_VERSION,
    device,
    interfaces: listOr(doc.interfaces, (value) => {
      const f = object(value, INTERFACE);
      return {
        name: name(f.name),
        role: f.role === undefined ? "other" : oneOf(f.role, INTERFACE_ROLES),
        addresses: f.addresses === undefined ? [] : strings(f.addresses),
        listeners: f.listeners === undefined ? [] : names(f.listeners),
      };
    }),
    services: listOr(doc.services, (value) => {
      const s = object(value, SERVICE);
      const serviceName = name(s.name);
      const protocol = oneOf(s.protocol, PORT_PROTOCOLS);
      const port = s.port;
      if (typeof port !== "number" || !Number.isInteger(port) || port < 1 || port > 65535) throw UNSURE;
      return { name: serviceName, protocol, port, kind: oneOf(s.kind, CUSTOM_SERVICE_KINDS) };
    }),
    addresses: listOr(doc.addresses, (value) => {
      const a = object(value, ADDRESS);
      return { name: name(a.name), entries: strings(a.entries) };
    }),
    addressGroups: listOr(doc.addressGroups, group),
    serviceGroups: listOr(doc.serviceGroups, group),
    schedules: listOr(doc.schedules, (value) => {
      const s = object(value, SCHEDULE);
      const scheduleName = name(s.name);
      const list = array(s.windows);
      const windows = new Array<DeviceModel["schedules"][number]["windows"][number]>(list.length);
      for (let i = 0; i < list.length; i++) {
        const w = object(list[i], WINDOW);
        const dayList = array(w.days);
        const days = new Array<(typeof DAYS)[number]>(dayList.length);
        for (let k = 0; k < dayList.length; k++) days[k] = oneOf(dayList[k], DAYS);
        const start = string(w.start);
        const end = string(w.end);
        if (!CLOCK_TIME_PATTERN.test(start) || !CLOCK_TIME_PATTERN.test(end)) throw UNSURE;
        windows[i] = { days, start, end };
      }
      return { name: scheduleName, windows };
    }),
    inboundRules: listOr(doc.inboundRules, (value) => {
      const r = object(value, RULE);
      const id = string(r.id);
      if (id.length < 1) throw UNSURE;
      return {
        id,
        interface: name(r.interface),
        sources: names(r.sources),
        destinations: names(r.destinations),
        services: names(r.services),
        schedule: r.schedule === undefined ? ALL_WEEK_SCHEDULE : name(r.schedule),
        action: oneOf(r.action, RULE_ACTIONS),
        enabled: r.enabled === undefined ? true : boolean(r.enabled),
        note: r.note === undefined ? "" : string(r.note),
      };
    }),
    accounts: listOr(doc.accounts, (value) => {
      const a = object(value, ACCOUNT);
      return {
        name: name(a.name),
        loginSources: a.loginSources === undefined ? [] : strings(a.loginSources),
        secondFactor: a.secondFactor === undefined ? "none" : oneOf(a.secondFactor, SECOND_FACTORS),
        services: a.services === undefined ? [] : names(a.services),
        accessLevel: a.accessLevel === undefined ? "full" : oneOf(a.accessLevel, ACCESS_LEVELS),
        enabled: a.enabled === undefined ? true : boolean(a.enabled),
      };
    }),
    operatorNetworks: doc.operatorNetworks === undefined ? [] : names(doc.operatorNetworks),
  };
}

/**
 * What the strict schema's parse gives for `input` when it accepts it with nothing to say;
 * undefined when it might not (the schema then gives the errors or warnings).
 */
export function readPlainDocument(input: unknown): DeviceModel | undefined {
  try {
    return read(input);
  } catch (e) {
    if (e === UNSURE) return undefined;
    throw e;
  }
}
