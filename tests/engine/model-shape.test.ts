// The hand-written reader of the model document's shape (server/engine/model-shape.ts) against
// the strict zod schema it stands in for: whenever it gives a value, the schema accepts the
// document and gives the same value (the same keys in the same order, defaults filled in);
// whenever the schema refuses a document, or has something to say about it, the reader gives
// nothing and the schema speaks. Random valid documents, and the same documents broken at a
// random place (wrong types and words, missing and unknown keys, holes, odd objects).

import fc from "fast-check";
import { describe, expect, test } from "vitest";
import { MODEL_DOCUMENT_SCHEMA, parseModel } from "#server/engine/index.ts";
import { readPlainDocument } from "#server/engine/model-shape.ts";
import { BENCH_SIZE, generateModel } from "#server/engine/testing/generate-model.ts";
import { propertyParameters } from "#tests/support/property-runs.ts";
import {
  ACCESS_LEVELS,
  CUSTOM_SERVICE_KINDS,
  DAYS,
  INTERFACE_ROLES,
  PORT_PROTOCOLS,
  RULE_ACTIONS,
  SECOND_FACTORS,
  UNLISTENED_PORT_ACTIONS,
} from "#server/engine/vocabulary.ts";

type Json = Record<string, unknown>;

const nameArb = fc.stringMatching(/^[A-Za-z0-9._-]{1,12}$/);
const names = fc.array(nameArb, { maxLength: 3 });
const text = fc.string({ maxLength: 8 });

/** A record whose keys may be left out (`optional`: zod's default then applies) or set to undefined, in a random order. */
function record(required: Record<string, fc.Arbitrary<unknown>>, optional: Record<string, fc.Arbitrary<unknown>>): fc.Arbitrary<Json> {
  const presence = fc.constantFrom("absent", "undefined", "value", "value");
  const optionalKeys = Object.keys(optional);
  return fc
    .tuple(fc.record(required, { noNullPrototype: true }), fc.tuple(...optionalKeys.map((k) => fc.tuple(presence, optional[k]))), fc.array(fc.nat(), { minLength: 12, maxLength: 12 }))
    .map(([req, opt, order]) => {
      const entries: [string, unknown][] = Object.entries(req);
      opt.forEach(([how, value], i) => {
        if (how !== "absent") entries.push([optionalKeys[i], how === "undefined" ? undefined : value]);
      });
      // A random key order: the schema's output has its own order whatever the input's.
      entries.sort((a, b) => (order[a[0].length % 12] + a[0].charCodeAt(0)) % 7 - (order[b[0].length % 12] + b[0].charCodeAt(0)) % 7);
      return Object.fromEntries(entries);
    });
}

// Objects as JSON.parse makes them (fast-check may otherwise give them no prototype: the reader leaves those to the schema).
const windowArb = fc.record(
  {
    days: fc.array(fc.constantFrom(...DAYS), { maxLength: 3 }),
    start: fc.constantFrom("00:00", "09:30", "23:59", "17:05"),
    end: fc.constantFrom("00:00", "12:00", "23:59"),
  },
  { noNullPrototype: true },
);

