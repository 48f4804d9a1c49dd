// The CLI's commands, loaded by server/cli/main.ts when one is asked for. JSON is written as it
// is produced, piece by piece, waiting whenever the reader of standard output is behind, so
// output of any size runs in flat memory.

import { readFileSync } from "node:fs";
import {
  OUTCOMES,
  ProbeError,
  SEVERITIES,
  compareExpectations,
  compileModel,
  diffModels,
  exposure,
  exposureSlices,
  findings,
  parseExpectationsFile,
  parseModel,
  checkObservations,
  isSourceBlock,
  reach,
  reachGroups,
  traceGroups,
  VERSION_1_UPGRADE_SUMMARY,
  severityAtLeast,
  trace,
} from "../engine/index.ts";
import type { CompiledModel, Expectation, ExpectationChange, ExposureEntry, FieldCheckResult, Finding, ModelDiff, ParseResult, ReachGroups, Severity, SourceGroup, TraceGroups, TraceResult, ValidationIssue } from "../engine/index.ts";
import { readObservationsCsv } from "../formats/observations.ts";
import { CsvSyntaxError, parseCsv } from "../formats/csv.ts";
import { formatPercent, plural } from "../engine/format.ts";
import { jsonPieces } from "../formats/json-stream.ts";
import { CidrTextCache, withCidrBytes } from "./exposure-json.ts";
import { table } from "./table.ts";
import { USAGE } from "./usage.ts";
import type { Io, Options } from "./usage.ts";

class UsageError extends Error {}

/** Runs one command (after the options were read); resolves to the exit code. */
export async function runCommand(command: string, files: readonly string[], values: Options, io: Io): Promise<number> {
  try {
    switch (command) {
      case "validate":
        return await validateCommand(files, values, io);
      case "trace":
        return await traceCommand(files, values, io);
      case "reach":
        return await reachCommand(files, values, io);
      case "exposure":
        return await exposureCommand(files, values, io);
      case "findings":
        return await findingsCommand(files, values, io);
      case "diff":
        return await diffCommand(files, values, io);
      case "check":
        return await checkCommand(files, values, io);
      default:
        throw new UsageError(`unknown command "${command}"`);
    }
  } catch (e) {
    if (e instanceof UsageError || e instanceof ProbeError || e instanceof ModelFileError || e instanceof CsvSyntaxError) {
      io.err(`sallyport: ${e.message}\n`);
      if (e instanceof UsageError) io.err(`\n${USAGE}\n`);
      return 2;
    }
    throw e;
  }
}

class ModelFileError extends Error {}

function oneFile(files: readonly string[], what = "MODEL"): string {
  if (files.length !== 1) throw new UsageError(`expected one ${what} file, got ${files.length}`);
  return files[0];
}

function readJson(path: string): unknown {
  let text: string;
  try {
    text = readFileSync(path, "utf8");
  } catch (e) {
    throw new ModelFileError(`cannot read ${path}: ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}`);
  }
  try {
    return JSON.parse(text);
  } catch (e) {
    throw new ModelFileError(`${path} is not JSON: ${(e as Error).message}`);
  }
}

/** Parses a model file, saying on stderr (one line) when it was a version-1 document read as version 2. */
function parseFile(path: string, io: Io): ParseResult {
  const result = parseModel(readJson(path));
  if (result.upgradedFrom === 1) io.err(`${path}: note: version-1 document read as version 2 (${VERSION_1_UPGRADE_SUMMARY}); the file is unchanged\n`);
  return result;
}

function loadModel(path: string, io: Io): CompiledModel {
  const result = parseFile(path, io);
  reportWarnings(path, result.warnings, io);
  if (!result.ok) {
    const lines = result.errors.map((e) => `${path}: ${e.path === "" ? "" : `${e.path}: `}${e.message}`);
    throw new ModelFileError(`invalid model\n${lines.join("\n")}`);
  }
  return compileModel(result.model);
}

const MAX_WARNINGS = 20;

