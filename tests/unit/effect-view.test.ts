// What the proposal page says about a change, related to `trace`: every group of sources names
// a probe that gets the group's 'before' outcome on the old model and its 'after' outcome on
// the new one; every CIDR a group lists holds such a probe; the picture's before/after
// outcomes are the exposure map's most exposed ones, and a pair is marked changed exactly when
// some source's outcome there changes. A claim needs a witness. No database.

import { describe, expect, test } from "vitest";
import { formatAddress, parseCidr } from "#server/engine/addresses";
import { effectPicture, effectView } from "#server/analysis/effect-view";
import { changeEffect, exposure, findings, OUTCOMES, outcomeRank, trace, type CompiledModel, type DeviceModelInput } from "#server/engine/index";
import { compiled, proposedTerminal, TERMINAL, TIMEZONE } from "#tests/support/terminal-gateway";
import { instantOfWeekTime } from "#server/engine/week-times";

/** The proposal: a deny on mgmt above the NOC's rule, contractor web all week instead of weekdays, ping no longer allowed, and the v6 NOC's ssh on wan gone. */
const PROPOSED: DeviceModelInput = proposedTerminal();

const before = compiled(TERMINAL);
const after = compiled(PROPOSED, before);
const effect = changeEffect(before, after);
const picture = effectPicture(before, after, effect.cells, TIMEZONE);
const view = effectView(effect, picture, TIMEZONE, { limit: 50 });

describe("Each group of sources the effect lists has a witness that trace replays", () => {
  test("The change has groups that gain and groups that lose", () => {
    expect(view.groups.map((group) => group.direction)).toContain("gains");
    expect(view.groups.map((group) => group.direction)).toContain("loses");
  });

  test.each(view.groups.map((group) => [group.key, group] as const))("%s: its witness gets 'before' on the old model and 'after' on the new", (_key, group) => {
    expect(trace(before, group.witness).outcome).toBe(group.before);
    expect(trace(after, group.witness).outcome).toBe(group.after);
  });

  test("Every CIDR a group lists holds a probe (its first and its last address) with the group's move at one of the group's places and stretches", () => {
    for (const group of view.groups) {
      const stretches = effect.cells.filter((cell) => cell.transitions.some((t) => `${t.before}>${t.after}` === group.key));
      for (const cidr of group.sources.items) {
        const { range } = parseCidr(cidr);
        for (const address of [range.first, range.last]) {
          const from = formatAddress(range.family, address);
          const witnessed = stretches.some((cell) => {
            const probe = { from, interface: cell.interface, service: cell.service, to: cell.to, at: instantOfWeekTime(cell.start, TIMEZONE) };
            try {
              return trace(before, probe).outcome === group.before && trace(after, probe).outcome === group.after;
            } catch {
              return false; // a probe of the other family never arrives at this address
            }
          });
          expect(witnessed, `${group.key}: ${from}`).toBe(true);
        }
      }
    }
  });

  test("A group's sources page past the first is the rest of its list, in order", () => {
    const group = view.groups.find((candidate) => candidate.sources.total >= 2);
    if (!group) throw new Error("the fixture has a group with two sources or more");
    const paged = effectView(effect, picture, TIMEZONE, { group: group.key, offset: 1, limit: 1 }).groups.find((candidate) => candidate.key === group.key)?.sources;
    expect(paged?.offset).toBe(1);
    expect(paged?.items).toEqual(group.sources.items.slice(1, 2));
  });
});

describe("The picture shows each interface × service before and after, changed pairs marked", () => {
  /** The most exposed outcome of the exposure map (every slice) for one interface × service. */
  function mapWorst(device: CompiledModel, iface: string, service: string): string {
    let worst = 0;
    for (const slice of exposure(device).slices) {
      for (const entry of slice.entries) {
        if (entry.interface !== iface || entry.service !== service) continue;
        for (const outcome of OUTCOMES) if (entry.counts[outcome] !== "0") worst = Math.max(worst, outcomeRank(outcome));
      }
    }
    return OUTCOMES[worst];
  }

  test("Before and after are the exposure map's most exposed outcomes", () => {
    expect(picture.cells.length).toBe(picture.interfaces.length * picture.services.length);
    for (const cell of picture.cells) {
      expect(cell.before, `${cell.interface} ${cell.service} before`).toBe(mapWorst(before, cell.interface, cell.service));
      expect(cell.after, `${cell.interface} ${cell.service} after`).toBe(mapWorst(after, cell.interface, cell.service));
    }
  });

  test("A changed pair's witness moves as it says; an unchanged pair keeps every source's outcome at every range edge and slice", () => {
    expect(picture.cells.some((cell) => cell.changed)).toBe(true);
    expect(picture.cells.some((cell) => !cell.changed)).toBe(true);
    for (const cell of picture.cells) {
      if (cell.changed) {
        const witness = cell.witness;
        expect(witness).not.toBeNull();
        if (!witness) continue;
        expect(trace(before, witness).outcome).toBe(witness.before);
        expect(trace(after, witness).outcome).toBe(witness.after);
        expect(BigInt(cell.gains) + BigInt(cell.loses)).toBeGreaterThan(0n);
        continue;
      }
      // Every range edge of the old model's map, traced at each slice's start on both models.
      for (const slice of exposure(before).slices) {
        for (const entry of slice.entries) {
          if (entry.interface !== cell.interface || entry.service !== cell.service) continue;
          const at = instantOfWeekTime(slice.start, TIMEZONE);
          for (const cidr of OUTCOMES.flatMap((outcome) => entry.ranges[outcome])) {
            const { range } = parseCidr(cidr);
            for (const address of [range.first, range.last]) {
              const probe = { from: formatAddress(range.family, address), interface: entry.interface, service: entry.service, to: entry.to, at };
              expect(trace(after, probe).outcome, `${cidr} ${entry.interface} ${entry.service} ${slice.start}`).toBe(trace(before, probe).outcome);
            }
          }
        }
      }
    }
  });

  test("The NOC's ssh on mgmt is marked: it was a login with a second factor and is no answer now", () => {
    const noc = picture.cells.find((cell) => cell.interface === "mgmt" && cell.service === "ssh");
    expect(noc).toMatchObject({ before: "login-mfa", after: "silent", changed: true, gains: "0", loses: "256" }); // RFC 4632: a /24 holds 256 addresses
  });
});

describe("The draft editor's summary needs no findings of the draft", () => {
  // server/services/proposal-effect.server.ts computes the summary without the draft's
  // findings (the costliest part on a large device): the headline, totals and what blocks must
  // not depend on them.
  test("Headline, totals, changed, blocked and blocking are the same whatever findings are passed", () => {
    const beforeFindings = findings(before);
    const full = changeEffect(before, after, { workFrom: ["10.60.4.9"] });
    const quick = changeEffect(before, after, { workFrom: ["10.60.4.9"], findings: { before: beforeFindings, after: beforeFindings } });
    const summary = (effect: typeof full) => ({ headline: effect.headline, changed: effect.changed, blocked: effect.blocked, totals: effect.totals, blocking: effect.blocking });
    expect(full.blocked).toBe(true);
    expect(summary(quick)).toEqual(summary(full));
  });
});
