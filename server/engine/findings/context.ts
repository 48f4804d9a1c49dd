// What the checks share, computed once per compiled model and only when a check asks: the
// non-private exposure per interface × service, the operator networks, the rules that are
// ever the first match, the sources with a login path — and the witness probes.
import { FAMILY, formatAddress, parseAddress, parseEntry, rangeToCidrs } from "../addresses.ts";
import type { Family } from "../addresses.ts";
import { EMPTY_SET, contains, intersect, rangesOf, setFromRanges, subtract, unionSets } from "../address-sets.ts";
import type { AddressSet, Ranges } from "../address-sets.ts";
import { arrivals, firstMatchRules, loginReachable } from "../analysis.ts";
import { cellPartitions, censusOf, cellsOf, ownersOf } from "../cells.ts";
import type { Arrival } from "../analysis.ts";
import type { Census } from "../cells.ts";
import type { CompiledModel } from "../compile.ts";
import { runValueAt } from "../domain.ts";
import type { Runs } from "../domain.ts";
import { traceProbe } from "../trace.ts";
import { OUTCOMES, SILENT, isOutcome } from "../vocabulary.ts";
import type { Outcome } from "../vocabulary.ts";
import { instantInSlice } from "../week-times.ts";
import type { Finding, Witness, WitnessProbe } from "./types.ts";

/**
 * Space that is not "non-private": RFC 1918, RFC 6598, loopback, link-local, multicast,
 * "this network" and reserved IPv4 space; for IPv6 everything outside global unicast
 * 2000::/3 (RFC 4291: unique local fc00::/7, link-local, multicast, loopback, unspecified
 * and IETF-reserved space). Documentation ranges count as global.
 */
export const NON_GLOBAL: AddressSet = setFromRanges(
  [
    "0.0.0.0/8", // RFC 1122 §3.2.1.3
    "10.0.0.0/8", // RFC 1918
    "100.64.0.0/10", // RFC 6598
    "127.0.0.0/8", // RFC 1122 loopback
    "169.254.0.0/16", // RFC 3927
    "172.16.0.0/12", // RFC 1918
    "192.168.0.0/16", // RFC 1918
    "224.0.0.0/4", // RFC 5771 multicast
    "240.0.0.0/4", // RFC 1112 reserved (incl. 255.255.255.255)
    "::/3", // RFC 4291: outside global unicast
    "4000::/2",
    "8000::/1",
  ].map((t) => parseEntry(t).range),
);

export function nonPrivate(family: Family): Ranges {
  return subtract([0n, FAMILY[family].max], rangesOf(NON_GLOBAL, family), family);
}

/** Every non-private address, both families. */
export const NON_PRIVATE: AddressSet = { v4: nonPrivate(4), v6: nonPrivate(6) };

/** Which outcomes non-private sources get on one interface × catalogue service, and who gets each. */
export interface ServiceExposure {
  readonly outcomes: ReadonlySet<number>;
  /** Per outcome rank, the non-private sources that get it at some time, to some address. */
  readonly hits: readonly AddressSet[];
}

/**
 * Witness sources, in order of preference: the documentation addresses that stand for "the
 * internet" in examples (RFC 5737, RFC 3849), so a witness reads like the trade's examples;
 * otherwise the first address of the set.
 */
const PREFERRED_SOURCES: ReadonlyArray<{ family: Family; value: bigint }> = ["203.0.113.50", "198.51.100.50", "192.0.2.50", "2001:db8::50"].map((text) => parseAddress(text));

/** The witness source of a set of ranges of one family: a preferred documentation address in it, else its first address. */
export function witnessSource(ranges: Ranges, family: Family): bigint | undefined {
  if (ranges.length === 0) return undefined;
  for (const candidate of PREFERRED_SOURCES) {
    if (candidate.family !== family) continue;
    for (let i = 0; i < ranges.length; i += 2) if (candidate.value >= ranges[i] && candidate.value <= ranges[i + 1]) return candidate.value;
  }
  return ranges[0];
}

