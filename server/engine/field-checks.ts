// Field checks: what the team saw when they tried a device from a vantage point, predicted row by
// row with the revision that was live at the time, and for each difference its likely reason —
// a later revision predicts it (the model was out of date), an earlier one does (the change had
// not reached the device), or none does (the device, or its path, differs from the model).
// Pure: the caller reads the file (server/formats/observations.ts) and the revisions.

import { z } from "zod";
import { parseAddress } from "./addresses.ts";
import { formatInstant } from "./format.ts";
import { ProbeError } from "./compile.ts";
import type { CompiledModel } from "./compile.ts";
import { traceProbe } from "./trace.ts";
import type { TraceResult } from "./trace.ts";
import { DIFFERENCE_REASONS, FIELD_CHECK_STATUSES, isObservedAnswer, LAYERS, OBSERVED_ANSWERS, OUTCOME_LABELS, OUTCOMES, presentsLogin } from "./vocabulary.ts";
import type { DifferenceReason, FieldCheckStatus, Layer, ObservedAnswer, Outcome } from "./vocabulary.ts";

/** Rows per field check: a day's testing from a few vantage points fits many times over. */
export const MAX_OBSERVATIONS = 2000;
/** A note's length, as stored. */
export const MAX_NOTE_LENGTH = 500;
/** Clocks differ: an observation up to this far ahead of the server's clock is still "now". */
export const CLOCK_SKEW_MS = 5 * 60_000;

/** ISO 8601 with a date, a time and an explicit offset (or Z): an observation is an instant wherever it was made. */
const INSTANT_WITH_OFFSET = /^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}(:\d{2}(\.\d{1,3})?)?(Z|[+-]\d{2}:\d{2})$/;
// C0 and C1 control characters and DEL; a tab or line break has no place in one field either.
// eslint-disable-next-line no-control-regex -- matching control characters is the point
const CONTROL = /[\u0000-\u001f\u007f-\u009f]/;

/** One observation as written (a file's row or an API body): text fields, checked by checkObservations. */
export const ObservationSchema = z.object({
  when: z.string().max(40).describe("When it was observed: ISO 8601 with an offset or Z, e.g. 2026-11-30T14:05:00Z"),
  from: z.string().max(100).describe("The vantage point's source address"),
  to: z.string().max(100).describe("The device address tried"),
  service: z.string().max(63).describe("A catalogue service name, tcp/PORT, udp/PORT or icmp/echo"),
  observed: z.string().max(20).describe(`What was seen: ${OBSERVED_ANSWERS.join(", ")}`),
  interface: z.string().max(63).optional().describe("The interface the probe arrives on; default: the one holding `to`"),
  note: z.string().max(MAX_NOTE_LENGTH).optional().describe("Free text kept with the row"),
});
export type Observation = z.infer<typeof ObservationSchema>;

/** An observation with where it came from (a file line, or a position in a list) and a problem found before checking (a row of the wrong length). */
export interface ObservationInput extends Observation {
  readonly line: number;
  readonly problem?: string;
}

/** A revision the device had: its number (null for a model file with none), when it became live, and its compiled model (read only when needed). */
export interface RevisionAtTime {
  readonly number: number | null;
  /** Epoch milliseconds; -Infinity for a model that is taken to be live at every time. */
  readonly liveFromMs: number;
  readonly compiled: () => CompiledModel;
}

export const DifferenceSchema = z.object({
  reason: z.enum(DIFFERENCE_REASONS),
  /** The revision that predicts what was seen, when one does. */
  revision: z.number().int().nullable(),
  words: z.string(),
});

export const FieldCheckRowSchema = z.object({
  line: z.number().int().describe("The row's line in the file (the header is line 1), or its 1-based place in a posted list"),
  when: z.string(),
  from: z.string(),
  to: z.string(),
  service: z.string(),
  interface: z.string().nullable().describe("As given, or the interface holding `to` in the revision live then"),
  observed: z.string(),
  note: z.string(),
  status: z.enum(FIELD_CHECK_STATUSES),
  /** Why the row could not be checked (status invalid). */
  problem: z.string().nullable(),
  /** The instant, normalised (ISO 8601, UTC). */
  at: z.string().nullable(),
  revision: z.number().int().nullable().describe("The revision live at the time"),
  predicted: z.enum(OUTCOMES).nullable(),
  layer: z.enum(LAYERS).nullable(),
  ruleId: z.string().nullable(),
  difference: DifferenceSchema.nullable(),
});
export type FieldCheckRow = z.infer<typeof FieldCheckRowSchema>;

