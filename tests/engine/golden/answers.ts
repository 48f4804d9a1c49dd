// The engine's answers for every fixture model and demo device, as frozen in this folder's
// JSON files: findings, the exposure of every slice, reach from fixed sources and a few traces,
// all at fixed instants (never "now"). Shared by golden.test.ts (compares) and update.ts (writes).

import { readdirSync, readFileSync } from "node:fs";
import { basename, join, relative } from "node:path";
import { compileModel, exposure, findings, parseModel, ProbeError, reach, trace } from "#server/engine/index.ts";
import type { CompiledModel, ProbeInput } from "#server/engine/index.ts";
import { formatAddress, parseEntry } from "#server/engine/addresses.ts";

const ROOT = join(import.meta.dirname, "../../..");
export const GOLDEN_DIR = import.meta.dirname;

/** Sources from documentation and private space: RFC 5737, RFC 1918, RFC 3849. */
export const SOURCES = ["203.0.113.50", "198.51.100.7", "10.20.30.5", "2001:db8::50"] as const;

/**
 * Fixed instants, in UTC. Tuesday 15:00Z is office hours in Berlin (16:00) and Chicago (09:00,
 * inside clf-fw-01's vendor window); Saturday 23:30Z is night-time everywhere the models are;
 * Wednesday 2 July is summer time in Europe and America.
 */
export const REACH_AT = "2025-03-04T15:00:00Z";
export const TRACE_INSTANTS = ["2025-03-08T23:30:00Z", "2025-07-02T14:00:00Z"] as const;

export interface GoldenModel {
  /** The model file, relative to the repository root. */
  readonly file: string;
  /** The golden file's name in this folder. */
  readonly golden: string;
}

/** Every fixture model (tests/fixtures/models) and demo device (seeders/devices): documents with a schemaVersion. */
export function goldenModels(): GoldenModel[] {
  const folders = [
    { dir: join(ROOT, "tests/fixtures/models"), prefix: "fixture" },
    { dir: join(ROOT, "seeders/devices"), prefix: "demo" },
  ];
  return folders.flatMap(({ dir, prefix }) =>
    readdirSync(dir)
      .filter((name) => name.endsWith(".json") && isModelDocument(JSON.parse(readFileSync(join(dir, name), "utf8"))))
      .sort()
      .map((name) => ({ file: relative(ROOT, join(dir, name)), golden: `${prefix}-${basename(name)}` })),
  );
}

function isModelDocument(json: unknown): boolean {
  return typeof json === "object" && json !== null && !Array.isArray(json) && "schemaVersion" in json;
}

/** A trace's JSON, or the probe input error's message (input errors are answers too). */
type TraceAnswer = { probe: ProbeInput; result: unknown } | { probe: ProbeInput; error: string };

export interface GoldenAnswers {
  readonly model: string;
  readonly findings: unknown;
  readonly exposure: unknown;
  readonly reach: { readonly at: string; readonly results: Record<string, unknown> };
  readonly traces: readonly TraceAnswer[];
}

/** The engine's answers for one model, as plain JSON (what the CLI prints with --json). */
export function goldenAnswers(model: GoldenModel): GoldenAnswers {
  const parsed = parseModel(JSON.parse(readFileSync(join(ROOT, model.file), "utf8")));
  if (!parsed.ok) throw new Error(`${model.file} does not validate: ${JSON.stringify(parsed.errors)}`);
  const device = compileModel(parsed.model);
  return {
    model: model.file,
    findings: json(findings(device)),
    exposure: json(exposure(device)),
    reach: { at: REACH_AT, results: Object.fromEntries(SOURCES.map((source) => [source, json(reach(device, source, REACH_AT))])) },
    traces: probesFor(device, model).map((probe) => traceAnswer(device, probe)),
  };
}

/** How many of a model's address objects lend a source to the traces. */
const OBJECT_SOURCES = 6;