/** Every outcome that answers at all (all but silence). */
const ANSWERING = OUTCOMES.map((_, outcome) => outcome).filter((outcome) => outcome !== SILENT);

/** Non-private exposure from the distinct outcome runs seen on one interface × service, per family. */
function exposureOf(engine: CompiledModel, lists: { readonly 4: readonly Runs[]; readonly 6: readonly Runs[] }): ServiceExposure | undefined {
  const outcomes = new Set<number>();
  const hits: AddressSet[] = OUTCOMES.map(() => EMPTY_SET);
  for (const family of [4, 6] as const) {
    const runs = lists[family];
    if (runs.length === 0) continue;
    const global = rangesOf(NON_PRIVATE, family);
    engine.domains[family].rangesWhereEach(runs, ANSWERING).forEach((ranges, i) => {
      const hit = intersect(ranges, global);
      if (hit.length === 0) return;
      const outcome = ANSWERING[i];
      outcomes.add(outcome);
      hits[outcome] = family === 4 ? { v4: hit, v6: hits[outcome].v6 } : { v4: hits[outcome].v4, v6: hit };
    });
  }
  return outcomes.size === 0 ? undefined : { outcomes, hits };
}

/** Where a rule is first the first match: the cell (index in cell order) and slice, and the first element it takes there. */
interface DecidingPlace {
  readonly cell: number;
  readonly iface: number;
  readonly to: number;
  readonly cls: number;
  readonly slice: number;
  readonly family: Family;
  readonly element: number;
}

/**
 * Where each witness probe made here falls: its cell (interface, destination, class) and its
 * source. Cells keep their indices along a chain of rule edits (incrementalBasis), where
 * findings pass from model to model.
 */
const probePlaces = new WeakMap<WitnessProbe, { readonly iface: number; readonly to: number; readonly cls: number; readonly source: { readonly family: Family; readonly value: bigint } }>();

/** What a witness records of a probe's trace. */
export interface WitnessAnswer {
  readonly outcome: Outcome;
  readonly ruleId: string | null;
}

export class FindingContext {
  /** Per interface × catalogue service asked about: its exposure, null when nothing answers. */
  #exposure = new Map<string, ServiceExposure | null>();
  /** Per interface × service asked about, the distinct outcome runs the exposure was computed from (a later context re-uses equal ones). */
  #exposureInputs = new Map<string, readonly Runs[]>();
  #operators: AddressSet | undefined;
  #firstMatch: Set<number> | undefined;
  #loginReachable: AddressSet | undefined;
  #arrivals: Arrival[] | undefined;
  #destinationsByInterface: readonly (readonly number[])[] | undefined;
  /** Per slot, the first place (in cell order) where the rule is the first match: every rule's once #decidingComplete, else those asked for so far. */
  #deciding = new Map<number, DecidingPlace | undefined>();
  #decidingComplete = false;

  #basis: FindingContext | undefined;

  /** `basis`: the context of the model this one was compiled on, whose results it may re-use until `releaseBasis`. */
  constructor(
    readonly engine: CompiledModel,
    basis?: FindingContext,
  ) {
    this.#basis = basis;
  }

  /** Per code, per rule id: the rule findings made here, for a context compiled on this one to re-use. */
  #ruleFindings = new Map<string, Map<string, Finding>>();

