// Text that may be stored: every string from a form, a URL or a JSON body passes these checks
// before anything is written. PostgreSQL refuses U+0000 in text and jsonb and a lone surrogate
// in jsonb (so a write would fail halfway, a 500); other control characters and the
// bidirectional formatting characters make names read differently from what they are
// (Unicode Technical Standard #39 §3, "Trojan Source", CVE-2021-42574). Pure but for zod.
import type { z } from "zod";

/** C0 controls but tab, line feed and carriage return; DEL; C1 controls (Unicode §23.1). */
// eslint-disable-next-line no-control-regex -- finding control characters is the point
const CONTROL = /[\u0000-\u0008\u000b\u000c\u000e-\u001f\u007f-\u009f]/;
/** A high surrogate not followed by a low one, or a low one not preceded by a high one (Unicode §3.9, D91). */
const LONE_SURROGATE = /[\ud800-\udbff](?![\udc00-\udfff])|(?<![\ud800-\udbff])[\udc00-\udfff]/;
/** The embedding, override and isolate controls (Unicode Standard Annex #9 §2.1–2.6). */
const BIDI_CONTROL = /[\u202a-\u202e\u2066-\u2069]/;
/** Line breaks and tabs: fine in a description, not in a name. */
const LINE_BREAK_OR_TAB = /[\t\n\r\u2028\u2029]/;

export type TextKind = "text" | "name";

/**
 * What is wrong with a piece of text, in words for the person who typed it; null when it may be
 * stored. "text" allows tabs and line breaks (descriptions, reasons, comments); "name" (a
 * person's, organisation's, site's or proposal's name or title) refuses those and the
 * bidirectional controls as well.
 */
export function textProblem(value: string, kind: TextKind = "text"): string | null {
  if (CONTROL.test(value)) return value.includes("\u0000") ? "contains a NUL character (U+0000), which cannot be stored." : "contains a control character; remove it (retype the text rather than pasting it).";
  if (LONE_SURROGATE.test(value)) return "contains a broken character (an unpaired UTF-16 surrogate); retype the text.";
  if (kind === "name" && BIDI_CONTROL.test(value)) return "contains a right-to-left or left-to-right override character, which would make it read differently from what it is.";
  if (kind === "name" && LINE_BREAK_OR_TAB.test(value)) return "must be one line, without tabs.";
  return null;
}

export type TextFinding = { path: string; problem: string };

/**
 * The first string (key or value) anywhere in a JSON value that may not be stored, with its path
 * (`inboundRules[3].description`), or null. For documents and JSON bodies before they reach jsonb.
 */
export function findTextProblem(value: unknown, path = ""): TextFinding | null {
  if (typeof value === "string") {
    const problem = textProblem(value);
    return problem ? { path: path || "(the value)", problem } : null;
  }
  if (Array.isArray(value)) {
    for (const [index, item] of value.entries()) {
      const found = findTextProblem(item, `${path}[${index}]`);
      if (found) return found;
    }
    return null;
  }
  if (value !== null && typeof value === "object") {
    for (const [key, item] of Object.entries(value)) {
      const keyProblem = textProblem(key);
      const at = path ? `${path}.${key}` : key;
      if (keyProblem) return { path: at, problem: `(a key) ${keyProblem}` };
      const found = findTextProblem(item, at);
      if (found) return found;
    }
  }
  return null;
}

/** A field's name or path for a message: what cannot be shown is replaced by "?", and it is kept short. */
export function printableName(name: string): string {
  // eslint-disable-next-line no-control-regex -- replacing control characters is the point
  return name.replace(/[\u0000-\u001f\u007f-\u009f\u202a-\u202e\u2066-\u2069\ud800-\udfff]/g, "?").slice(0, 80);
}

/** "The field “name” contains …": the message of a 400 that names the field. */
export function textProblemMessage(finding: TextFinding, noun = "field"): string {
  return `The ${noun} “${printableName(finding.path)}” ${finding.problem}`;
}

/** A zod refinement for one field: its text must pass `textProblem` (the message names no field; the form shows it beside it). */
export function refineText(kind: TextKind = "text") {
  return (value: string, context: z.RefinementCtx): void => {
    const problem = textProblem(value, kind);
    if (problem) context.addIssue({ code: "custom", message: `This ${problem}` });
  };
}
