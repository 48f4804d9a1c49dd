// Rule changes between two documents (server/engine/rule-changes.ts): a moved rule is named by
// its own id with its old and new position. Moves are read from a longest common subsequence of
// the rule ids (Hunt & Szymanski 1977; for lists of distinct ids, a longest increasing
// subsequence, Schensted 1961); the checks below restate that with a plain O(n·m) dynamic
// programme and with single random moves, where the answer is known.

import fc from "fast-check";
import { describe, expect, test } from "vitest";
import { movedRuleIds, ruleChanges, ruleMoves } from "#server/engine/index.ts";
import { propertyParameters } from "#tests/support/property-runs.ts";

/** Length of a longest common subsequence, by the textbook dynamic programme (common practice, no source). */
function lcsLength(a: readonly string[], b: readonly string[]): number {
  const row = new Array<number>(b.length + 1).fill(0);
  for (let i = 1; i <= a.length; i++) {
    let diagonal = 0;
    for (let j = 1; j <= b.length; j++) {
      const up = row[j];
      row[j] = a[i - 1] === b[j - 1] ? diagonal + 1 : Math.max(row[j], row[j - 1]);
      diagonal = up;
    }
  }
  return row[b.length];
}

const ids = (n: number): string[] => Array.from({ length: n }, (_, i) => `r${i + 1}`);

function moved(list: readonly string[], from: number, to: number): string[] {
  const out = [...list];
  const [id] = out.splice(from, 1);
  out.splice(to, 0, id);
  return out;
}

describe("moves of inbound rules", () => {
  test("one rule moved by two or more places is named, with its old and new position; a move by one place names the rule that went up and the neighbour it swapped with", () => {
    fc.assert(
      fc.property(fc.integer({ min: 2, max: 60 }), fc.nat(), fc.nat(), (n, a, b) => {
        const before = ids(n);
        const from = a % n;
        const to = b % n;
        const after = moved(before, from, to);
        const moves = ruleMoves(before, after);
        if (from === to) {
          expect(moves).toEqual([]);
          return;
        }
        expect(moves).toHaveLength(1);
        if (Math.abs(from - to) >= 2) {
          expect(moves[0]).toMatchObject({ id: before[from], from: from + 1, to: to + 1 });
          expect(moves[0].swappedWith).toBeUndefined();
        } else {
          // The two documents are the same whichever of the two neighbours one says moved.
          const up = to < from ? before[from] : before[to];
          const down = to < from ? before[to] : before[from];
          expect(moves[0]).toMatchObject({ id: up, swappedWith: down });
        }
        expect(moves[0].below).toBe(moves[0].to === 1 ? null : after[moves[0].to - 2]);
      }),
      propertyParameters({ numRuns: 400, timeoutMs: 20_000 }),
    );
  }, 20_000);

  test("with rules added and removed around it, a rule moved past two or more kept rules is still the one named", () => {
    fc.assert(
      fc.property(fc.integer({ min: 4, max: 40 }), fc.nat(), fc.nat(), fc.array(fc.nat(), { maxLength: 4 }), fc.array(fc.nat(), { maxLength: 4 }), (n, a, b, removals, additions) => {
        const before = ids(n);
        const from = a % n;
        const id = before[from];
        let after = moved(before, from, b % n);
        for (const r of removals) {
          const victim = after[r % after.length];
          if (victim !== id && after.length > 3) after = after.filter((x) => x !== victim);
        }
        additions.forEach((p, k) => after.splice(p % (after.length + 1), 0, `new-${k}`));
        // Distance in the order of the rules both keep.
        const common = before.filter((x) => after.includes(x));
        const commonAfter = after.filter((x) => common.includes(x));
        const distance = Math.abs(common.indexOf(id) - commonAfter.indexOf(id));
        const moves = ruleMoves(before, after);
        if (distance >= 2) expect(moves.map((m) => m.id)).toEqual([id]);
        if (distance === 0) expect(moves).toEqual([]);
        const changes = ruleChanges(
          before.map((x) => ({ id: x })),
          after.map((x) => ({ id: x })),
        );
        expect(changes.added.map((x) => x.id).sort()).toEqual(after.filter((x) => !before.includes(x)).sort());
        expect(changes.removed.map((x) => x.id).sort()).toEqual(before.filter((x) => !after.includes(x)).sort());
        // A position that reads the same before and after never stands alone: the move is the rule that travelled.
        for (const m of moves) if (m.from === m.to) expect(common.indexOf(m.id)).not.toBe(commonAfter.indexOf(m.id));
      }),
      propertyParameters({ numRuns: 400, timeoutMs: 20_000 }),
    );
  }, 20_000);

  test("the moved rules are as few as possible: the rest is a longest common subsequence of the two orders", () => {
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 25 }), fc.array(fc.nat(), { maxLength: 30 }), fc.array(fc.nat(), { maxLength: 5 }), (n, shuffle, drops) => {
        const before = ids(n);
        const after = [...before];
        // A few random swaps and removals.
        for (let k = 0; k + 1 < shuffle.length && after.length > 1; k += 2) {
          const i = shuffle[k] % after.length;
          const j = shuffle[k + 1] % after.length;
          [after[i], after[j]] = [after[j], after[i]];
        }
        for (const d of drops) if (after.length > 0) after.splice(d % after.length, 1);
        const movedIds = movedRuleIds(before, after);
        const common = after.filter((x) => before.includes(x));
        expect(common.length - movedIds.size).toBe(lcsLength(before, after));
        // What is left keeps its relative order.
        const keptAfter = common.filter((x) => !movedIds.has(x));
        const keptBefore = before.filter((x) => keptAfter.includes(x));
        expect(keptAfter).toEqual(keptBefore);
      }),
      propertyParameters({ numRuns: 400, timeoutMs: 20_000 }),
    );
  }, 20_000);

  test("an insertion beside a swap names the rule that travelled, not one whose position reads the same", () => {
    // r1 went from the top to the bottom; r2 only looks moved, and would read "position 2 → 2".
    expect(ruleMoves(["r1", "r2"], ["new", "r2", "r1"])).toEqual([{ id: "r1", from: 1, to: 3, below: "r2" }]);
  });

  test("changed fields are named; the id is the rule's name, never a field", () => {
    const rule = { id: "r1", interface: "wan", sources: ["noc"], destinations: ["any"], services: ["ssh"], schedule: "all-week", action: "allow", enabled: true, note: "" };
    const changes = ruleChanges([rule], [{ ...rule, sources: ["noc", "vpn"], enabled: false }]);
    expect(changes.changed).toEqual([{ id: "r1", fields: ["sources", "enabled"] }]);
    expect(ruleChanges([rule], [{ ...rule, sources: ["noc"] }]).changed).toEqual([]);
  });
});
