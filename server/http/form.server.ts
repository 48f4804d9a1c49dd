import { data } from "react-router";
import type { z } from "zod";
import type { RefusalEffect, RefusalReason, RefusalStatus, RevisionConflictFacts } from "../errors.ts";
import { findTextProblem, printableName, textProblem, textProblemMessage } from "../validation/text.ts";

/**
 * The form body, or a 400 for a body that is not a form at all (never a 500). Every text field
 * (and every field name) is checked for characters that may not be stored — NUL, other control
 * characters, lone surrogates — and refused with a 400 naming the field before any action
 * reads it (server/validation/text.ts).
 */
export async function readForm(request: Request): Promise<FormData> {
  let form: FormData;
  try {
    form = await request.formData();
  } catch {
    throw data({ message: "The request body is not a readable form submission." }, { status: 400 });
  }
  for (const [key, value] of form.entries()) {
    const problem = textProblem(key) ?? (typeof value === "string" ? textProblem(value) : textProblem(value.name));
    if (problem) throw data({ message: textProblemMessage({ path: key, problem }), field: printableName(key) }, { status: 400 });
  }
  return form;
}

/**
 * A JSON request body, or a 400: for a body that is not JSON, and for any string in it (key or
 * value) that may not be stored, naming where it is.
 */
export async function readJson(request: Request): Promise<unknown> {
  let body: unknown;
  try {
    body = await request.json();
  } catch {
    throw Response.json({ error: "The request body is not JSON." }, { status: 400 });
  }
  const found = findTextProblem(body);
  if (found) throw Response.json({ error: textProblemMessage(found), issues: [{ path: found.path, message: found.problem }] }, { status: 400 });
  return body;
}

/** Plain string values of a form; files and repeated keys beyond the first are ignored. */
export function formValues(form: FormData): Record<string, string> {
  const values: Record<string, string> = {};
  for (const [key, value] of form.entries()) {
    if (typeof value === "string" && !(key in values)) values[key] = value;
  }
  return values;
}

export type FieldErrors = Record<string, string>;

/** The first message per field, keyed by the field name, for showing beside each input. */
export function fieldErrorsOf(error: z.ZodError): FieldErrors {
  const errors: FieldErrors = {};
  for (const issue of error.issues) {
    const key = String(issue.path[0] ?? "form");
    errors[key] ??= issue.message;
  }
  return errors;
}

/** What a page's form shows when an action refuses: messages by field, and what the user typed. */
export type FormFailure = {
  ok: false;
  errors: FieldErrors;
  values: Record<string, string>;
  issues: ReadonlyArray<{ path: string; message: string }>;
  conflict: RevisionConflictFacts | null;
  /** Why the change is blocked, when a gate refused it. */
  reasons: readonly RefusalReason[];
  /** What the refused change would have done, when a gate judged it by its effect. */
  effect: RefusalEffect | null;
};

/** The failure body: the messages, and the typed values minus secrets, so nothing is lost. */
export function formFailure(errors: FieldErrors, values: Record<string, string>, extra: Partial<Pick<FormFailure, "issues" | "conflict" | "reasons" | "effect">> = {}): FormFailure {
  const safeValues = Object.fromEntries(Object.entries(values).filter(([key]) => !/password/i.test(key)));
  return { ok: false, errors, values: safeValues, issues: extra.issues ?? [], conflict: extra.conflict ?? null, reasons: extra.reasons ?? [], effect: extra.effect ?? null };
}

/** The action result for refused input, with status 400 unless said otherwise. */
export function invalidForm(errors: FieldErrors, values: Record<string, string>, status: RefusalStatus = 400, headers?: HeadersInit) {
  return data(formFailure(errors, values), { status, headers });
}

/** 400 for an intent that this action does not know. */
export function unknownIntent(intent: string | undefined): never {
  throw data({ message: `Unknown action "${(intent ?? "").slice(0, 40)}".` }, { status: 400 });
}
