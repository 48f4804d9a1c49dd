// CSV (RFC 4180) in and out through the csv-parse and csv-stringify packages. Pure: text in,
// text out, no I/O. The CLI's --probes file, the shared-objects import and the analysis
// downloads all go through here.

import { CsvError, parse } from "csv-parse/sync";
import { stringify } from "csv-stringify/sync";

export type CsvValue = string | number | bigint | null | undefined;

/** A record with the line of the input it starts on (1-based). */
export type CsvRecord = { readonly line: number; readonly fields: string[] };

/** Text that is not well-formed CSV; the message says where and what to change. */
export class CsvSyntaxError extends Error {
  override name = "CsvSyntaxError";
  constructor(
    message: string,
    /** 1-based line of the input where the reader stopped. */
    readonly line: number,
  ) {
    super(message);
  }
}

// The package's own messages name its internals ("field 0", "trimable character"); ours say
// what to change in the file.
const PROBLEMS: Readonly<Record<string, string>> = {
  INVALID_OPENING_QUOTE: "a double quote inside an unquoted field; put the whole field in double quotes and double each quote inside it",
  CSV_INVALID_CLOSING_QUOTE: "text after a closing double quote; a quote inside a quoted field must be doubled",
  CSV_QUOTE_NOT_CLOSED: "a quoted field is never closed; a quote inside a quoted field must be doubled",
};

/**
 * Rows of fields. Quoted fields may hold commas, doubled quotes and line breaks; records end
 * with CRLF, LF or CR, even mixed in one file (RFC 4180 §2; LF for files saved on Unix); a
 * trailing line break makes no empty row, but an empty line inside the text is a row of one
 * empty field, so row numbers match the lines people see. Rows may differ in length (callers
 * report that themselves). A leading byte-order mark, as spreadsheets write, is dropped.
 * Throws CsvSyntaxError for a stray or unclosed quote.
 */
export function parseCsv(text: string): string[][] {
  return parseCsvRecords(text).map((record) => record.fields);
}

/**
 * As parseCsv, each record with the line it starts on, so a report can point at the line people
 * see even when a quoted field above it spans several lines.
 */
export function parseCsvRecords(text: string): CsvRecord[] {
  try {
    // The line each record ends on (the parser counts the lines read so far); the next starts after it.
    const ends: number[] = [];
    const records = parse(text, {
      bom: true,
      relax_column_count: true,
      record_delimiter: ["\r\n", "\n", "\r"],
      on_record: (record, context) => {
        ends.push(context.lines);
        return record;
      },
    });
    return records.map((fields, index) => ({ line: index === 0 ? 1 : ends[index - 1] + 1, fields }));
  } catch (error) {
    if (!(error instanceof CsvError)) throw error;
    const line = typeof error.lines === "number" ? error.lines : 1;
    throw new CsvSyntaxError(`line ${line}: ${PROBLEMS[error.code] ?? error.message}`, line);
  }
}

// OWASP "CSV injection": a spreadsheet runs text that starts with = + - @, tab or CR as a
// formula; a leading apostrophe makes it plain text. Numbers are written as they are.
const FORMULA_START = /^[=+\-@\t\r]/;

/**
 * Rows as CSV text: CRLF after every record, the last included (RFC 4180 §2.1–2.2); a field is
 * quoted when it holds a comma, a double quote, CR or LF, with quotes doubled (§2.5–2.7).
 * null and undefined are empty fields.
 */
export function toCsv(rows: readonly (readonly CsvValue[])[]): string {
  return stringify(
    rows.map((row) => [...row]),
    {
      record_delimiter: "windows",
      // The package quotes a field holding the record delimiter (CRLF) but not a lone CR or LF.
      quoted_match: /[\r\n]/,
      cast: { string: (value) => (FORMULA_START.test(value) ? `'${value}` : value) },
    },
  );
}

/** One field as toCsv writes it. */
export function csvField(value: CsvValue): string {
  return toCsv([[value]]).slice(0, -2);
}
