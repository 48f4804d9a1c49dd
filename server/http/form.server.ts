import { data } from "react-router";
import type { z } from "zod";
import type { RefusalEffect, RefusalReason, RefusalStatus, RevisionConflictFacts } from "../errors.ts";

/** The form body, or a 400 for a body that is not a form at all (never a 500). */
export async function readForm(request: Request): Promise<FormData> {
  try {
    return await request.formData();
  } catch {
    throw data({ message: "The request body is not a readable form submission." }, { status: 400 });
  }
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

/** The origin used for e-mailed links: APP_ORIGIN when set, else the request's own. */
export function appOriginOf(request: Request, configured: string | undefined): string {
  return (configured ?? new URL(request.url).origin).replace(/\/+$/, "");
}

/** 400 for an intent that this action does not know. */
export function unknownIntent(intent: string | undefined): never {
  throw data({ message: `Unknown action "${(intent ?? "").slice(0, 40)}".` }, { status: 400 });
}
