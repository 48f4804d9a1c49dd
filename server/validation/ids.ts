// Identifiers as they may reach PostgreSQL. Every id in a URL, a form or a JSON body is checked
// here before any query: PostgreSQL's uuid type would otherwise fail the query (a 500) on a
// string that merely looks like one. Pure: no framework, so services, routes and the CLI share it.
import { z } from "zod";

/**
 * A UUID in its RFC 9562 §4 string form: 8-4-4-4-12 hexadecimal digits with a version (1–8) and
 * the RFC variant (10xx), or the Nil and Max UUIDs (RFC 9562 §5.9, §5.10). The same rule as zod's
 * `z.uuid()`, written once so a regular expression is never copied into a route again.
 */
export const UUID_PATTERN = /^(?:[0-9a-f]{8}-[0-9a-f]{4}-[1-8][0-9a-f]{3}-[89ab][0-9a-f]{3}-[0-9a-f]{12}|00000000-0000-0000-0000-000000000000|ffffffff-ffff-ffff-ffff-ffffffffffff)$/i;

/** Whether the value is a UUID that PostgreSQL's uuid type reads. */
export function isUuid(value: unknown): value is string {
  return typeof value === "string" && value.length === 36 && UUID_PATTERN.test(value);
}

/** The value when it is a UUID, else "" (for lenient filters read from shared links). */
export function uuidOrEmpty(value: string | null | undefined): string {
  return isUuid(value) ? value : "";
}

/** A form or JSON field holding an id. */
export const IdSchema = z.string().regex(UUID_PATTERN, "That identifier is not valid.");
