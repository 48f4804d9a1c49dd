// Cursor pagination for the REST API's lists: `?limit=` (1–200, default 50) and `?cursor=`
// from the previous page's `nextCursor`. A cursor is opaque to callers: the sort key of the last
// item given (and, for lists that belong to one revision, that revision, so a page never mixes
// two). Keyset paging over the list's own order, so an item added or removed between two pages
// neither repeats nor skips the others.
import { z } from "zod";
import { Refusal } from "../errors.ts";

export const PAGE_LIMIT_DEFAULT = 50;
export const PAGE_LIMIT_MAX = 200;

export const PageQuerySchema = z.object({
  limit: z.coerce
    .number({ message: "must be a whole number" })
    .int("must be a whole number")
    .min(1, "must be at least 1")
    .max(PAGE_LIMIT_MAX, `must be at most ${PAGE_LIMIT_MAX}`)
    .default(PAGE_LIMIT_DEFAULT)
    .meta({ description: `How many items per page (1–${PAGE_LIMIT_MAX}, default ${PAGE_LIMIT_DEFAULT}).` }),
  cursor: z
    .string()
    .max(400, "is not a cursor this API gave")
    .regex(/^[A-Za-z0-9_-]+$/, "is not a cursor this API gave")
    .optional()
    .meta({ description: "The `nextCursor` of the previous page; omit it for the first page." }),
});

export type PageQuery = z.output<typeof PageQuerySchema>;

/** A page of a list: its items and the cursor of the next page (null on the last). */
export function pageSchema<Item extends z.ZodType>(item: Item, id: string, description: string) {
  return z.object({ items: z.array(item), nextCursor: z.string().nullable().meta({ description: "Pass as `cursor` for the next page; null on the last page." }) }).meta({ id, description });
}

type Key = string | number;
type CursorPayload = { after: Key; pin: string };

export function encodeCursor(after: Key, pin = ""): string {
  return Buffer.from(JSON.stringify({ after, pin } satisfies CursorPayload)).toString("base64url");
}

/** The cursor's payload, or a message for the `cursor` parameter's 400. */
export function decodeCursor(cursor: string): CursorPayload | { problem: string } {
  try {
    const value: unknown = JSON.parse(Buffer.from(cursor, "base64url").toString("utf8"));
    if (typeof value === "object" && value !== null && "after" in value && "pin" in value && (typeof value.after === "string" || typeof value.after === "number") && typeof value.pin === "string") {
      return { after: value.after, pin: value.pin };
    }
  } catch {
    // fall through
  }
  return { problem: "is not a cursor this API gave" };
}

function cursorRefusal(message: string, status: 400 | 409): Refusal {
  return new Refusal(`The cursor ${message}.`, status, { field: "cursor", issues: [{ path: "cursor", message }] });
}

/**
 * One page of `items`, which are in the list's order of `keyOf` (ascending, or descending when
 * `descending`). `pin` names what the list belongs to (a revision); a cursor from another pin is
 * refused, since its positions would mean something else.
 */
export function pageOf<T>(items: readonly T[], keyOf: (item: T) => Key, query: PageQuery, options: { descending?: boolean; pin?: string } = {}): { items: T[]; nextCursor: string | null } {
  const pin = options.pin ?? "";
  let start = 0;
  if (query.cursor) {
    const decoded = decodeCursor(query.cursor);
    if ("problem" in decoded) throw cursorRefusal(decoded.problem, 400);
    if (decoded.pin !== pin) throw cursorRefusal("was made for another revision of this list; start again without a cursor", 409);
    const after = decoded.after;
    const beyond = (key: Key) => (typeof key === typeof after ? (options.descending ? key < after : key > after) : false);
    start = items.findIndex((item) => beyond(keyOf(item)));
    if (start < 0) start = items.length;
  }
  const page = items.slice(start, start + query.limit);
  const more = start + query.limit < items.length;
  return { items: page, nextCursor: more && page.length > 0 ? encodeCursor(keyOf(page[page.length - 1]), pin) : null };
}