function reportWarnings(path: string, warnings: readonly ValidationIssue[], io: Io): void {
  for (const w of warnings.slice(0, MAX_WARNINGS)) io.err(`${path}: warning: ${w.path === "" ? "" : `${w.path}: `}${w.message}\n`);
  if (warnings.length > MAX_WARNINGS) io.err(`${path}: … ${warnings.length - MAX_WARNINGS} more warnings (sallyport validate --json lists them all)\n`);
}

/** Writes text or bytes, waiting first when the reader is behind. */
async function write(io: Io, text: string | Uint8Array): Promise<void> {
  const wait = io.out(text);
  if (wait !== undefined) await wait;
}

/** Writes `JSON.stringify(value, null, indent)` and a line break, piece by piece as it is produced. */
async function writeJson(io: Io, value: unknown, indent = 2, end = "\n"): Promise<void> {
  for (const piece of jsonPieces(value, { indent })) await write(io, piece);
  if (end !== "") await write(io, end);
}

async function validateCommand(files: readonly string[], values: Options, io: Io): Promise<number> {
  const path = oneFile(files);
  const result = parseFile(path, io);
  if (values.json === true) {
    const body = result.ok ? { ok: true, warnings: result.warnings } : { ok: false, errors: result.errors, warnings: result.warnings };
    await writeJson(io, body);
    if (!result.ok) io.err(`${path}: invalid model (${plural(result.errors.length, { one: "error", other: "errors" })})\n`);
    return result.ok ? 0 : 2;
  }
  reportWarnings(path, result.warnings, io);
  if (!result.ok) {
    for (const e of result.errors) io.err(`${path}: ${e.path === "" ? "" : `${e.path}: `}${e.message}\n`);
    return 2;
  }
  const m = result.model;
  await write(
    io,
    `${path}: valid — device "${m.device.name}", ${plural(m.interfaces.length, { one: "interface", other: "interfaces" })}, ` +
      `${plural(m.inboundRules.length, { one: "inbound rule", other: "inbound rules" })}, ${plural(m.accounts.length, { one: "account", other: "accounts" })}, ` +
      `${plural(result.warnings.length, { one: "warning", other: "warnings" })}\n`,
  );
  return 0;
}

async function traceCommand(files: readonly string[], values: Options, io: Io): Promise<number> {
  const device = loadModel(oneFile(files), io);
  if (values.probes !== undefined) return probesCommand(device, values.probes, io);
  for (const required of ["from", "on", "service"] as const) {
    if (values[required] === undefined) throw new UsageError(`trace needs --${required} (or --probes FILE.csv)`);
  }
  const probe = { from: values.from ?? "", interface: values.on ?? "", service: values.service ?? "", to: values.to, at: values.at, account: values.account };
  if (isSourceBlock(probe.from)) {
    const grouped = traceGroups(device, probe);
    if (values.json === true) await writeJson(io, grouped);
    else await write(io, renderTraceGroups(grouped));
    return 0;
  }
  const result = trace(device, probe);
  if (values.json === true) await writeJson(io, result);
  else await write(io, renderTrace(result));
  return 0;
}

/** A group's sources in a table cell: the first CIDR and how many more. */
function sourcesCell(group: SourceGroup): string {
  return group.sources.length === 1 ? group.sources[0] : `${group.sources[0]} +${group.sources.length - 1} more`;
}

function groupCells(group: SourceGroup): string[] {
  return [sourcesCell(group), group.count, group.outcome, group.layer, group.ruleId ?? "-", group.eligibleAccounts.join(",") || "-"];
}

function renderTraceGroups(t: TraceGroups): string {
  const head =
    `probe    ${t.from} (${plural(BigInt(t.count), { one: "address", other: "addresses" })}) → ${t.interface}${t.to !== null ? ` (${t.to})` : ""} ${t.service}\n` +
    `at       ${t.at} (device clock ${t.localTime})\n` +
    `groups   ${t.groups.length}, most exposed first (each group's sources get the same answer; --json lists every CIDR and each group's trace)\n\n`;
  return head + table(["sources", "count", "outcome", "deciding layer", "rule", "eligible"], t.groups.map(groupCells));
}