export const FieldCheckCountsSchema = z.object({
  rows: z.number().int(),
  agreements: z.number().int(),
  differences: z.number().int(),
  invalid: z.number().int(),
  /** Agreements over rows checked (agreements + differences), 0–1; null when none could be checked. */
  agreementRate: z.number().min(0).max(1).nullable(),
});
export type FieldCheckCounts = z.infer<typeof FieldCheckCountsSchema>;

export const FieldCheckResultSchema = z.object({ counts: FieldCheckCountsSchema, rows: z.array(FieldCheckRowSchema) });
export type FieldCheckResult = z.infer<typeof FieldCheckResultSchema>;

/** Whether what was seen agrees with the prediction: the same outcome, or a login shown where the model presents one. */
export function observationAgrees(observed: ObservedAnswer, predicted: Outcome): boolean {
  return observed === predicted || (observed === "login" && presentsLogin(predicted));
}

/** The counts of a list of rows. */
export function fieldCheckCounts(rows: readonly Pick<FieldCheckRow, "status">[]): FieldCheckCounts {
  const count = (status: FieldCheckStatus) => rows.filter((row) => row.status === status).length;
  const agreements = count("agrees");
  const differences = count("differs");
  const checked = agreements + differences;
  return { rows: rows.length, agreements, differences, invalid: count("invalid"), agreementRate: checked === 0 ? null : agreements / checked };
}

type Valid = { at: number; observed: ObservedAnswer; from: string; to: string; service: string; interface: string | undefined };

/** The row's own problems, before any model is asked: shape, time, addresses, the observed word. */
function validate(row: ObservationInput, nowMs: number): Valid | string {
  if (row.problem !== undefined) return row.problem;
  const fields = { when: row.when, from: row.from, to: row.to, service: row.service, observed: row.observed, interface: row.interface ?? "", note: row.note ?? "" };
  for (const [name, value] of Object.entries(fields)) if (CONTROL.test(value)) return `${name} holds a control character`;
  const when = row.when.trim();
  const from = row.from.trim();
  const to = row.to.trim();
  const service = row.service.trim();
  const observed = row.observed.trim().toLowerCase();
  for (const [name, value] of [["when", when], ["from", from], ["to", to], ["service", service], ["observed", observed]] as const) {
    if (value === "") return `${name} is empty`;
  }
  if (!INSTANT_WITH_OFFSET.test(when) || Number.isNaN(Date.parse(when))) return `when: "${when}" is not an ISO 8601 instant with an offset, e.g. 2026-11-30T14:05:00Z or 2026-11-30T15:05:00+01:00`;
  const at = Date.parse(when);
  if (at > nowMs + CLOCK_SKEW_MS) return `when: ${when} is in the future`;
  if (from.includes("/")) return `from: "${from}" is a block; a vantage point is one source address`;
  for (const [name, value] of [["from", from], ["to", to]] as const) {
    try {
      parseAddress(value);
    } catch (error) {
      return `${name}: ${error instanceof Error ? error.message : String(error)}`;
    }
  }
  if (!isObservedAnswer(observed)) return `observed: "${row.observed.trim()}" is not one of ${OBSERVED_ANSWERS.join(", ")}`;
  if ((row.note ?? "").length > MAX_NOTE_LENGTH) return `note is longer than ${MAX_NOTE_LENGTH} characters`;
  const iface = (row.interface ?? "").trim();
  return { at, observed, from, to, service, interface: iface === "" ? undefined : iface };
}

/** The probe of a row on one revision: its interface (given, or the one holding `to`) and its trace. Throws ProbeError. */
function predict(device: CompiledModel, row: Valid): { interface: string; trace: TraceResult } {
  let iface = row.interface;
  if (iface === undefined) {
    const target = device.deviceAddressOf(parseAddress(row.to));
    if (target < 0) throw new ProbeError(`"${row.to}" is not an address of the device`);
    iface = device.model.interfaces[device.addresses[target].iface].name;
  }
  return { interface: iface, trace: traceProbe(device, { from: row.from, interface: iface, service: row.service, to: row.to, at: row.at }) };
}

