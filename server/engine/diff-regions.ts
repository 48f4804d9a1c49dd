// Where two revisions can differ. A cell is one (interface, destination, service class),
// named in both revisions by interface name, address and protocol/port. Its outcomes in a
// stretch of the week follow only from its inputs: the rules that can match there (in order,
// with their action, sources and schedule state), the listener, the service kind, the
// default action and, for logins, the accounts. Equal inputs give equal outcomes. Inputs
// that differ by a few rules or accounts can only change outcomes for sources of those rules
// or accounts (the cell's region), so only the region's elements are evaluated.

import type { Family } from "./addresses.ts";
import { collapse, contains, rangesOf } from "./address-sets.ts";
import type { Ranges } from "./address-sets.ts";
import type { Candidates, CompiledModel } from "./compile.ts";
import { lastAtMost, runValueAt } from "./domain.ts";
import { looksLikeAddressEntry } from "./model.ts";
import type { DeviceModel } from "./model.ts";
import { ANSWERED, LOGIN_MFA, LOGIN_PASSWORD, REFUSED, SILENT } from "./vocabulary.ts";
import { WEEK_MINUTES } from "./schedules.ts";

/** A cell as both revisions name it. */
export interface CellRef {
  readonly ifaceName: string;
  readonly family: Family;
  readonly value: bigint;
  /** Service key (protocol/port). */
  readonly key: string;
}

/** How two revisions compare on one cell. */
export type CellComparison =
  | { readonly kind: "same" }
  /** Outcomes can differ only for sources in `region` (ranges of the cell's family). */
  | { readonly kind: "region"; readonly region: Ranges }
  /** Anything may differ: evaluate the whole source space. */
  | { readonly kind: "whole" };

/** What an allowed probe gets on a cell: R refused (nothing listens, unlistened ports reset), A answered, L a login. */
type Mode = "R" | "A" | "L";

/** One revision's indices for a cell (null when the cell is all silent there: no such interface, address or family, or nothing answers whatever the rules say). */
export interface CellSide {
  readonly iface: number;
  readonly to: number;
  readonly cls: number;
  readonly family: Family;
  readonly mode: Mode;
}

/** One revision's view of a region of a cell: pieces (elements clipped to the region) and their outcome per slice. */
export interface RegionView {
  /** Flat [first0, last0, first1, last1, …], ascending; together exactly the region. */
  readonly pieces: readonly bigint[];
  /** Per slice of the revision: outcome index per piece; equal contents are the same array. */
  readonly bySlice: readonly Uint8Array[];
}

/** First-match owners of a region's elements on one candidate list. */
interface FirstMatches {
  /** Per piece: its element's slot. */
  readonly slotOf: Int32Array;
  /** Per slot: the owner in every slice (-1: none), unless the slot has owners by slice. */
  readonly constant: Int32Array;
  /** Slots whose owner depends on the slice: owner per slice. */
  readonly bySlice: ReadonlyMap<number, Int32Array>;
}

const UNDECIDED = -2;

export interface RegionTuning {
  /** Above this many elements in either revision a region is evaluated as a whole cell (full partitions). */
  readonly elementLimit: number;
  /** Above this many edits between the two revisions' enabled rules (or below 0) each cell's candidate lists are compared instead. */
  readonly ruleEditLimit: number;
  /** Above this many edits between a cell's two candidate lists the region is every rule between their common ends. */
  readonly editLimit: number;
}

export const DEFAULT_TUNING: RegionTuning = { elementLimit: 16_384, ruleEditLimit: 256, editLimit: 64 };

/** Strings interned to small integers, shared by both revisions so equal definitions get equal ids. */
class Interner {
  private readonly ids = new Map<string, number>();
  id(text: string): number {
    let id = this.ids.get(text);
    if (id === undefined) this.ids.set(text, (id = this.ids.size));
    return id;
  }
}

const familyOfEntry = (text: string): Family => (text.includes(":") ? 6 : 4);