  /**
   * A finding about one rule whose words follow from the rule's own fields and the answer to
   * its ruleMatchWitness probe: the basis's own when every first-match decision about the
   * rule is unchanged (CompiledModel.ruleUntouched) or that probe is answered alike, else
   * built. Call it only after the check has walked the partitions (e.g. through firstMatchRules).
   */
  ruleFinding(code: string, position: number, build: () => Finding): Finding {
    const id = this.engine.rules[position].id;
    const basis = this.#basis;
    const previous = basis === undefined ? undefined : basis.#ruleFindings.get(code)?.get(id);
    const finding = previous !== undefined && (this.#decisionsKept(position) || this.#witnessKept(position, previous)) ? previous : build();
    let byId = this.#ruleFindings.get(code);
    if (byId === undefined) this.#ruleFindings.set(code, (byId = new Map()));
    byId.set(id, finding);
    return finding;
  }

  /**
   * A redundant rule's finding (its witness: the first place it decides): the basis's own when
   * the edit left the rule alone and that place is the basis's, in a cell the edit did not
   * change — the probe follows from the place and the rule's own conditions, and its trace
   * from that cell, as in the basis. Else built.
   */
  redundantFinding(position: number, build: () => Finding): Finding {
    const id = this.engine.rules[position].id;
    const basis = this.#basis;
    const previous = basis === undefined ? undefined : basis.#ruleFindings.get("redundant-rule")?.get(id);
    const finding = previous !== undefined && this.#decidingPlaceKept(position) ? previous : build();
    let byId = this.#ruleFindings.get("redundant-rule");
    if (byId === undefined) this.#ruleFindings.set("redundant-rule", (byId = new Map()));
    byId.set(id, finding);
    return finding;
  }

  #decidingPlaceKept(position: number): boolean {
    const engine = this.engine;
    const basis = this.#basis;
    if (basis === undefined || engine.incrementalBasis === undefined || engine.ruleChangedByEdit(position)) return false;
    const slot = engine.slotOf(position);
    const place = this.#decidingPlace(slot);
    const edit = censusOf(engine).edit;
    return place !== undefined && edit !== null && basis.#deciding.get(slot) === place && edit.changed[place.cell] === 0;
  }