/** Whether the revision predicts what was seen (false when the probe does not fit it: an interface or address it lacks). */
function revisionAgrees(revision: RevisionAtTime, row: Valid): boolean {
  try {
    return observationAgrees(row.observed, predict(revision.compiled(), row).trace.outcome);
  } catch (error) {
    if (error instanceof ProbeError) return false;
    throw error;
  }
}

function named(revision: RevisionAtTime): string {
  return revision.number === null ? "the model" : `revision r${revision.number}`;
}

/** The likely reason for a difference: the nearest later revision that agrees, else the nearest earlier one, else none. */
function reasonOf(revisions: readonly RevisionAtTime[], live: number, row: Valid, predicted: Outcome): { reason: DifferenceReason; revision: number | null; words: string } {
  const seen = row.observed === "login" ? "a login" : `“${OUTCOME_LABELS[row.observed]}”`;
  const model = named(revisions[live]);
  const said = `${model.charAt(0).toUpperCase()}${model.slice(1)} predicts “${OUTCOME_LABELS[predicted]}” but ${seen} was observed`;
  for (let k = live + 1; k < revisions.length; k++) {
    if (revisionAgrees(revisions[k], row)) {
      return { reason: "model-out-of-date", revision: revisions[k].number, words: `${said}; ${named(revisions[k])}, saved later, predicts what was seen: the device already ran that configuration and the model was out of date.` };
    }
  }
  for (let k = live - 1; k >= 0; k--) {
    if (revisionAgrees(revisions[k], row)) {
      return { reason: "not-applied", revision: revisions[k].number, words: `${said}; ${named(revisions[k])}, saved earlier, predicts what was seen: the device may still run it, so a later change may not have been applied.` };
    }
  }
  const none = revisions.length === 1 ? (revisions[0].number === null ? "this is the only model given" : "the device has no other revision") : "no revision predicts what was seen";
  return {
    reason: "device-differs",
    revision: null,
    words: `${said}; ${none}: the device — or something on the path to it (another firewall, address translation, a provider's filter) — differs from its recorded configuration. Confirm on the device in a maintenance window.`,
  };
}

/**
 * Checks each observation against the revision live at its time (the last whose liveFromMs is
 * at or before it). `revisions` ascending by liveFromMs. Every row is answered, in order: a row
 * that cannot be checked is `invalid` with its problem, never left out.
 */
export function checkObservations(observations: readonly ObservationInput[], revisions: readonly RevisionAtTime[], nowMs: number = Date.now()): FieldCheckResult {
  const rows = observations.map((input): FieldCheckRow => {
    const echo = {
      line: input.line,
      when: input.when,
      from: input.from,
      to: input.to,
      service: input.service,
      observed: input.observed,
      note: input.note ?? "",
    };
    const invalid = (problem: string, extra: Partial<FieldCheckRow> = {}): FieldCheckRow => ({
      ...echo,
      interface: input.interface === undefined || input.interface === "" ? null : input.interface,
      status: "invalid",
      problem,
      at: null,
      revision: null,
      predicted: null,
      layer: null,
      ruleId: null,
      difference: null,
      ...extra,
    });
    const valid = validate(input, nowMs);
    if (typeof valid === "string") return invalid(valid);
    const at = new Date(valid.at).toISOString();
    let live = -1;
    while (live + 1 < revisions.length && revisions[live + 1].liveFromMs <= valid.at) live++;
    if (live < 0) {
      const first = revisions[0];
      return invalid(first === undefined ? "the device has no revision to predict with" : `observed before ${named(first)} was saved (${formatInstant(first.liveFromMs)}): no model of the device then`, { at });
    }
    const revision = revisions[live];
    let prediction: { interface: string; trace: TraceResult };
    try {
      prediction = predict(revision.compiled(), valid);
    } catch (error) {
      if (!(error instanceof ProbeError)) throw error;
      return invalid(`${error.message} in ${named(revision)}`, { at, revision: revision.number });
    }
    const { trace: result } = prediction;
    const agrees = observationAgrees(valid.observed, result.outcome);
    const layer: Layer = result.layers[result.layers.length - 1].layer;
    return {
      ...echo,
      observed: valid.observed,
      interface: prediction.interface,
      status: agrees ? "agrees" : "differs",
      problem: null,
      at,
      revision: revision.number,
      predicted: result.outcome,
      layer,
      ruleId: result.ruleId,
      difference: agrees ? null : reasonOf(revisions, live, valid, result.outcome),
    };
  });
  return { counts: fieldCheckCounts(rows), rows };
}