/**
 * A few probes per model, chosen from the model itself: on every interface, https from the
 * internet at night, ssh from inside to the device's last IPv4 address with the first account
 * (summer time), port forms (tcp/8443, udp/161, icmp/echo); https (office hours) and ssh (night)
 * from the middle of the first entry of each of the first address objects, so allowed paths and
 * logins are traced too; the probes of a companion *.expected.json; and one input error.
 */
function probesFor(device: CompiledModel, model: GoldenModel): ProbeInput[] {
  const { interfaces, accounts, addresses } = device.model;
  const [night, summer] = TRACE_INSTANTS;
  const objectSources = addresses.slice(0, OBJECT_SOURCES).flatMap((object) => {
    if (object.entries.length === 0) return [];
    const { family, first, last } = parseEntry(object.entries[0]).range;
    return [formatAddress(family, first + (last - first) / 2n)];
  });
  const v4 = interfaces.flatMap((f) => f.addresses.map((a) => a.split("/")[0])).filter((a) => a.includes("."));
  const probes: ProbeInput[] = interfaces.flatMap((f) => [
    { from: SOURCES[0], interface: f.name, service: "https", at: night },
    { from: SOURCES[2], interface: f.name, service: "ssh", at: summer, ...(v4.length > 0 ? { to: v4[v4.length - 1] } : {}), ...(accounts.length > 0 ? { account: accounts[0].name } : {}) },
    { from: SOURCES[1], interface: f.name, service: "tcp/8443", at: summer },
    { from: SOURCES[3], interface: f.name, service: "udp/161", at: night },
    { from: SOURCES[3], interface: f.name, service: "icmp/echo", at: summer },
  ]);
  for (const from of objectSources) {
    for (const f of interfaces) probes.push({ from, interface: f.name, service: "https", at: REACH_AT }, { from, interface: f.name, service: "ssh", at: night });
  }
  const expected = join(ROOT, model.file.replace(/\.json$/, ".expected.json"));
  try {
    const companion = JSON.parse(readFileSync(expected, "utf8")) as { traces?: { probe: ProbeInput }[] };
    probes.push(...(companion.traces ?? []).map((t) => t.probe));
  } catch (error) {
    if (!(error instanceof Error && "code" in error && error.code === "ENOENT")) throw error;
  }
  probes.push({ from: SOURCES[0], interface: "no-such-interface", service: "https", at: night });
  return probes;
}

function traceAnswer(device: CompiledModel, probe: ProbeInput): TraceAnswer {
  try {
    return { probe, result: json(trace(device, probe)) };
  } catch (error) {
    if (error instanceof ProbeError) return { probe, error: error.message };
    throw error;
  }
}

/** The value as JSON text reads it back: what a stored golden file holds. */
function json(value: unknown): unknown {
  return JSON.parse(JSON.stringify(value));
}

/**
 * The text of a golden file: indented JSON with every list of plain values and every object of
 * plain values (counts, a layer) on one line, so a change reads as a short line diff.
 */
export function goldenText(answers: GoldenAnswers): string {
  return `${layout(answers, "")}\n`;
}

function layout(value: unknown, indent: string): string {
  if (typeof value !== "object" || value === null) return JSON.stringify(value);
  const inner = `${indent}  `;
  if (Array.isArray(value)) {
    if (value.length === 0) return "[]";
    if (value.every(isPlain)) return `[${value.map((item) => JSON.stringify(item)).join(", ")}]`;
    return `[\n${value.map((item) => inner + layout(item, inner)).join(",\n")}\n${indent}]`;
  }
  const entries = Object.entries(value);
  if (entries.length === 0) return "{}";
  if (entries.every(([, item]) => isPlain(item))) return `{${entries.map(([key, item]) => `${JSON.stringify(key)}: ${JSON.stringify(item)}`).join(", ")}}`;
  return `{\n${entries.map(([key, item]) => `${inner}${JSON.stringify(key)}: ${layout(item, inner)}`).join(",\n")}\n${indent}}`;
}

function isPlain(value: unknown): boolean {
  return typeof value !== "object" || value === null;
}