const documentArb: fc.Arbitrary<Json> = record(
  {
    schemaVersion: fc.constant(2),
    device: record({ name: nameArb }, { timezone: fc.constantFrom("UTC", "Europe/Paris", "America/New_York"), defaultInbound: fc.constantFrom(...RULE_ACTIONS), unlistenedPort: fc.constantFrom(...UNLISTENED_PORT_ACTIONS) }),
  },
  {
    interfaces: fc.array(record({ name: nameArb }, { role: fc.constantFrom(...INTERFACE_ROLES), addresses: fc.array(text, { maxLength: 2 }), listeners: names }), { maxLength: 3 }),
    services: fc.array(record({ name: nameArb, protocol: fc.constantFrom(...PORT_PROTOCOLS), port: fc.integer({ min: 1, max: 65535 }), kind: fc.constantFrom(...CUSTOM_SERVICE_KINDS) }, {}), { maxLength: 2 }),
    addresses: fc.array(record({ name: nameArb, entries: fc.array(text, { maxLength: 3 }) }, {}), { maxLength: 3 }),
    addressGroups: fc.array(record({ name: nameArb, members: names }, {}), { maxLength: 2 }),
    serviceGroups: fc.array(record({ name: nameArb, members: names }, {}), { maxLength: 2 }),
    schedules: fc.array(record({ name: nameArb, windows: fc.array(windowArb, { maxLength: 2 }) }, {}), { maxLength: 2 }),
    inboundRules: fc.array(
      record(
        { id: fc.string({ minLength: 1, maxLength: 6 }), interface: nameArb, sources: names, destinations: names, services: names, action: fc.constantFrom(...RULE_ACTIONS) },
        { schedule: nameArb, enabled: fc.boolean(), note: text },
      ),
      { maxLength: 3 },
    ),
    accounts: fc.array(
      record({ name: nameArb }, { loginSources: fc.array(text, { maxLength: 2 }), secondFactor: fc.constantFrom(...SECOND_FACTORS), services: names, accessLevel: fc.constantFrom(...ACCESS_LEVELS), enabled: fc.boolean() }),
      { maxLength: 2 },
    ),
    operatorNetworks: names,
  },
);

const fresh = <T>(make: () => T): fc.Arbitrary<T> => fc.constant(null).map(make);

/** Values that break a document where they land (or, by chance, fit). */
const oddValue: fc.Arbitrary<unknown> = fc.oneof(
  fc.constantFrom(null, undefined, 0, -0, -1, 1.5, 65536, 2, Number.NaN, true, false, "", " ", "a b", "x".repeat(64), "25:00", "9:00", "Mars/Olympus", "utc", "tcp", "icmp", "allow", "permit", "login", "mon", "Mon", "other", "wan"),
  fc.integer(),
  fc.string({ maxLength: 5 }),
  // Fresh containers each time: a break may land inside one later.
  fresh(() => []),
  fresh(() => ({})),
  fresh(() => {
    const holed: unknown[] = [];
    holed[1] = "x";
    return holed;
  }),
  fresh(() => Object.assign(Object.create(null) as Json, { name: "n" })),
  fresh(() => new Date(0)),
  fc.array(fc.constantFrom("a", 1, null), { maxLength: 2 }),
);

/** Every container (object or array) in the document, with the paths to them. */
function containers(value: unknown, out: (Json | unknown[])[] = []): (Json | unknown[])[] {
  if (typeof value === "object" && value !== null) {
    out.push(value as Json);
    for (const v of Object.values(value)) containers(v, out);
  }
  return out;
}

/** The document broken at one random place: a value replaced, a key removed or an unknown key added. */
const brokenArb = fc.tuple(documentArb, fc.nat(), fc.nat(), fc.constantFrom("replace", "delete", "add"), oddValue).map(([doc, where, which, how, value]) => {
  const places = containers(doc);
  const target = places[where % places.length];
  const keys = Object.keys(target);
  if (how === "add" || keys.length === 0) {
    if (Array.isArray(target)) target.push(value);
    else target[`extra${which % 3}`] = value;
  } else {
    const key = keys[which % keys.length];
    if (how === "delete") delete (target as Json)[key];
    else (target as Json)[key] = value;
  }
  return doc;
});

/** The reader and the schema agree on `doc`; returns whether the reader gave a value. */
function agree(doc: unknown): boolean {
  const fast = readPlainDocument(doc);
  const schema = MODEL_DOCUMENT_SCHEMA.safeParse(doc);
  if (fast === undefined) return false;
  expect(schema.success).toBe(true);
  // Same value, same key order (the model is written back out as JSON).
  expect(fast).toStrictEqual(schema.data);
  expect(JSON.stringify(fast)).toBe(JSON.stringify(schema.data));
  return true;
}