/** One revision, with the definitions of its names, rules and accounts as interned ids. */
class RevisionView {
  private readonly ifaceByName = new Map<string, number>();
  private readonly objects = new Map<string, readonly string[]>();
  private readonly groups = new Map<string, readonly string[]>();
  private readonly nameIds: Record<Family, Map<string, number>> = { 4: new Map(), 6: new Map() };
  private readonly views = new WeakMap<Ranges, Map<string, RegionView>>();
  private readonly ruleIds: Record<Family, Int32Array>;
  private readonly lists = new Map<number, Int32Array>();
  private readonly logins = new Map<string, { ids: Int32Array; accounts: Int32Array }>();
  private readonly scheduleIds: Int32Array;
  private enabledRules: { readonly positions: Int32Array; readonly ids: Int32Array } | null = null;
  /** Per stretch of the common refinement: this revision's slice. */
  readonly sliceOfStretch: Int32Array;

  constructor(
    readonly engine: CompiledModel,
    cuts: readonly number[],
    private readonly interner: Interner,
    /** Address names whose definition differs between the revisions (directly or through a member). */
    private readonly changed: ReadonlySet<string>,
  ) {
    const model = engine.model;
    model.interfaces.forEach((f, i) => this.ifaceByName.set(f.name, i));
    for (const a of model.addresses) this.objects.set(a.name, a.entries);
    for (const g of model.addressGroups) this.groups.set(g.name, g.members);
    this.sliceOfStretch = Int32Array.from(cuts, (c) => engine.week.sliceAt[c]);
    // A schedule is known by its on/off pattern over the stretches both revisions share.
    this.scheduleIds = Int32Array.from(model.schedules, (_, s) =>
      interner.id(`s:${Array.from(this.sliceOfStretch, (slice) => (engine.week.slices[slice].active[s] ? "1" : "0")).join("")}`),
    );
    this.ruleIds = { 4: new Int32Array(engine.rules.length).fill(-1), 6: new Int32Array(engine.rules.length).fill(-1) };
  }

  /**
   * Id of what a name holds in one family. A name defined alike in both revisions is known by
   * its name; a changed one by its definition (entries, members), never by the resolved set.
   */
  private nameId(name: string, family: Family): number {
    const memo = this.nameIds[family];
    const known = memo.get(name);
    if (known !== undefined) return known;
    let text: string;
    if (name === "any" || name === (family === 4 ? "any4" : "any6")) text = "all";
    else if (name === "any4" || name === "any6") text = "none";
    else if (!this.changed.has(name)) text = `=${name}`;
    else {
      const entries = this.objects.get(name);
      if (entries !== undefined) text = `o:${entries.filter((e) => familyOfEntry(e) === family).join(",")}`;
      else {
        // Validation rules out unknown names and cycles; an in-progress mark keeps this safe anyway.
        memo.set(name, this.interner.id(`cycle:${name}`));
        text = `g:${(this.groups.get(name) ?? []).map((m) => this.nameId(m, family)).join(",")}`;
      }
    }
    const id = this.interner.id(text);
    memo.set(name, id);
    return id;
  }

  /** Id of a rule's effect on first match in one family: action, schedule pattern, sources. */
  ruleId(position: number, family: Family): number {
    const ids = this.ruleIds[family];
    if (ids[position] >= 0) return ids[position];
    const r = this.engine.rules[position];
    const doc = this.engine.model.inboundRules[position];
    const schedule = r.schedule < 0 ? -1 : this.scheduleIds[r.schedule];
    const id = this.interner.id(`r:${r.allow ? 1 : 0}|${schedule}|${doc.sources.map((n) => this.nameId(n, family)).join(",")}`);
    ids[position] = id;
    return id;
  }

