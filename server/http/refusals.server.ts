// The one place where an expected failure becomes a response (docs/decisions/006). Actions
// wrap their service calls and hand whatever was thrown to `refusedForm` (pages) or
// `refusedJson` (API routes); anything that is not a Refusal is re-thrown as the bug it is.
import { data } from "react-router";
import { ProbeError } from "../engine/index.ts";
import { Refusal } from "../errors.ts";
import { failureKindOf } from "./failures.server.ts";
import { formFailure, type FieldErrors } from "./form.server.ts";

/**
 * The thrown value as a Refusal; the engine's probe input errors count as 400s, and a unique
 * constraint a concurrent request won as a 409 (docs/decisions/013). Re-throws anything else.
 */
export function refusalOf(error: unknown): Refusal {
  if (error instanceof Refusal) return error;
  if (error instanceof ProbeError) return new Refusal(error.message, 400);
  if (failureKindOf(error) === "conflict") return new Refusal("Someone else made the same change at the same moment (a name that must be unique is now taken). Nothing was changed; reload and try again.", 409);
  throw error;
}

/**
 * The response for a refused form submission: the message at the top of the form and beside its
 * field when it has one (a form without that field still shows it), the typed values kept. A
 * refusal with reasons hands them over as a list, so the message leaves their words out (the
 * page shows each reason once).
 */
export function refusedForm(error: unknown, values: Record<string, string>) {
  const refusal = refusalOf(error);
  const message = refusal.reasons.length > 0 && refusal.lead ? refusal.lead : refusal.message;
  const errors: FieldErrors = { form: message };
  if (refusal.field) errors[refusal.field] = message;
  return data(formFailure(errors, values, { issues: refusal.issues, conflict: refusal.conflict ?? null, reasons: refusal.reasons, effect: refusal.effect ?? null }), { status: refusal.status, headers: refusal.headers });
}

/** The same, for an action that answers in its own shape. */
export function refusedWith<Body>(error: unknown, bodyOf: (refusal: Refusal) => Body) {
  const refusal = refusalOf(error);
  return data(bodyOf(refusal), { status: refusal.status, headers: refusal.headers });
}

/** The response for a refused API request: `{"error": message}` with the refusal's status (and its issues, conflict or reasons when it has them). */
export function refusedJson(error: unknown): Response {
  const refusal = refusalOf(error);
  return Response.json(
    {
      error: refusal.message,
      ...(refusal.issues.length ? { issues: refusal.issues } : {}),
      ...(refusal.conflict ? { conflict: refusal.conflict } : {}),
      ...(refusal.reasons.length ? { reasons: refusal.reasons } : {}),
      ...(refusal.effect ? { effect: refusal.effect } : {}),
    },
    { status: refusal.status, headers: refusal.headers },
  );
}

/** For a loader: a refusal becomes the page's error response (shown in its frame), anything else stays the bug it is. */
export function refusedPage(error: unknown): never {
  const refusal = refusalOf(error);
  throw data({ message: refusal.message }, { status: refusal.status, headers: refusal.headers });
}