describe("the model document's shape read by hand equals the schema's parse", () => {
  test("random valid documents: read by hand, the schema's very value", { timeout: 60_000 }, () => {
    fc.assert(
      fc.property(documentArb, (doc) => {
        expect(agree(doc)).toBe(true);
      }),
      propertyParameters({ numRuns: 400, timeoutMs: 60_000 }),
    );
  });

  test("the same documents broken at a random place: never accepted where the schema refuses or warns", { timeout: 60_000 }, () => {
    let read = 0;
    let refused = 0;
    fc.assert(
      fc.property(brokenArb, (doc) => {
        if (agree(doc)) read++;
        if (!MODEL_DOCUMENT_SCHEMA.safeParse(doc).success) refused++;
      }),
      propertyParameters({ numRuns: 1500, timeoutMs: 60_000 }),
    );
    // Both kinds came up: breaks the schema refuses, and changes it takes as valid.
    expect(refused).toBeGreaterThan(100);
    expect(read).toBeGreaterThan(20);
  });

  test("near misses at every bound are left to the schema, which refuses them", { timeout: 30_000 }, () => {
    const valid = (): Json => ({
      schemaVersion: 2,
      device: { name: "d" },
      services: [{ name: "s", protocol: "tcp", port: 8443, kind: "login" }],
      schedules: [{ name: "w", windows: [{ days: ["mon"], start: "08:00", end: "18:00" }] }],
      inboundRules: [{ id: "r", interface: "i", sources: [], destinations: [], services: [], action: "allow" }],
    });
    expect(agree(valid())).toBe(true);
    const breaks: [string, (doc: Json) => void][] = [
      ["port 0", (d) => ((d.services as Json[])[0].port = 0)],
      ["port 65536", (d) => ((d.services as Json[])[0].port = 65536)],
      ["port 1.5", (d) => ((d.services as Json[])[0].port = 1.5)],
      ["port as text", (d) => ((d.services as Json[])[0].port = "443")],
      ["a name of 64 characters", (d) => ((d.device as Json).name = "n".repeat(64))],
      ["an empty name", (d) => ((d.device as Json).name = "")],
      ["an empty rule id", (d) => ((d.inboundRules as Json[])[0].id = "")],
      ["24:00", (d) => (((d.schedules as Json[])[0].windows as Json[])[0].end = "24:00")],
      ["a day in capitals", (d) => (((d.schedules as Json[])[0].windows as Json[])[0].days = ["Mon"])],
      ["an unknown time zone", (d) => ((d.device as Json).timezone = "Mars/Olympus")],
      ["version 3", (d) => (d.schemaVersion = 3)],
      ["enabled as text", (d) => ((d.inboundRules as Json[])[0].enabled = "true")],
      ["null for a defaulted list", (d) => (d.accounts = null)],
    ];
    for (const [what, change] of breaks) {
      const doc = valid();
      change(doc);
      expect(readPlainDocument(doc), what).toBeUndefined();
      expect(MODEL_DOCUMENT_SCHEMA.safeParse(doc).success, what).toBe(false);
    }
    // At the bounds themselves: read by hand.
    for (const port of [1, 65535]) {
      const doc = valid();
      (doc.services as Json[])[0].port = port;
      expect(agree(doc)).toBe(true);
    }
  });

  test("a time zone the schema's refinement refuses, and a document that is not a plain object", () => {
    const doc = { schemaVersion: 2, device: { name: "d", timezone: "Mars/Olympus" } };
    expect(readPlainDocument(doc)).toBeUndefined();
    expect(MODEL_DOCUMENT_SCHEMA.safeParse(doc).success).toBe(false);
    expect(readPlainDocument([doc])).toBeUndefined();
    expect(readPlainDocument(null)).toBeUndefined();
  });

  test("the benchmark's model is read by hand, with the same validation result", { timeout: 30_000 }, () => {
    const doc = generateModel(20250301, BENCH_SIZE).model;
    expect(agree(doc)).toBe(true);
    expect(parseModel(doc).ok).toBe(true);
  });
});