  /**
   * The enabled rules in order, each with the id of everything that decides where and how it
   * can match: interface, services, destinations, action, schedule pattern, sources.
   */
  sequence(unchanged: ReadonlySet<string>): { readonly positions: Int32Array; readonly ids: Int32Array } {
    if (this.enabledRules !== null) return this.enabledRules;
    const positions: number[] = [];
    const ids: number[] = [];
    for (const r of this.engine.rules) {
      if (!r.enabled) continue;
      const doc = this.engine.model.inboundRules[r.position];
      if (unchanged.has(doc.id)) {
        // Defined alike in both revisions, with every name it uses: known by its id.
        positions.push(r.position);
        ids.push(this.interner.id(`=${doc.id}`));
        continue;
      }
      const services = r.anyService ? "*" : [...r.serviceKeys].sort().join(",");
      const destinations = doc.destinations.map((n) => `${this.nameId(n, 4)}/${this.nameId(n, 6)}`).join(",");
      positions.push(r.position);
      ids.push(this.interner.id(`R:${doc.interface}|${services}|${destinations}|${this.ruleId(r.position, 4)}|${this.ruleId(r.position, 6)}`));
    }
    this.enabledRules = { positions: Int32Array.from(positions), ids: Int32Array.from(ids) };
    return this.enabledRules;
  }

  /** Id of a schedule's on/off pattern over the shared stretches (-1: always on). */
  scheduleId(position: number): number {
    const s = this.engine.rules[position].schedule;
    return s < 0 ? -1 : this.scheduleIds[s];
  }

  /** Whether an enabled rule is among the cell's candidates (as CompiledModel.candidateRules decides), without building the list. */
  canMatch(position: number, side: CellSide, value: bigint): boolean {
    const r = this.engine.rules[position];
    if (r.iface !== -1 && r.iface !== side.iface) return false;
    if (!r.anyService && !r.serviceKeys.has(this.engine.classes[side.cls].key)) return false;
    return contains(rangesOf(r.destinations, side.family), value);
  }

  /** The rule ids of a candidate list, in order. */
  listIds(candidates: Candidates, family: Family): Int32Array {
    const key = candidates.id * 2 + (family === 4 ? 0 : 1);
    let ids = this.lists.get(key);
    if (ids === undefined) {
      ids = Int32Array.from(candidates.rules, (p) => this.ruleId(p, family));
      this.lists.set(key, ids);
    }
    return ids;
  }

  /** Ids of the accounts that can log in to the service class, sorted (the login outcome is a max over them), with their indices. */
  loginIds(cls: number, family: Family): { ids: Int32Array; accounts: Int32Array } {
    const key = `${family}|${cls}`;
    let found = this.logins.get(key);
    if (found !== undefined) return found;
    const name = this.engine.classes[cls].service?.name ?? "";
    const pairs: [number, number][] = [];
    for (const a of this.engine.accounts) {
      if (!a.enabled || (a.services !== null && !a.services.has(name))) continue;
      const sources = this.engine.model.accounts[a.index].loginSources;
      const where =
        sources.length === 0
          ? "all"
          : sources.map((t) => (looksLikeAddressEntry(t) ? (familyOfEntry(t) === family ? `l:${t}` : "none") : `n:${this.nameId(t, family)}`)).join(",");
      pairs.push([this.interner.id(`a:${a.secondFactor ? 1 : 0}|${where}`), a.index]);
    }
    pairs.sort((x, y) => x[0] - y[0] || x[1] - y[1]);
    found = { ids: Int32Array.from(pairs, (p) => p[0]), accounts: Int32Array.from(pairs, (p) => p[1]) };
    this.logins.set(key, found);
    return found;
  }

  /** The cell's indices in this revision, or null when it is all silent here. */
  side(cell: CellRef): CellSide | null {
    const engine = this.engine;
    const iface = this.ifaceByName.get(cell.ifaceName);
    if (iface === undefined) return null;
    const to = engine.deviceAddressOf({ family: cell.family, value: cell.value });
    if (to < 0) return null;
    if (!engine.interfaceAddresses[iface].some((a) => engine.addresses[a].family === cell.family)) return null;
    const cls = engine.classOfKey(cell.key);
    const c = engine.classes[cls];
    const listening = c.service !== null && engine.listening[iface].has(c.service.name);
    // As CompiledModel.outcomeOf: nothing listening and no answer anyway → silent whatever the rules say.
    if (!listening && (c.kind === "echo" || !engine.unlistenedReset)) return null;
    const mode: Mode = !listening ? "R" : c.kind === "login" ? "L" : "A";
    return { iface, to, cls, family: cell.family, mode };
  }