function renderReachGroups(r: ReachGroups): string {
  return (
    `reach of ${r.from} (${plural(BigInt(r.count), { one: "address", other: "addresses" })}) at ${r.at}\n\n` +
    table(
      ["interface", "to", "service", "sources", "count", "outcome", "deciding layer", "rule", "eligible"],
      r.results.flatMap((cell) => cell.groups.map((group) => [cell.interface, cell.to ?? "-", cell.service, ...groupCells(group)])),
    )
  );
}

const PROBE_HEADER = ["from", "interface", "service", "to", "at", "account"];

async function probesCommand(device: CompiledModel, path: string, io: Io): Promise<number> {
  let text: string;
  try {
    text = readFileSync(path, "utf8");
  } catch (e) {
    throw new UsageError(`cannot read ${path}: ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}`);
  }
  let rows: string[][];
  try {
    rows = parseCsv(text);
  } catch (e) {
    // A broken quote can swallow every later row, so nothing is traced from such a file.
    if (e instanceof CsvSyntaxError) throw new CsvSyntaxError(`${path}: ${e.message}`, e.line);
    throw e;
  }
  const header = rows.shift()?.map((h) => h.trim().toLowerCase());
  if (header === undefined || header.join(",") !== PROBE_HEADER.join(",")) {
    throw new UsageError(`${path}: the header must be ${PROBE_HEADER.join(",")}`);
  }
  for (const row of rows) {
    if (row.length === 1 && row[0].trim() === "") continue;
    if (row.length !== PROBE_HEADER.length) {
      await write(io, `${JSON.stringify({ error: `expected ${PROBE_HEADER.length} fields, got ${row.length}` })}\n`);
      continue;
    }
    const [from, iface, service, to, at, account] = row.map((f) => f.trim());
    let line: string;
    try {
      line = JSON.stringify(trace(device, { from, interface: iface, service, to, at, account }));
    } catch (e) {
      if (!(e instanceof ProbeError)) throw e;
      line = JSON.stringify({ error: e.message });
    }
    await write(io, `${line}\n`);
  }
  return 0;
}

function renderTrace(t: TraceResult): string {
  const head =
    `probe    ${t.from} → ${t.interface}${t.to !== null ? ` (${t.to})` : ""} ${t.service}\n` +
    `at       ${t.at} (device clock ${t.localTime})\n` +
    `outcome  ${t.outcome}${t.ruleId !== null ? `   rule ${t.ruleId}` : ""}` +
    `${t.eligibleAccounts.length > 0 ? `   eligible ${t.eligibleAccounts.join(", ")}` : ""}\n\n`;
  return head + table(["layer", "result", "detail"], t.layers.map((l) => [l.layer, l.result, l.detail]));
}

async function reachCommand(files: readonly string[], values: Options, io: Io): Promise<number> {
  const device = loadModel(oneFile(files), io);
  if (values.from === undefined) throw new UsageError("reach needs --from IP");
  if (isSourceBlock(values.from)) {
    const grouped = reachGroups(device, values.from, values.at);
    if (values.json === true) await writeJson(io, grouped);
    else await write(io, renderReachGroups(grouped));
    return 0;
  }
  const result = reach(device, values.from, values.at);
  if (values.json === true) {
    await writeJson(io, result);
    return 0;
  }
  await write(io, `reach of ${result.from} at ${result.at}\n\n`);
  await write(
    io,
    table(
      ["interface", "to", "service", "outcome", "rule", "eligible"],
      result.results.map((r) => [r.interface, r.to ?? "-", r.service, r.outcome, r.ruleId ?? "-", r.eligibleAccounts.join(",") || "-"]),
    ),
  );
  return 0;
}

function exposureRows(entries: readonly ExposureEntry[]): string[][] {
  return entries.map((e) => {
    const ranges = e.ranges;
    const exposed = OUTCOMES.filter((o) => o !== "silent" && e.counts[o] !== "0")
      .map((o) => `${o} ${e.counts[o]} [${summariseCidrs(ranges[o])}]`)
      .join("; ");
    return [e.interface, e.to, e.service, exposed === "" ? "silent to all" : exposed];
  });
}

