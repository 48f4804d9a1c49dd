// What happened to the inbound rules between two documents: added, removed, moved (by id, with
// old and new position), fields changed. Moves come from a longest common subsequence of the
// rule ids both documents have: the rules outside it are the ones that moved, so moving one
// rule names that rule and not the neighbours it jumped over. Pure; History, the stale-edit
// banner and the effect of a change all read moves from here.


export interface RuleMove {
  readonly id: string;
  /** 1-based positions in the before and after documents. */
  readonly from: number;
  readonly to: number;
  /** The rule now just above it (null: it is first), so a move stays readable when rules were added or removed around it. */
  readonly below: string | null;
  /**
   * Set when the move is one place past a single neighbour: the documents cannot tell "this
   * rule moved up one place" from "the neighbour moved down one place"; the rule that went up
   * is named, and the neighbour here.
   */
  readonly swappedWith?: string;
}

export interface RuleChanges {
  readonly added: readonly { readonly id: string; readonly position: number }[];
  readonly removed: readonly { readonly id: string; readonly position: number }[];
  readonly moved: readonly RuleMove[];
  /** Rules in both documents whose fields (other than the id) differ, with the field names in document order. */
  readonly changed: readonly { readonly id: string; readonly fields: readonly string[] }[];
}

/**
 * The ids (of rules in both lists) outside one longest common subsequence of the two id lists.
 * Ids are unique within a list, so the LCS is a longest increasing subsequence of the after
 * order's ranks in the before order (Schensted 1961; Hunt & Szymanski 1977), found with a
 * Fenwick tree of prefix maxima in O(n log n). Among the longest ones it keeps the most rules
 * whose absolute position did not change (so an insertion beside a swap names the rule that
 * really travelled, never "position 2 → 2"), then the one ending latest in the after order,
 * which names the rule that went up when two neighbours swapped places.
 */
export function movedRuleIds(beforeIds: readonly string[], afterIds: readonly string[]): Set<string> {
  const beforeIndex = new Map(beforeIds.map((id, index) => [id, index]));
  const afterIndex = new Map(afterIds.map((id, index) => [id, index]));
  const commonBefore = beforeIds.filter((id) => afterIndex.has(id));
  const rank = new Map(commonBefore.map((id, index) => [id, index]));
  const common = afterIds.filter((id) => rank.has(id));
  const m = common.length;
  // A chain's score: its length first, then how many of its rules kept their absolute position.
  const unit = m + 1;
  const tree = new Float64Array(m + 1).fill(-1);
  const treeAt = new Int32Array(m + 1).fill(-1);
  const score = new Float64Array(m);
  const previous = new Int32Array(m).fill(-1);
  const better = (s: number, at: number, than: number, thanAt: number) => s > than || (s === than && at > thanAt);
  for (let i = 0; i < m; i++) {
    const id = common[i];
    const r = rank.get(id) as number;
    // Best chain ending at a rank below r.
    let best = 0;
    let bestAt = -1;
    for (let k = r; k > 0; k -= k & -k) {
      if (treeAt[k] >= 0 && better(tree[k], treeAt[k], best, bestAt)) {
        best = tree[k];
        bestAt = treeAt[k];
      }
    }
    const kept = beforeIndex.get(id) === afterIndex.get(id) ? 1 : 0;
    score[i] = best + unit + kept;
    previous[i] = bestAt;
    for (let k = r + 1; k <= m; k += k & -k) {
      if (treeAt[k] < 0 || better(score[i], i, tree[k], treeAt[k])) {
        tree[k] = score[i];
        treeAt[k] = i;
      }
    }
  }
  let end = -1;
  for (let i = 0; i < m; i++) if (end < 0 || better(score[i], i, score[end], end)) end = i;
  const kept = new Set<string>();
  for (let i = end; i >= 0; i = previous[i]) kept.add(common[i]);
  return new Set(common.filter((id) => !kept.has(id)));
}

/** Equal field values: primitives and lists of them compared directly (rule fields are), anything else by its JSON. */
function sameValue(a: unknown, b: unknown): boolean {
  if (a === b) return true;
  if (Array.isArray(a) && Array.isArray(b)) return a.length === b.length && a.every((item, i) => item === b[i] || sameValue(item, b[i]));
  if (typeof a !== "object" || typeof b !== "object" || a === null || b === null) return false;
  return JSON.stringify(a) === JSON.stringify(b);
}

/** Names of the fields (id aside) whose values differ, in the order the after rule lists them, then fields only the before rule has. */
export function changedFields(before: object, after: object): string[] {
  const b = new Map<string, unknown>(Object.entries(before));
  const a = new Map<string, unknown>(Object.entries(after));
  const keys = [...new Set([...a.keys(), ...b.keys()])].filter((key) => key !== "id");
  return keys.filter((key) => !sameValue(b.get(key), a.get(key)));
}

/** The moves between two id lists, each with its positions, the rule above it now, and the neighbour of a one-place swap. */
export function ruleMoves(beforeIds: readonly string[], afterIds: readonly string[]): RuleMove[] {
  const moved = movedRuleIds(beforeIds, afterIds);
  if (moved.size === 0) return [];
  const beforeIndex = new Map(beforeIds.map((id, index) => [id, index]));
  const out: RuleMove[] = [];
  afterIds.forEach((id, index) => {
    if (!moved.has(id)) return;
    const from = beforeIndex.get(id) as number;
    const below = index > 0 ? afterIds[index - 1] : null;
    // One place up past a single neighbour that did not move itself: a swap of the two.
    const neighbour = afterIds[index + 1];
    const swapped = moved.size === 1 && neighbour !== undefined && beforeIndex.get(neighbour) === from - 1 && beforeIds[from - 1] === neighbour ? neighbour : undefined;
    out.push({ id, from: from + 1, to: index + 1, below, ...(swapped !== undefined ? { swappedWith: swapped } : {}) });
  });
  return out;
}

/** Rules added, removed, moved and changed between two rule lists (the documents' inboundRules). */
export function ruleChanges<Rule extends { readonly id: string }>(before: readonly Rule[], after: readonly Rule[]): RuleChanges {
  const beforeById = new Map(before.map((rule, index) => [rule.id, { rule, index }]));
  const afterById = new Map(after.map((rule, index) => [rule.id, { rule, index }]));
  const added = after.flatMap((rule, index) => (beforeById.has(rule.id) ? [] : [{ id: rule.id, position: index + 1 }]));
  const removed = before.flatMap((rule, index) => (afterById.has(rule.id) ? [] : [{ id: rule.id, position: index + 1 }]));
  const changed = after.flatMap((rule) => {
    const old = beforeById.get(rule.id);
    if (old === undefined) return [];
    const fields = changedFields(old.rule, rule);
    return fields.length === 0 ? [] : [{ id: rule.id, fields }];
  });
  const moved = ruleMoves(
    before.map((rule) => rule.id),
    after.map((rule) => rule.id),
  );
  return { added, removed, moved, changed };
}