  /** Enabled rules that can match on the cell at some time, in order (built and kept by the compiled model). */
  candidatesOf(side: CellSide): Candidates {
    return this.engine.candidateRules(side.iface, side.to, side.cls);
  }

  /** The cell's outcomes over a region (the region should be small), computed once per cell and region. */
  regionView(side: CellSide | null, family: Family, region: Ranges): RegionView {
    let byInputs = this.views.get(region);
    if (byInputs === undefined) this.views.set(region, (byInputs = new Map()));
    const key = side === null ? "silent" : `${side.iface}|${side.to}|${side.cls}`;
    let view = byInputs.get(key);
    if (view === undefined) byInputs.set(key, (view = this.evaluate(side, family, region)));
    return view;
  }

  private evaluate(side: CellSide | null, family: Family, region: Ranges): RegionView {
    const engine = this.engine;
    const domain = engine.domains[family];
    // Pieces: the region cut at element bounds (an element may hold several pieces, in order).
    const pieces: bigint[] = [];
    const pieceElements: number[] = [];
    for (let i = 0; i < region.length; i += 2) {
      const first = region[i];
      const last = region[i + 1];
      for (let e = domain.indexOf(first); e < domain.size && domain.bounds[e] <= last; e++) {
        const lo = domain.bounds[e] > first ? domain.bounds[e] : first;
        const end = domain.bounds[e + 1] - 1n;
        pieces.push(lo, end < last ? end : last);
        pieceElements.push(e);
      }
    }
    const count = pieceElements.length;
    const slices = engine.week.slices.length;
    if (side === null) {
      const silent = new Uint8Array(count).fill(SILENT);
      return { pieces, bySlice: Array.from({ length: slices }, () => silent) };
    }
    const matches = this.firstMatches(side, family, pieceElements);
    const login = side.mode === "L" ? engine.loginClassRuns(family, side.cls) : null;
    const passed = side.mode === "R" ? REFUSED : ANSWERED;
    const valueOf = (owner: number, n: number): number => {
      const allowed = owner < 0 ? engine.defaultAllow : engine.rules[owner].allow;
      return !allowed ? SILENT : login === null ? passed : runValueAt(login, pieceElements[n]);
    };
    // Most elements are decided by a rule that is always on: one value for every slice.
    const base = new Uint8Array(count);
    const varying: number[] = [];
    const varyingOwners: Int32Array[] = [];
    for (let n = 0; n < count; n++) {
      const owners = matches.bySlice.get(matches.slotOf[n]);
      if (owners === undefined) base[n] = valueOf(matches.constant[matches.slotOf[n]], n);
      else {
        varying.push(n);
        varyingOwners.push(owners);
      }
    }
    if (varying.length === 0) return { pieces, bySlice: Array.from({ length: slices }, () => base) };
    const distinct = new Map<number, Uint8Array[]>();
    const bySlice: Uint8Array[] = [];
    const patch = new Uint8Array(varying.length);
    for (let k = 0; k < slices; k++) {
      let hash = 0x811c9dc5;
      varying.forEach((n, i) => {
        patch[i] = valueOf(varyingOwners[i][k], n);
        hash = Math.imul(hash ^ patch[i], 0x01000193);
      });
      // Slices with the same outcomes share one array, so callers can compare them by identity.
      const bucket = distinct.get(hash) ?? [];
      const same = bucket.find((values) => varying.every((n, i) => values[n] === patch[i]));
      if (same !== undefined) bySlice.push(same);
      else {
        const values = base.slice();
        varying.forEach((n, i) => (values[n] = patch[i]));
        bucket.push(values);
        distinct.set(hash, bucket);
        bySlice.push(values);
      }
    }
    return { pieces, bySlice };
  }