  /**
   * Whether a rule finding of the basis still holds word for word: the edit left the rule
   * alone, and its witness probe — which depends on the rule's own conditions only — is
   * answered as in the basis (outcome, deciding rule): at once when its cell is unchanged,
   * else by answering it here (85 shadowed rules after the benchmark's removal, their
   * witnesses in changed cells, all answered alike). The words follow from the rule and
   * that answer.
   */
  #witnessKept(position: number, previous: Finding): boolean {
    const engine = this.engine;
    const witness = previous.witness;
    if (engine.incrementalBasis === undefined || witness === undefined || engine.ruleChangedByEdit(position)) return false;
    const place = probePlaces.get(witness.probe);
    if (place === undefined) return false;
    if (!engine.cellMayDiffer(place.iface, place.to, place.cls)) return true;
    const answer = this.#answerOf(witness.probe);
    return answer !== undefined && answer.outcome === witness.outcome && answer.ruleId === witness.ruleId;
  }

  /** Whether every first-match decision about the rule, and every cell it is a candidate in, is the basis's. */
  #decisionsKept(position: number): boolean {
    const engine = this.engine;
    const edit = (this.#edit ??= engine.incrementalBasis === undefined ? null : censusOf(engine).edit);
    if (edit === null) return engine.ruleUntouched(position);
    return !engine.ruleChangedByEdit(position) && edit.affected[engine.slotOf(position)] === 0;
  }

  /** The census's edit (looked up once: every rule finding asks). */
  #edit: Census["edit"] | undefined;

  #kept = new Map<string, unknown>();

  /**
   * A value a check keeps with the findings of this model, computed once; `previous` is the
   * basis's value under the same key (after an edit), for the check to re-use what the edit
   * left alone.
   */
  kept<T>(key: string, compute: (previous: T | undefined) => T): T {
    if (this.#kept.has(key)) return this.#kept.get(key) as T;
    const basis = this.#basis;
    const value = compute(basis === undefined ? undefined : (basis.#kept.get(key) as T | undefined));
    this.#kept.set(key, value);
    return value;
  }

  /** Drops the link to the basis, so a chain of edits does not keep every earlier context alive. */
  releaseBasis(): void {
    this.#basis = undefined;
  }

  get model() {
    return this.engine.model;
  }

  get arrivals(): readonly Arrival[] {
    this.#arrivals ??= arrivals(this.engine);
    return this.#arrivals;
  }

  /** The union of the operator networks. */
  get operators(): AddressSet {
    this.#operators ??= this.model.operatorNetworks.reduce((acc, name) => unionSets(acc, this.engine.addressSetOf(name)), EMPTY_SET);
    return this.#operators;
  }

  get firstMatchRules(): ReadonlySet<number> {
    this.#firstMatch ??= firstMatchRules(this.engine);
    return this.#firstMatch;
  }

  get loginReachable(): AddressSet {
    this.#loginReachable ??= loginReachable(this.engine);
    return this.#loginReachable;
  }

  /**
   * Non-private exposure of interface × catalogue service, over every arrival and slice;
   * undefined when nothing answers. Computed for the interface × service asked about only:
   * the checks ask where the answer can hold a finding (a listened service of theirs).
   */
  exposure(iface: number, cls: number): ServiceExposure | undefined {
    const key = `${iface}|${cls}`;
    let known = this.#exposure.get(key);
    if (known === undefined) {
      known = this.#exposureOf(iface, cls, key) ?? null;
      this.#exposure.set(key, known);
    }
    return known ?? undefined;
  }

  /** Whether the catalogue service listens on the interface (unlistened, no login or echo reply answers). */
  listens(iface: number, cls: number): boolean {
    const service = this.engine.classes[cls].service;
    return service !== null && this.engine.listening[iface].has(service.name);
  }

  #exposureOf(iface: number, cls: number, key: string): ServiceExposure | undefined {
    const engine = this.engine;
    const basis = this.#basis;
    // After a rule edit, an interface × service none of whose cells changed keeps the basis's exposure (when the basis computed it).
    const incremental = engine.incrementalBasis !== undefined && basis !== undefined;
    if (incremental && this.#serviceUnchanged(iface, cls)) {
      const kept = basis.#exposureInputs.get(key);
      const exposure = basis.#exposure.get(key);
      if (kept !== undefined && exposure !== undefined) {
        this.#exposureInputs.set(key, kept);
        return exposure ?? undefined;
      }
    }
    // Many cells see the same outcome runs: each distinct list of candidate rules, and each distinct runs object, counts once.
    const lists = { 4: [] as Runs[], 6: [] as Runs[] };
    const seen = new Set<Runs>();
    const candidateLists = new Set<number>();
    for (const to of this.#destinations[iface]) {
      if (!incremental) {
        const list = engine.candidateRules(iface, to, cls).id * 2 + (engine.addresses[to].family === 4 ? 0 : 1);
        if (candidateLists.has(list)) continue;
        candidateLists.add(list);
      }
      for (const partition of engine.weekOutcomes(iface, to, cls)) {
        if (seen.has(partition.outcome)) continue;
        seen.add(partition.outcome);
        lists[partition.family].push(partition.outcome);
      }
    }
    const all = [...lists[4], ...lists[6]];
    this.#exposureInputs.set(key, all);
    const before = basis === undefined ? undefined : basis.#exposureInputs.get(key);
    const same = basis !== undefined && before !== undefined && before.length === all.length && before.every((runs, i) => runs === all[i]);
    const kept = same ? basis.#exposure.get(key) : undefined;
    return kept !== undefined ? (kept ?? undefined) : exposureOf(engine, lists);
  }

  /** Per interface, the device addresses a probe arriving there may be sent to. */
  get #destinations(): readonly (readonly number[])[] {
    if (this.#destinationsByInterface === undefined) {
      const destinations: number[][] = this.engine.interfaceAddresses.map(() => []);
      for (const { iface, to } of this.arrivals) destinations[iface].push(to);
      this.#destinationsByInterface = destinations;
    }
    return this.#destinationsByInterface;
  }

  /** Whether the model was compiled on a basis after a rule edit that changed none of the interface × service's cells. */
  #serviceUnchanged(iface: number, cls: number): boolean {
    const engine = this.engine;
    if (engine.incrementalBasis === undefined) return false;
    // Asked by the exposure and again by each exposure check: each interface × service is looked at once.
    const known = (this.#unchangedServices ??= new Int8Array(engine.interfaceAddresses.length * engine.catalogue.length));
    const key = iface * engine.catalogue.length + cls;
    if (known[key] === 0) known[key] = this.#destinations[iface].every((to) => !engine.cellMayDiffer(iface, to, cls)) ? 1 : -1;
    return known[key] === 1;
  }

  /** Per interface × catalogue service: 0 not looked at, 1 none of its cells changed, -1 some did. */
  #unchangedServices: Int8Array | undefined;

  #serviceFindings = new Map<string, readonly Finding[]>();

  /**
   * A check's findings about one interface × catalogue service: the basis's own when an edit
   * changed none of its cells (its exposure, witness and words are then the basis's), else built.
   */
  serviceFindings(code: string, iface: number, cls: number, build: () => readonly Finding[]): readonly Finding[] {
    const key = `${code}|${iface}|${cls}`;
    const basis = this.#basis;
    const previous = basis === undefined ? undefined : basis.#serviceFindings.get(key);
    const findings = previous !== undefined && this.#serviceUnchanged(iface, cls) ? previous : build();
    this.#serviceFindings.set(key, findings);
    return findings;
  }

  // ---- witnesses ----

  /** The probe text for arrival, class, source and slice. */
  probe(iface: number, to: number, cls: number, family: Family, source: bigint, slice: number, serviceText?: string): WitnessProbe {
    const engine = this.engine;
    const service = serviceText ?? engine.classes[cls].service?.name ?? "";
    const probe: WitnessProbe = {
      from: formatAddress(family, source),
      interface: this.model.interfaces[iface].name,
      service,
      to: engine.addresses[to].text,
      at: instantInSlice(engine, slice),
    };
    probePlaces.set(probe, { iface, to, cls, source: { family, value: source } });
    return probe;
  }

  /**
   * The witness for a probe: `trace` replays it, and its outcome and deciding rule are what the
   * witness records. `shows` may read them (which rule decided, which outcome). A probe made
   * here is answered from its cell's partitions at its slice and source — what trace reads
   * (tests/engine/witnesses.test.ts replays every witness through trace) — without parsing
   * its text again.
   */
  witnessOf(probe: WitnessProbe | undefined, shows: string | ((answer: WitnessAnswer) => string), proof?: string): Witness | undefined {
    if (probe === undefined) return undefined;
    const answer = this.#answerOf(probe);
    if (answer === undefined) return undefined;
    return { probe, outcome: answer.outcome, ruleId: answer.ruleId, shows: typeof shows === "string" ? shows : shows(answer), ...(proof ? { proof } : {}) };
  }

  /** #answerOf's slices by the probe's instant text. */
  #sliceOfInstant = new Map<string, number>();

  #answerOf(probe: WitnessProbe): WitnessAnswer | undefined {
    const place = probePlaces.get(probe);
    const engine = this.engine;
    if (place === undefined) {
      const trace = traceProbe(engine, probe);
      return isOutcome(trace.outcome) ? { outcome: trace.outcome, ruleId: trace.ruleId } : undefined;
    }
    const { iface, to, cls, source } = place;
    // The slice the probe's instant falls in, as trace finds it (a slice the clock skips has its instant elsewhere).
    // Witnesses share the few instants instantInSlice gives: each is read once.
    let slice = this.#sliceOfInstant.get(probe.at);
    if (slice === undefined) this.#sliceOfInstant.set(probe.at, (slice = engine.sliceAt(Date.parse(probe.at))));
    const owner = runValueAt(engine.rulePartitionAt(iface, to, cls, slice).owner, engine.elementOf(source));
    const outcome = engine.lookup(engine.outcomeOf(iface, to, cls, slice), source.value);
    return { outcome: OUTCOMES[outcome], ruleId: owner < 0 ? null : engine.rules[engine.positionOfSlot(owner)].id };
  }

  /** The service text for a class a rule covers: the catalogue name, or the rule's own port for "other". */
  #serviceTextFor(position: number, cls: number): string | undefined {
    const engine = this.engine;
    const rule = engine.rules[position];
    const c = engine.classes[cls];
    if (c.service !== null) return rule.anyService || rule.serviceKeys.has(c.key) ? c.service.name : undefined;
    const own = [...rule.serviceKeys].find((key) => engine.classOfKey(key) === cls);
    if (own !== undefined || !rule.anyService) return own;
    // "any" covers every port: name one that no service of the model uses.
    for (let port = 1; port < 65_536; port++) if (engine.classOfKey(`tcp/${port}`) === cls) return `tcp/${port}`;
    return undefined;
  }

  /**
   * A probe the rule's own conditions match (interface, source, destination, service; its
   * schedule's first active slice, or the first slice when it has none): the instance for the
   * rule findings. Undefined when the rule can match no probe at all.
   */
  ruleMatchWitness(position: number): WitnessProbe | undefined {
    const engine = this.engine;
    const rule = engine.rules[position];
    const slices = engine.week.slices;
    const activeSlice = Math.max(0, rule.schedule < 0 ? 0 : slices.findIndex((slice) => slice.active[rule.schedule]));
    const held = this.#destinationHolds(rule.destinations);
    // The arrivals in their order (interface by interface), only the rule's interface's when it names one.
    const destinations = this.#destinations;
    const last = rule.iface === -1 ? destinations.length - 1 : rule.iface;
    for (let iface = rule.iface === -1 ? 0 : rule.iface; iface <= last; iface++) {
      for (const to of destinations[iface]) {
        if (held[to] === 0) continue;
        const target = engine.addresses[to];
        const source = engine.firstSourceOf(position, target.family);
        if (source === undefined) continue;
        for (const c of engine.classes) {
          const service = this.#serviceTextFor(position, c.index);
          if (service === undefined) continue;
          return this.probe(iface, to, c.index, target.family, source, activeSlice, service);
        }
      }
    }
    return undefined;
  }

  /** Per destination set (rules share them): 1 for each device address it holds. */
  #holds = new WeakMap<AddressSet, Uint8Array>();

  #destinationHolds(destinations: AddressSet): Uint8Array {
    let held = this.#holds.get(destinations);
    if (held === undefined) {
      const addresses = this.engine.addresses;
      held = new Uint8Array(addresses.length);
      for (let to = 0; to < addresses.length; to++) if (contains(rangesOf(destinations, addresses[to].family), addresses[to].value)) held[to] = 1;
      this.#holds.set(destinations, held);
    }
    return held;
  }

  /** A probe for which the rule is the first match (where it decides). Undefined when it never is. */
  ruleDecidesWitness(position: number): WitnessProbe | undefined {
    const found = this.#decidingPlace(this.engine.slotOf(position));
    if (found === undefined) return undefined;
    const service = this.#serviceTextFor(position, found.cls);
    if (service === undefined) return undefined;
    const source = this.engine.domains[found.family].bounds[found.element];
    return this.probe(found.iface, found.to, found.cls, found.family, source, found.slice, service);
  }

  /**
   * The first place the rule (by slot) decides. After a rule edit the cells the edit left
   * alone are the basis's, so when the basis's first place is in such a cell (or the rule
   * decided nowhere) only the changed cells before it need a look.
   */
  #decidingPlace(slot: number): DecidingPlace | undefined {
    if (this.#decidingComplete || this.#deciding.has(slot)) return this.#deciding.get(slot);
    const engine = this.engine;
    const edit = engine.incrementalBasis === undefined ? null : censusOf(engine).edit;
    const basis = this.#basis;
    if (edit !== null && basis !== undefined && (basis.#decidingComplete || basis.#deciding.has(slot))) {
      const kept = basis.#deciding.get(slot);
      const first = this.#firstPlacesInChangedCells(edit.cells).get(slot);
      const before = first !== undefined && (kept === undefined || first.cell < kept.cell) ? first : undefined;
      // The basis's place in a changed cell may be gone: the first place is then at or after that cell, in any cell.
      const place = before ?? (kept === undefined || edit.changed[kept.cell] === 0 ? kept : this.#firstPlaceFrom(slot, kept.cell));
      this.#deciding.set(slot, place);
      return place;
    }
    this.#deciding = this.#firstDecisions();
    this.#decidingComplete = true;
    return this.#deciding.get(slot);
  }

  #changedFirstPlaces: Map<number, DecidingPlace> | undefined;

  /** Per slot, the first place the rule decides among the changed cells (in cell order): one walk for every rule asked about. */
  #firstPlacesInChangedCells(changed: Int32Array): Map<number, DecidingPlace> {
    if (this.#changedFirstPlaces !== undefined) return this.#changedFirstPlaces;
    const engine = this.engine;
    const cells = cellsOf(engine);
    const out = new Map<number, DecidingPlace>();
    const seen = new Set<number>();
    for (const cell of changed) {
      const { iface, to, cls, partitions } = cellPartitions(engine, cells, cell);
      for (let slice = 0; slice < partitions.length; slice++) {
        const rules = partitions[slice];
        // A partition seen in an earlier cell or slice gave its rules their first place there.
        if (seen.has(rules.id)) continue;
        seen.add(rules.id);
        const { slots, firstElements } = ownersOf(rules);
        for (let k = 0; k < slots.length; k++) {
          const slot = slots[k];
          if (out.has(slot)) continue;
          out.set(slot, { cell, iface, to, cls, slice, family: rules.family, element: firstElements[k] });
        }
      }
    }
    this.#changedFirstPlaces = out;
    return out;
  }

  /** The first place the rule decides in cell order from `start` on (every cell, changed or not). */
  #firstPlaceFrom(slot: number, start: number): DecidingPlace | undefined {
    const engine = this.engine;
    if (censusOf(engine).owning[slot] === 0) return undefined;
    const cells = cellsOf(engine);
    for (let cell = start; cell < cells.count; cell++) {
      const { iface, to, cls, partitions } = cellPartitions(engine, cells, cell);
      for (let slice = 0; slice < partitions.length; slice++) {
        const rules = partitions[slice];
        const { slots, firstElements } = ownersOf(rules);
        const k = slots.indexOf(slot);
        if (k >= 0) return { cell, iface, to, cls, slice, family: rules.family, element: firstElements[k] };
      }
    }
    return undefined;
  }

  /** For every rule that is ever the first match, the first place it is: one walk over the cells, each distinct partition once. */
  #firstDecisions(): Map<number, DecidingPlace | undefined> {
    const engine = this.engine;
    const cells = cellsOf(engine);
    const out = new Map<number, DecidingPlace | undefined>();
    const seen = new Set<number>();
    // Slots already given their first place: most runs are of rules already placed, skipped at once.
    const placed = new Uint8Array(engine.slotCount);
    let left = censusOf(engine).owning.reduce((n, count) => (count > 0 ? n + 1 : n), 0);
    // Compiled afresh, cells with the same candidate list (and family) share their partitions: only the first such cell is looked at.
    const lists = engine.incrementalBasis === undefined ? new Set<number>() : null;
    for (let cell = 0; cell < cells.count && left > 0; cell++) {
      if (lists !== null) {
        const list = engine.candidateRules(cells.iface[cell], cells.to[cell], cells.cls[cell]).id * 2 + (engine.addresses[cells.to[cell]].family === 4 ? 0 : 1);
        if (lists.has(list)) continue;
        lists.add(list);
      }
      const { iface, to, cls, partitions } = cellPartitions(engine, cells, cell);
      for (let slice = 0; slice < partitions.length; slice++) {
        const rules = partitions[slice];
        if (seen.has(rules.id)) continue;
        seen.add(rules.id);
        // Each owner's first run in the partition is its first place there.
        const { slots, firstElements } = ownersOf(rules);
        for (let k = 0; k < slots.length; k++) {
          const slot = slots[k];
          if (placed[slot] === 1) continue;
          placed[slot] = 1;
          left--;
          out.set(slot, { cell, iface, to, cls, slice, family: rules.family, element: firstElements[k] });
        }
      }
    }
    return out;
  }

  /** A probe on the interface from `sources` that no enabled rule matches, so the device default decides. */
  defaultActionWitness(iface: number, sources: AddressSet): WitnessProbe | undefined {
    const engine = this.engine;
    // Of the first such probe per destination and service, the one with the most exposed outcome shows best what the default lets through.
    let best: { probe: WitnessProbe; rank: number } | undefined;
    for (const { iface: arrival, to } of this.arrivals) {
      if (arrival !== iface) continue;
      const family = engine.addresses[to].family;
      for (const c of engine.classes) {
        if (c.service === null) continue;
        for (let slice = 0; slice < engine.week.slices.length; slice++) {
          const rules = engine.rulePartitionAt(iface, to, c.index, slice);
          const unmatched = witnessSource(intersect(engine.domains[family].rangesWhere(rules.owner, -1), rangesOf(sources, family)), family);
          if (unmatched === undefined) continue;
          const rank = engine.lookup(engine.outcomeOf(iface, to, c.index, slice), unmatched);
          if (best === undefined || rank > best.rank) best = { probe: this.probe(iface, to, c.index, family, unmatched, slice), rank };
          break;
        }
        if (best !== undefined && best.rank === OUTCOMES.length - 1) return best.probe;
      }
    }
    return best?.probe;
  }

  /** A probe from the set to a login service (the first arrival of a family it has); undefined when no arrival fits. */
  loginProbeFrom(set: AddressSet): WitnessProbe | undefined {
    const engine = this.engine;
    const login = engine.classes.find((c) => c.kind === "login" && c.service !== null);
    if (login === undefined) return undefined;
    for (const { iface, to } of this.arrivals) {
      const family = engine.addresses[to].family;
      const ranges = rangesOf(set, family);
      if (ranges.length > 0) return this.probe(iface, to, login.index, family, ranges[0], 0);
    }
    return undefined;
  }

  /**
   * A probe from a source in `sources` on interface × catalogue service that gets `outcome`:
   * the first such source, the first arrival and slice where it does. Undefined when none.
   */
  exposureWitness(iface: number, cls: number, outcome: number, sources: AddressSet): WitnessProbe | undefined {
    const engine = this.engine;
    for (const family of [4, 6] as const) {
      const source = witnessSource(rangesOf(sources, family), family);
      if (source === undefined) continue;
      for (const { iface: arrival, to } of this.arrivals) {
        if (arrival !== iface || engine.addresses[to].family !== family) continue;
        for (let slice = 0; slice < engine.week.slices.length; slice++) {
          if (engine.lookup(engine.outcomeOf(iface, to, cls, slice), source) === outcome) {
            return this.probe(iface, to, cls, family, source, slice);
          }
        }
      }
    }
    return undefined;
  }
}

/** The first `count` CIDRs of a set (IPv4 first), without rendering the rest. */
export function firstCidrs(set: AddressSet, count: number): string[] {
  const out: string[] = [];
  for (const family of [4, 6] as const) {
    const ranges = rangesOf(set, family);
    for (let i = 0; i < ranges.length && out.length < count; i += 2) out.push(...rangeToCidrs(family, ranges[i], ranges[i + 1]).slice(0, count - out.length));
  }
  return out;
}
