// The field-check file: Sallyport's own CSV of what was observed from a vantage point
// (docs/field-checks.md, example in public/examples/field-check.csv). A header names the
// columns, in any order; each later line is one observation. Pure: text in, rows out. A problem
// with the whole file (no header, an unknown column, a broken quote) refuses the file; a problem
// with one row stays with that row, for the check to report beside the others.

import { MAX_OBSERVATIONS } from "../engine/index.ts";
import type { ObservationInput } from "../engine/index.ts";
import { CsvSyntaxError, parseCsvRecords } from "./csv.ts";

/** The columns, in the order the example file and exports use. */
export const OBSERVATION_COLUMNS = ["when", "from", "to", "service", "observed", "interface", "note"] as const;
export type ObservationColumn = (typeof OBSERVATION_COLUMNS)[number];
export const REQUIRED_OBSERVATION_COLUMNS: readonly ObservationColumn[] = ["when", "from", "to", "service", "observed"];

/** A field-check file is small; a larger one is refused before it is read. */
export const MAX_OBSERVATIONS_BYTES = 512 * 1024;

export type ObservationsFile = { ok: true; observations: ObservationInput[] } | { ok: false; message: string };

function isColumn(name: string): name is ObservationColumn {
  return (OBSERVATION_COLUMNS as readonly string[]).includes(name);
}

/**
 * Reads a field-check file. Blank lines are skipped (they are no observation); every other line
 * becomes one observation, with a problem when its number of fields is not the header's.
 */
export function readObservationsCsv(text: string): ObservationsFile {
  let records;
  try {
    records = parseCsvRecords(text);
  } catch (error) {
    if (error instanceof CsvSyntaxError) return { ok: false, message: `The file is not readable CSV: ${error.message}. Nothing was checked.` };
    throw error;
  }
  const header = records.shift();
  if (header === undefined || header.fields.every((field) => field.trim() === "")) {
    return { ok: false, message: `The file is empty. Its first line names the columns: ${OBSERVATION_COLUMNS.join(",")}.` };
  }
  const names = header.fields.map((field) => field.trim().toLowerCase());
  const unknown = names.filter((name) => !isColumn(name));
  if (unknown.length > 0) return { ok: false, message: `Line 1 names ${unknown.map((name) => `“${name}”`).join(", ")}, not a column of a field-check file. The columns are ${OBSERVATION_COLUMNS.join(", ")}.` };
  const twice = names.filter((name, index) => names.indexOf(name) !== index);
  if (twice.length > 0) return { ok: false, message: `Line 1 names “${twice[0]}” twice.` };
  const missing = REQUIRED_OBSERVATION_COLUMNS.filter((name) => !names.includes(name));
  if (missing.length > 0) return { ok: false, message: `Line 1 lacks the column${missing.length > 1 ? "s" : ""} ${missing.join(", ")}. Required: ${REQUIRED_OBSERVATION_COLUMNS.join(", ")}; optional: interface, note.` };
  const rows = records.filter((record) => !(record.fields.length === 1 && record.fields[0].trim() === ""));
  if (rows.length === 0) return { ok: false, message: "The file has a header but no observations." };
  if (rows.length > MAX_OBSERVATIONS) return { ok: false, message: `The file has ${rows.length} observations; a field check takes at most ${MAX_OBSERVATIONS}. Split it into several.` };
  const observations = rows.map((record): ObservationInput => {
    const value = (column: ObservationColumn): string => {
      const index = names.indexOf(column);
      return index < 0 ? "" : (record.fields[index] ?? "");
    };
    const row: ObservationInput = {
      line: record.line,
      when: value("when"),
      from: value("from"),
      to: value("to"),
      service: value("service"),
      observed: value("observed"),
      interface: value("interface"),
      note: value("note"),
    };
    if (record.fields.length !== names.length) return { ...row, problem: `expected ${names.length} fields as the header names, found ${record.fields.length}` };
    return row;
  });
  return { ok: true, observations };
}