  /**
   * The first-match rule of each element of the pieces: a bitset sweep over the rules that
   * can match on the cell, in order (as CompiledModel.rulePartition), restricted to those
   * elements and stopping once each is decided, so the cell's full candidate list is never
   * built. An element first reached by a rule limited to a schedule gets one owner per slice.
   * Owner -1: no rule matches, the default applies.
   */
  private firstMatches(side: CellSide, family: Family, pieceElements: readonly number[]): FirstMatches {
    const engine = this.engine;
    const value = engine.addresses[side.to].value;
    const slices = engine.week.slices;
    const elements: number[] = [];
    const slotOf = new Int32Array(pieceElements.length);
    pieceElements.forEach((e, n) => {
      if (elements.length === 0 || elements[elements.length - 1] !== e) elements.push(e);
      slotOf[n] = elements.length - 1;
    });
    const sorted = Int32Array.from(elements);
    const remaining = new Int32Array(engine.domains[family].words);
    const regionWords: number[] = [];
    for (const e of elements) {
      const w = e >>> 5;
      if (remaining[w] === 0) regionWords.push(w);
      remaining[w] |= 1 << (e & 31);
    }
    const constant = new Int32Array(elements.length).fill(-1);
    const bySlice = new Map<number, Int32Array>();
    let open = elements.length;
    for (const rule of engine.rules) {
      if (open === 0) break;
      if (!rule.enabled || !this.canMatch(rule.position, side, value)) continue;
      const p = rule.position;
      const schedule = rule.schedule;
      const take = (w: number, fresh: number): void => {
        while (fresh !== 0) {
          const low = fresh & -fresh;
          fresh ^= low;
          const slot = lastAtMost(sorted, (w << 5) + 31 - Math.clz32(low), sorted.length);
          let owners = bySlice.get(slot);
          if (schedule < 0) {
            if (owners === undefined) constant[slot] = p;
            else for (let k = 0; k < slices.length; k++) if (owners[k] === UNDECIDED) owners[k] = p;
          } else {
            if (owners === undefined) bySlice.set(slot, (owners = new Int32Array(slices.length).fill(UNDECIDED)));
            let left = 0;
            for (let k = 0; k < slices.length; k++) {
              if (owners[k] !== UNDECIDED) continue;
              if (slices[k].active[schedule]) owners[k] = p;
              else left++;
            }
            if (left > 0) continue;
          }
          remaining[w] &= ~low;
          open--;
        }
      };
      const bits = engine.ruleSourceBits(p, family);
      if (bits.words.length <= regionWords.length) {
        for (let k = 0; k < bits.words.length; k++) {
          const fresh = remaining[bits.words[k]] & bits.masks[k];
          if (fresh !== 0) take(bits.words[k], fresh);
        }
      } else {
        // A rule with many more words than the region (e.g. sources "any"): look each region word up instead.
        for (const w of regionWords) {
          if (remaining[w] === 0) continue;
          const k = lastAtMost(bits.words, w, bits.words.length);
          if (bits.words[k] !== w) continue;
          const fresh = remaining[w] & bits.masks[k];
          if (fresh !== 0) take(w, fresh);
        }
      }
    }
    // Slices no rule decided fall to the default.
    for (const owners of bySlice.values()) for (let k = 0; k < owners.length; k++) if (owners[k] === UNDECIDED) owners[k] = -1;
    return { slotOf, constant, bySlice };
  }

  /** Elements of this revision's domain that overlap the region. */
  elementCount(family: Family, region: Ranges): number {
    const domain = this.engine.domains[family];
    let n = 0;
    for (let i = 0; i < region.length; i += 2) n += domain.indexOf(region[i + 1]) - domain.indexOf(region[i]) + 1;
    return n;
  }

  /** Sources of the given rules (positions) in one family. */
  sourcesOf(positions: Iterable<number>, family: Family): [bigint, bigint][] {
    const out: [bigint, bigint][] = [];
    for (const p of positions) {
      const r = rangesOf(this.engine.rules[p].sources, family);
      for (let i = 0; i < r.length; i += 2) out.push([r[i], r[i + 1]]);
    }
    return out;
  }

  /** Login sources of the given accounts in one family. */
  loginSourcesOf(accounts: Iterable<number>, family: Family): [bigint, bigint][] {
    const out: [bigint, bigint][] = [];
    for (const a of accounts) {
      const r = rangesOf(this.engine.accounts[a].loginSources, family);
      for (let i = 0; i < r.length; i += 2) out.push([r[i], r[i + 1]]);
    }
    return out;
  }
}

