// A finding's identity across revisions and counting by severity, shared by the findings
// service (dismissals) and the pages. Pure and browser-safe: imports only the vocabulary.

import { NAME_PATTERN, SEVERITIES, isSeverity } from "./vocabulary.ts";
import type { SeverityCounts } from "./vocabulary.ts";

/** The part of a finding that identifies it; severity and wording may change between revisions. */
export type FindingIdentity = { code: string; elements: readonly string[] };

/** The shape of a finding code ("internet-login-exposed"), for text typed or kept in a URL. */
export const FINDING_CODE_PATTERN = /^[a-z][a-z-]{0,39}$/;
// An element is "kind:name", the name as NAME_PATTERN allows.
const ELEMENT_PATTERN = new RegExp(`^[a-z][a-z-]{0,29}:${NAME_PATTERN.source.replace(/^\^/, "")}`);
const MAX_ELEMENTS = 16;

/**
 * Code and sorted elements, space-separated (names never contain spaces). The same finding
 * on a later revision has the same key, so a dismissal keeps applying to it; severity is
 * left out because a rule change elsewhere can move it without changing what is accepted.
 */
export function findingKey(finding: FindingIdentity): string {
  return [finding.code, ...[...finding.elements].sort()].join(" ");
}

/** The code and elements of a well-formed key, or null (a typed or tampered value). */
export function parseFindingKey(value: unknown): FindingIdentity | null {
  if (typeof value !== "string" || value.length > 1000) return null;
  const [code = "", ...elements] = value.trim().split(" ");
  if (!FINDING_CODE_PATTERN.test(code) || elements.length > MAX_ELEMENTS || !elements.every((element) => ELEMENT_PATTERN.test(element))) return null;
  return { code, elements: [...elements].sort() };
}

export function emptySeverityCounts(): SeverityCounts {
  return Object.fromEntries(SEVERITIES.map((severity) => [severity, 0])) as SeverityCounts;
}

/** How many items have each severity; text that is no severity is not counted. */
export function countBySeverity(items: ReadonlyArray<{ severity: string }>): SeverityCounts {
  const counts = emptySeverityCounts();
  for (const item of items) if (isSeverity(item.severity)) counts[item.severity] += 1;
  return counts;
}
