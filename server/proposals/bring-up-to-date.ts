// Bringing a stale proposal up to date: its recorded element edits are re-applied, in order, on
// the live revision. An element that both the live revisions since the base and the draft
// changed is a conflict the author settles (keep the draft's change, or take the live one); so
// is an edit that no longer applies (its rule was deleted meanwhile, say). Pure.
import { Refusal } from "../errors.ts";
import {
  applyElementEdit,
  describeElementEdit,
  diffDocuments,
  elementKeyWords,
  elementsChangedIn,
  elementsTouchedBy,
  resolveElementEdit,
  type DocumentChange,
  type ElementEdit,
  type ElementKey,
  type ModelDocument,
} from "../workspace/index.ts";

export type ConflictChoice = "draft" | "live";

export type Conflict = {
  /** The element (or, for an edit that touches none by name, "edit:<position>"). */
  key: ElementKey;
  words: string;
  /** What the live revisions changed about it since the base (empty when live did not touch it). */
  live: string[];
  /** The draft's edits of it, in words. */
  draft: string[];
  /** Why keeping the draft's change does not work, when it does not: only "live" is then possible. */
  problem: string | null;
};

export type BringUpToDateResult =
  | { ok: true; document: ModelDocument; edits: ElementEdit[]; dropped: ElementEdit[]; settled: Array<{ key: ElementKey; choice: ConflictChoice }> }
  | { ok: false; conflicts: Conflict[] };

function changeWords(change: DocumentChange): string {
  return `${change.change}${change.details.length ? `: ${change.details.join("; ")}` : ""}`;
}

/**
 * Re-applies the edits on `live`. Without a choice for every conflict the answer lists the
 * conflicts (choices already made are kept in the listing's order); with them, the new draft,
 * the edits it keeps (resolved on the live revision) and those dropped for the live version.
 */
export function bringUpToDate(base: ModelDocument, live: ModelDocument, edits: readonly ElementEdit[], choices: Readonly<Record<ElementKey, ConflictChoice>> = {}): BringUpToDateResult {
  const liveChanges = diffDocuments(base, live);
  const liveChanged = new Map<ElementKey, string[]>();
  elementsChangedIn(liveChanges).forEach((key) => liveChanged.set(key, []));
  for (const change of liveChanges) {
    const [key] = elementsChangedIn([change]);
    liveChanged.get(key)?.push(changeWords(change));
  }

  const conflicts = new Map<ElementKey, Conflict>();
  const conflictOf = (key: ElementKey): Conflict => {
    let conflict = conflicts.get(key);
    if (!conflict) conflicts.set(key, (conflict = { key, words: key.startsWith("edit:") ? `edit ${key.slice(5)}` : elementKeyWords(key), live: liveChanged.get(key) ?? [], draft: [], problem: null }));
    return conflict;
  };

  let document = live;
  const kept: ElementEdit[] = [];
  const dropped: ElementEdit[] = [];
  const settled = new Map<ElementKey, ConflictChoice>();
  edits.forEach((edit, index) => {
    const touched = elementsTouchedBy(edit);
    const keys = touched.length > 0 ? touched : [`edit:${index + 1}`];
    const clashing = keys.filter((key) => liveChanged.has(key));
    for (const key of clashing) conflictOf(key).draft.push(describeElementEdit(edit));
    const chosen = clashing.map((key) => choices[key]);
    if (clashing.length > 0 && chosen.some((choice) => choice === undefined)) {
      // Unsettled: try it anyway so later edits meet the document they would most likely meet.
      try {
        document = applyElementEdit(document, resolveElementEdit(document, edit));
      } catch {
        // Its failure is reported once the author chooses to keep it.
      }
      return;
    }
    for (const key of clashing) settled.set(key, choices[key]);
    if (chosen.includes("live")) {
      dropped.push(edit);
      return;
    }
    try {
      const resolved = resolveElementEdit(document, edit);
      document = applyElementEdit(document, resolved);
      kept.push(resolved);
    } catch (error) {
      if (!(error instanceof Refusal)) throw error;
      // It no longer applies: the author can only let it go (and redo the change on the new draft).
      const problemKeys = clashing.length > 0 ? clashing : keys;
      for (const key of problemKeys) {
        if (choices[key] === "live") continue;
        const conflict = conflictOf(key);
        if (!conflict.draft.includes(describeElementEdit(edit))) conflict.draft.push(describeElementEdit(edit));
        conflict.problem = `${describeElementEdit(edit)} no longer applies: ${error.message}`;
      }
      if (problemKeys.every((key) => choices[key] === "live")) {
        for (const key of problemKeys) settled.set(key, "live");
        dropped.push(edit);
      }
    }
  });

  const open = [...conflicts.values()].filter((conflict) => conflict.problem !== null || choices[conflict.key] === undefined);
  if (open.length > 0) return { ok: false, conflicts: [...conflicts.values()] };
  return { ok: true, document, edits: kept, dropped, settled: [...settled].map(([key, choice]) => ({ key, choice })) };
}