/**
 * Positions (indices into a and b) outside one longest common subsequence, or null when
 * the lists are more than `limit` insertions and deletions apart. E. W. Myers, "An O(ND)
 * difference algorithm and its variations", Algorithmica 1 (1986): the greedy forward search
 * with the furthest-reaching path per diagonal kept for each d, then walked back.
 */
export function listEdits(a: ArrayLike<number>, b: ArrayLike<number>, limit: number): { a: number[]; b: number[] } | null {
  const n = a.length;
  const m = b.length;
  const max = Math.min(limit, n + m);
  const offset = max + 1;
  const v = new Int32Array(2 * max + 3);
  const trace: Int32Array[] = [];
  for (let d = 0; d <= max; d++) {
    trace.push(v.slice());
    for (let k = -d; k <= d; k += 2) {
      let x = k === -d || (k !== d && v[offset + k - 1] < v[offset + k + 1]) ? v[offset + k + 1] : v[offset + k - 1] + 1;
      let y = x - k;
      while (x < n && y < m && a[x] === b[y]) {
        x++;
        y++;
      }
      v[offset + k] = x;
      if (x >= n && y >= m) return walkBack(trace, offset, x, y, d);
    }
  }
  return null;
}

function walkBack(trace: readonly Int32Array[], offset: number, endX: number, endY: number, edits: number): { a: number[]; b: number[] } {
  const out = { a: [] as number[], b: [] as number[] };
  let x = endX;
  let y = endY;
  for (let d = edits; d > 0; d--) {
    const v = trace[d];
    const k = x - y;
    const down = k === -d || (k !== d && v[offset + k - 1] < v[offset + k + 1]);
    const prevX = v[offset + (down ? k + 1 : k - 1)];
    const prevY = prevX - (down ? k + 1 : k - 1);
    if (down) out.b.push(prevY);
    else out.a.push(prevX);
    x = prevX;
    y = prevY;
  }
  return out;
}

/** Entries of a (sorted) not in b (sorted), as a multiset difference. */
function extra(a: Int32Array, b: Int32Array): number[] {
  const out: number[] = [];
  let j = 0;
  for (let i = 0; i < a.length; i++) {
    while (j < b.length && b[j] < a[i]) j++;
    if (j < b.length && b[j] === a[i]) j++;
    else out.push(i);
  }
  return out;
}

/** Both revisions of a diff, with the stretches of the week they share. */
export class RevisionPair {
  /** Local week minutes where the stretches (common refinement of both revisions' slices) start, ascending. */
  readonly cuts: readonly number[];
  readonly before: RevisionView;
  readonly after: RevisionView;
  private readonly ruleEdits: { readonly before: readonly number[]; readonly after: readonly number[] } | null;
  private readonly regions = new Map<string, CellComparison>();

  constructor(
    beforeEngine: CompiledModel,
    afterEngine: CompiledModel,
    readonly tuning: RegionTuning = DEFAULT_TUNING,
  ) {
    this.cuts = [...new Set([...beforeEngine.week.slices, ...afterEngine.week.slices].map((s) => s.start % WEEK_MINUTES))].sort((a, b) => a - b);
    const interner = new Interner();
    const changed = changedNames(beforeEngine.model, afterEngine.model);
    this.before = new RevisionView(beforeEngine, this.cuts, interner, changed);
    this.after = new RevisionView(afterEngine, this.cuts, interner, changed);
    this.ruleEdits = this.sequenceEdits(changed);
  }

