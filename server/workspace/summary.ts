// What the fleet table shows for a revision, computed once by the engine when it is saved.
import { compileModel, emptySeverityCounts, findings, worstOutcome, type CompiledModel, type Finding, type Outcome } from "../engine/index.ts";
import type { ModelDocument } from "./document.ts";

export type RevisionSummary = {
  findingsBySeverity: Record<string, number>;
  /**
   * The most exposed outcome any source gets on a wan interface at any time of the week. The
   * name (and the revision_analyses column) keep the word from before the version-2 roles.
   */
  worstOutsideOutcome: Outcome | null;
  counts: Record<string, number>;
};

/** The summary of a revision; pass the compiled model and findings when they exist already. */
export function summariseDocument(effective: ModelDocument, device: CompiledModel = compileModel(effective), found: readonly Finding[] = findings(device)): RevisionSummary {
  const findingsBySeverity: Record<string, number> = emptySeverityCounts();
  for (const finding of found) findingsBySeverity[finding.severity] += 1;

  const wan = effective.interfaces.filter((entry) => entry.role === "wan").map((entry) => entry.name);
  const worst = worstOutcome(device, wan);
  return {
    findingsBySeverity,
    worstOutsideOutcome: worst,
    counts: countElements(effective),
  };
}

/** How many elements of each kind the document has (the overview's model card). */
export function countElements(effective: ModelDocument): Record<string, number> {
  return {
    interfaces: effective.interfaces.length,
    inboundRules: effective.inboundRules.length,
    accounts: effective.accounts.length,
    addressObjects: effective.addresses.length + effective.addressGroups.length,
  };
}
