// An expectation's form fields as the input the engine's schema reads. Pure, so a test can
// feed it what a browser posts. The schema (server/engine/expectations.ts) decides what is valid.
import { ALL_WEEK, NON_PRIVATE_SOURCES } from "../engine/index.ts";

/** The form fields of one expectation: both kinds' fields; `kind` says which apply. */
export const EXPECTATION_FIELDS = ["kind", "id", "note", "from", "interface", "to", "service", "when", "expect", "sources", "atMost"] as const;

/** The input object for ExpectationSchema from a form's values (empty optional fields left out). */
export function expectationInputOf(values: Readonly<Record<string, string>>): Record<string, unknown> {
  const text = (name: string) => (values[name] ?? "").trim();
  const common = { kind: text("kind"), id: text("id"), note: text("note"), interface: text("interface"), service: text("service") };
  if (common.kind === "bound") {
    const sources = text("sources");
    return {
      ...common,
      sources: sources.toLowerCase() === NON_PRIVATE_SOURCES ? NON_PRIVATE_SOURCES : sources.split(/[\s,]+/).filter((entry) => entry !== ""),
      atMost: text("atMost"),
    };
  }
  return { ...common, from: text("from"), ...(text("to") === "" ? {} : { to: text("to") }), when: text("when") === "" ? ALL_WEEK : text("when"), expect: text("expect") };
}

/** The form field an issue path belongs to: its first segment ("sources[2]" → "sources"). */
export function fieldOfPath(path: string): string {
  return path.split(/[.[]/)[0] || "form";
}