  /** Ids of rules defined alike in both documents whose names, services and schedule mean the same in both. */
  private unchangedRules(changed: ReadonlySet<string>): Set<string> {
    const sameText = (x: readonly string[], y: readonly string[]): boolean => x.length === y.length && x.every((t, i) => t === y[i]);
    const after = new Map(this.after.engine.model.inboundRules.map((r, i) => [r.id, i]));
    const out = new Set<string>();
    this.before.engine.model.inboundRules.forEach((b, pb) => {
      const pa = after.get(b.id);
      if (pa === undefined) return;
      const a = this.after.engine.model.inboundRules[pa];
      if (a.interface !== b.interface || a.action !== b.action || a.enabled !== b.enabled || a.schedule !== b.schedule) return;
      if (!sameText(a.sources, b.sources) || !sameText(a.destinations, b.destinations) || !sameText(a.services, b.services)) return;
      if (b.sources.some((n) => changed.has(n)) || b.destinations.some((n) => changed.has(n))) return;
      if (this.before.scheduleId(pb) !== this.after.scheduleId(pa)) return;
      const rb = this.before.engine.rules[pb];
      const ra = this.after.engine.rules[pa];
      if (rb.anyService !== ra.anyService || rb.serviceKeys.size !== ra.serviceKeys.size || [...rb.serviceKeys].some((k) => !ra.serviceKeys.has(k))) return;
      out.add(b.id);
    });
    return out;
  }

  /**
   * The fewest enabled rules (positions in either revision) whose removal makes both rule
   * sequences equal, or null when there are more than tuning.ruleEditLimit. Every cell's
   * candidate list is a filter of its revision's sequence by interface, service and
   * destination, so without these rules both revisions' lists for a cell are equal too.
   */
  private sequenceEdits(changed: ReadonlySet<string>): { readonly before: readonly number[]; readonly after: readonly number[] } | null {
    if (this.tuning.ruleEditLimit < 0) return null;
    const unchanged = this.unchangedRules(changed);
    const b = this.before.sequence(unchanged);
    const a = this.after.sequence(unchanged);
    const { head, midB, midA } = commonEnds(b.ids, a.ids);
    const edits = listEdits(midB, midA, this.tuning.ruleEditLimit);
    if (edits === null) return null;
    return { before: edits.a.map((i) => b.positions[head + i]), after: edits.b.map((i) => a.positions[head + i]) };
  }

  /** Whether the cell can differ between the revisions, and where. */
  compare(cell: CellRef, b: CellSide | null, a: CellSide | null): CellComparison {
    if (b === null && a === null) return SAME;
    if (b === null || a === null || b.mode !== a.mode || this.before.engine.defaultAllow !== this.after.engine.defaultAllow) return WHOLE;
    if (this.before.engine.classes[b.cls].key !== this.after.engine.classes[a.cls].key) return WHOLE;
    const family = cell.family;
    // What differs: rules (positions) and accounts (indices) of either revision.
    let rulesB: readonly number[];
    let rulesA: readonly number[];
    if (this.ruleEdits !== null) {
      // Outside the edited rules the candidate lists agree; only edited rules that can match here count.
      rulesB = this.ruleEdits.before.filter((p) => this.before.canMatch(p, b, cell.value));
      rulesA = this.ruleEdits.after.filter((p) => this.after.canMatch(p, a, cell.value));
    } else [rulesB, rulesA] = this.listEdits(b, a, family);
    let accountsB: readonly number[] = [];
    let accountsA: readonly number[] = [];
    if (b.mode === "L") {
      // The login outcome is the best over the eligible accounts, so only accounts in one list and not the other count.
      const lb = this.before.loginIds(b.cls, family);
      const la = this.after.loginIds(a.cls, family);
      if (!sameList(lb.ids, la.ids)) {
        accountsB = extra(lb.ids, la.ids).map((i) => lb.accounts[i]);
        accountsA = extra(la.ids, lb.ids).map((i) => la.accounts[i]);
      }
    }
    if (rulesB.length + rulesA.length + accountsB.length + accountsA.length === 0) return SAME;
    // Cells that differ by the same rules and accounts share one comparison (and so one region object).
    const key = `${family}|${rulesB.join(",")}|${rulesA.join(",")}|${accountsB.join(",")}|${accountsA.join(",")}`;
    let found = this.regions.get(key);
    if (found === undefined) {
      const region = collapse([
        ...this.before.sourcesOf(rulesB, family),
        ...this.after.sourcesOf(rulesA, family),
        ...this.before.loginSourcesOf(accountsB, family),
        ...this.after.loginSourcesOf(accountsA, family),
      ]);
      const limit = this.tuning.elementLimit;
      // Edited rules and accounts with no sources in this family change nothing here.
      if (region.length === 0) found = SAME;
      else found = this.before.elementCount(family, region) > limit || this.after.elementCount(family, region) > limit ? WHOLE : { kind: "region", region };
      this.regions.set(key, found);
    }
    return found;
  }