function summariseCidrs(cidrs: readonly string[]): string {
  return cidrs.length <= 3 ? cidrs.join(" ") : `${cidrs.slice(0, 3).join(" ")} +${cidrs.length - 3} more`;
}

async function exposureCommand(files: readonly string[], values: Options, io: Io): Promise<number> {
  const device = loadModel(oneFile(files), io);
  const headers = ["interface", "to", "service", "who gets an answer (count [CIDRs])"];
  if (values.at !== undefined) {
    const atMs = device.instantOf(values.at, Date.now());
    const map = exposure(device, atMs);
    if (values.json === true) await writeJson(io, withCidrBytes(map, device, device.sliceAt(atMs)));
    else await write(io, `exposure at ${map.at} (device clock ${map.localTime}; slice ${map.slice.start} – ${map.slice.end})\n\n${table(headers, exposureRows(map.entries))}`);
    return 0;
  }
  const count = device.week.slices.length;
  let index = 0;
  // Built and written one slice at a time; with --json each slice is one compact line of one document.
  // The slices' lists cut the address space at mostly the same edges: their range texts are shared.
  const texts = new CidrTextCache();
  if (values.json === true) await write(io, '{\n"slices": [\n');
  for (const s of exposureSlices(device)) {
    index++;
    if (values.json === true) {
      await writeJson(io, withCidrBytes(s, device, index - 1, texts), 0, index < count ? ",\n" : "\n");
      continue;
    }
    const schedules = s.activeSchedules.length > 0 ? s.activeSchedules.join(", ") : "none";
    await write(io, `slice ${s.start} – ${s.end} (active schedules: ${schedules})\n${table(headers, exposureRows(s.entries))}\n`);
  }
  if (values.json === true) await write(io, "]\n}\n");
  return 0;
}

function parseSeverity(text: string | undefined): Severity | null {
  if (text === undefined) return null;
  const found = SEVERITIES.find((s) => s === text.toLowerCase());
  if (found === undefined) throw new UsageError(`--fail-on takes one of ${SEVERITIES.join(", ")}`);
  return found;
}

function renderFindings(list: readonly Finding[]): string {
  if (list.length === 0) return "no findings\n";
  return table(
    ["severity", "code", "elements", "title"],
    list.map((f) => [f.severity, f.code, f.elements.join(" "), f.title]),
  );
}

async function findingsCommand(files: readonly string[], values: Options, io: Io): Promise<number> {
  const failOn = parseSeverity(values["fail-on"]);
  const device = loadModel(oneFile(files), io);
  const list = findings(device);
  if (values.json === true) await writeJson(io, { findings: list });
  else await write(io, renderFindings(list));
  return failOn !== null && list.some((f) => severityAtLeast(f.severity, failOn)) ? 1 : 0;
}

function renderDiff(d: ModelDiff): string {
  let out = "";
  if (d.changes.length === 0) out += "no change in any outcome\n";
  else {
    out += table(
      ["interface", "to", "service", "slice", "before → after", "count", "sources"],
      d.changes.flatMap((c) =>
        c.transitions.map((t) => [c.interface, c.to, c.service, `${c.start} – ${c.end}`, `${t.before} → ${t.after}`, t.count, summariseCidrs(t.ranges)]),
      ),
    );
  }
  out += "\nlockout guard: ";
  out +=
    d.lockout.length === 0
      ? "no operator network loses its last login path\n"
      : `\n${d.lockout.map((l) => `  LOCKOUT ${l.operatorNetwork}: ${l.detail}`).join("\n")}\n`;
  if (d.findingsAdded.length > 0) out += `\nfindings added\n${renderFindings(d.findingsAdded)}`;
  if (d.findingsResolved.length > 0) out += `\nfindings resolved\n${renderFindings(d.findingsResolved)}`;
  return out;
}

/** An expectations file; a malformed one is refused with the path of every problem. */
function loadExpectations(path: string): Expectation[] {
  const parsed = parseExpectationsFile(readJson(path));
  if (!parsed.ok) throw new ModelFileError(`invalid expectations file\n${parsed.errors.map((e) => `${path}: ${e.path === "" ? "" : `${e.path}: `}${e.message}`).join("\n")}`);
  return [...parsed.expectations];
}

