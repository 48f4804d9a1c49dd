// What the training routes share: ids from the URL, the paths they link to.
import { data } from "react-router";
import { IdSchema } from "../http/schemas.ts";

/** A UUID from the URL, else 400 (as the proposal routes answer a malformed id). */
export function trainingIdOf(value: string | undefined, what: string): string {
  const parsed = IdSchema.safeParse(value);
  if (!parsed.success) throw data({ message: `That ${what} identifier is not valid.` }, { status: 400 });
  return parsed.data;
}

export function trainingPath(slug: string, ...rest: string[]): string {
  return [`/o/${slug}/training`, ...rest].join("/");
}