  /** The cell's two candidate lists compared directly (when the rule sequences are too far apart): the rules that differ. */
  private listEdits(b: CellSide, a: CellSide, family: Family): [number[], number[]] {
    const cb = this.before.candidatesOf(b);
    const ca = this.after.candidatesOf(a);
    const rb = this.before.listIds(cb, family);
    const ra = this.after.listIds(ca, family);
    if (sameList(rb, ra)) return [[], []];
    // The fewest rules whose removal makes the lists equal; every rule between the common ends when that search gives up.
    const { head, midB, midA } = commonEnds(rb, ra);
    const edits = listEdits(midB, midA, this.tuning.editLimit) ?? { a: Array.from(midB, (_, i) => i), b: Array.from(midA, (_, i) => i) };
    return [edits.a.map((i) => cb.rules[head + i]), edits.b.map((i) => ca.rules[head + i])];
  }
}

/** The parts of two lists between their longest common beginning and end. */
function commonEnds(a: Int32Array, b: Int32Array): { head: number; midB: Int32Array; midA: Int32Array } {
  let head = 0;
  while (head < a.length && head < b.length && a[head] === b[head]) head++;
  let tail = 0;
  while (tail < a.length - head && tail < b.length - head && a[a.length - 1 - tail] === b[b.length - 1 - tail]) tail++;
  return { head, midB: a.subarray(head, a.length - tail), midA: b.subarray(head, b.length - tail) };
}

/** Address object and group names defined differently in the two documents, directly or through a member. */
function changedNames(before: DeviceModel, after: DeviceModel): Set<string> {
  const sameText = (x: readonly string[], y: readonly string[]): boolean => x.length === y.length && x.every((t, i) => t === y[i]);
  const changed = new Set<string>();
  // Objects and groups share one name space, so a name is looked up in both kinds.
  const objects = new Map(after.addresses.map((o) => [o.name, o.entries]));
  const groups = new Map(after.addressGroups.map((g) => [g.name, g.members]));
  for (const o of before.addresses) {
    const other = objects.get(o.name);
    if (other === undefined || !sameText(o.entries, other)) changed.add(o.name);
  }
  for (const g of before.addressGroups) {
    const other = groups.get(g.name);
    if (other === undefined || !sameText(g.members, other)) changed.add(g.name);
  }
  const names = new Set([...before.addresses.map((o) => o.name), ...before.addressGroups.map((g) => g.name)]);
  for (const name of [...objects.keys(), ...groups.keys()]) if (!names.has(name)) changed.add(name);
  // A group changes with any member: repeat until no group is added (nesting depth is small).
  for (let grew = changed.size > 0; grew; ) {
    grew = false;
    for (const list of [before.addressGroups, after.addressGroups]) {
      for (const g of list) {
        if (changed.has(g.name) || !g.members.some((m) => changed.has(m))) continue;
        changed.add(g.name);
        grew = true;
      }
    }
  }
  return changed;
}

function sameList(a: Int32Array, b: Int32Array): boolean {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return false;
  return true;
}

const SAME: CellComparison = { kind: "same" };
const WHOLE: CellComparison = { kind: "whole" };

/** Sources that get a login (with a second factor or a password alone) in any slice of a region view. */
export function loginPieces(view: RegionView): Ranges {
  const pairs: [bigint, bigint][] = [];
  const distinct = [...new Set(view.bySlice)];
  const count = view.pieces.length / 2;
  for (let n = 0; n < count; n++) {
    if (distinct.some((values) => values[n] === LOGIN_MFA || values[n] === LOGIN_PASSWORD)) pairs.push([view.pieces[2 * n], view.pieces[2 * n + 1]]);
  }
  return collapse(pairs);
}