function renderExpectations(list: readonly ExpectationChange[]): string {
  if (list.length === 0) return "\nexpectations: none in the file\n";
  const mark = (e: ExpectationChange) => (e.broken ? "BROKEN" : e.fixed ? "fixed" : e.after.holds ? "holds" : "still failing");
  return `\nexpectations\n${table(
    ["id", "before", "after", "", "after the change"],
    list.map((e) => [e.id, e.before.status, e.after.status, mark(e), e.after.words]),
  )}`;
}

async function diffCommand(files: readonly string[], values: Options, io: Io): Promise<number> {
  if (files.length !== 2) throw new UsageError(`diff needs BEFORE and AFTER model files, got ${files.length}`);
  const expectations = values.expectations === undefined ? null : loadExpectations(values.expectations);
  const before = loadModel(files[0], io);
  const after = loadModel(files[1], io);
  const d = diffModels(before, after);
  const checked = expectations === null ? null : compareExpectations(before, after, expectations);
  if (values.json === true) {
    // The diff's own keys first, unchanged; the expectations only when asked for.
    if (checked === null) await writeJson(io, d);
    else await writeJson(io, { changes: d.changes, lockout: d.lockout, findingsAdded: d.findingsAdded, findingsResolved: d.findingsResolved, expectations: checked });
  } else await write(io, renderDiff(d) + (checked === null ? "" : renderExpectations(checked)));
  const lockedOut = values["fail-on-lockout"] === true && d.lockout.length > 0;
  const broken = checked !== null && checked.some((e) => e.broken);
  return lockedOut || broken ? 1 : 0;
}

async function checkCommand(files: readonly string[], values: Options, io: Io): Promise<number> {
  const path = values.observations;
  if (path === undefined) throw new UsageError("check needs --observations FILE.csv");
  const device = loadModel(oneFile(files), io);
  let text: string;
  try {
    text = readFileSync(path, "utf8");
  } catch (e) {
    throw new UsageError(`cannot read ${path}: ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}`);
  }
  const read = readObservationsCsv(text);
  if (!read.ok) throw new ModelFileError(`${path}: ${read.message}`);
  // The model file is taken to be the device's configuration at every time of the file.
  const result = checkObservations(read.observations, [{ number: null, liveFromMs: -Infinity, compiled: () => device }]);
  for (const row of result.rows) if (row.status === "invalid") io.err(`${path}: line ${row.line}: ${row.problem}\n`);
  if (values.json === true) await writeJson(io, result);
  else await write(io, renderCheck(result));
  const { differences, invalid } = result.counts;
  return differences > 0 ? 1 : invalid > 0 ? 2 : 0;
}

function renderCheck(result: FieldCheckResult): string {
  const { agreements, differences, invalid, agreementRate } = result.counts;
  const rate = agreementRate === null ? "nothing could be checked" : `agreement ${formatPercent(agreementRate)}`;
  const rows = table(
    ["line", "when", "from", "to", "service", "observed", "predicted", "result", "why"],
    result.rows.map((row) => [
      String(row.line),
      row.when,
      row.from,
      row.interface === null ? row.to : `${row.to} (${row.interface})`,
      row.service,
      row.observed,
      row.predicted ?? "-",
      row.status === "agrees" ? "agrees" : row.status === "differs" ? "DIFFERS" : "not checked",
      row.status === "differs" ? (row.difference?.reason ?? "") : row.status === "invalid" ? (row.problem ?? "") : "",
    ]),
  );
  const why = result.rows.flatMap((row) => (row.difference === null ? [] : [`line ${row.line}: ${row.difference.words}\n`])).join("");
  return `${rows}${why === "" ? "" : `\n${why}`}\n${plural(agreements, { one: "observation agrees", other: "observations agree" })}, ${plural(differences, { one: "differs", other: "differ" })}, ${plural(invalid, { one: "row", other: "rows" })} not checked; ${rate}\n`;
}

