// Compiling a validated model: names resolved to address sets and service keys, the week
// split into slices, each family's source space cut into elements, and first-match
// partitions computed per (interface, destination, service, slice) on demand and shared.

import { formatAddress, parseAddress, parseEntry } from "./addresses.ts";
import type { Address, Family } from "./addresses.ts";
import { ANY_SET, EMPTY_SET, contains, rangesOf, setFromRanges, unionSets } from "./address-sets.ts";
import type { AddressSet } from "./address-sets.ts";
import { Domain, MIXED_WORD, mapRuns, patchedRuns, pieceStartBits, runValueAt, runsFromPieces, zipRuns } from "./domain.ts";
import type { Runs, SparseBits } from "./domain.ts";
import { looksLikeAddressEntry, parsedEntries, serviceKey } from "./model.ts";
import type { DeviceModel } from "./model.ts";
import {
  ALL_WEEK_SCHEDULE,
  ANSWERED,
  ANY_INTERFACE,
  ANY_SERVICE,
  BUILTIN_SERVICES,
  LOGIN_DENIED,
  LOGIN_MFA,
  LOGIN_PASSWORD,
  REFUSED,
  SILENT,
} from "./vocabulary.ts";
import type { CatalogueService, ServiceKind } from "./vocabulary.ts";
import { LocalClock, parseInstant, planWeek } from "./schedules.ts";
import type { WeekPlan } from "./schedules.ts";

/** An input error in a probe (not an outcome): unknown names, malformed addresses, mixed families. */
export class ProbeError extends Error {
  override name = "ProbeError";
}

export interface CompiledRule {
  /** Position in inboundRules (rule order). */
  readonly position: number;
  readonly id: string;
  readonly allow: boolean;
  readonly enabled: boolean;
  /** Interface index, or -1 for any. */
  readonly iface: number;
  readonly sources: AddressSet;
  readonly destinations: AddressSet;
  readonly anyService: boolean;
  readonly serviceKeys: ReadonlySet<string>;
  /** Schedule index, or -1 for always. */
  readonly schedule: number;
}

/** A compiled rule; its sources as address ranges are made only when read (witness text, the diff): analysis works on the rule's bitsets. */
class RuleOfModel implements CompiledRule {
  #sources: AddressSet | undefined;
  readonly anyService: boolean;
  readonly serviceKeys: ReadonlySet<string>;

  constructor(
    readonly position: number,
    readonly id: string,
    readonly allow: boolean,
    readonly enabled: boolean,
    readonly iface: number,
    private readonly sourceNames: readonly string[],
    private readonly setOf: (names: readonly string[]) => AddressSet,
    readonly destinations: AddressSet,
    keys: ReadonlySet<string> | null,
    readonly schedule: number,
  ) {
    this.anyService = keys === null;
    this.serviceKeys = keys ?? NO_KEYS;
  }

  get sources(): AddressSet {
    this.#sources ??= this.setOf(this.sourceNames);
    return this.#sources;
  }
}

const NO_KEYS: ReadonlySet<string> = new Set();

export interface DeviceAddress {
  readonly index: number;
  readonly family: Family;
  readonly value: bigint;
  /** RFC 5952 text for IPv6. */
  readonly text: string;
  readonly iface: number;
}

export interface CompiledAccount {
  readonly index: number;
  readonly name: string;
  readonly enabled: boolean;
  readonly secondFactor: boolean;
  /** Catalogue service names it may use; null = all. */
  readonly services: ReadonlySet<string> | null;
  readonly loginSources: AddressSet;
}

/** A service class: one catalogue service, or every port with no catalogue service ("other"). */
export interface ServiceClass {
  readonly index: number;
  readonly key: string;
  readonly service: CatalogueService | null;
  readonly kind: ServiceKind;
  readonly protocol: "tcp" | "udp" | "icmp";
}

/** Enabled rules that can match one (interface, destination, service class) at some time. */
export interface Candidates {
  /** Shared by every combination with the same list. */
  readonly id: number;
  readonly rules: Int32Array;
  readonly scheduled: boolean;
  /** The list's rules limited to a schedule, in list order (so a slice need not walk the whole list). */
  readonly scheduledRules: Int32Array;
}

/** The first-match partition of one family's sources for one list of active rules. */
export interface RulePartition {
  readonly id: number;
  readonly family: Family;
  /** Slots (CompiledModel.positionOfSlot) of the active rules it was computed from, in order. */
  readonly active: Int32Array;
  /** Run values: slot of the first matching rule, or -1 where none matched. */
  readonly owner: Runs;
}

/** The outcome partition of one (interface, destination, service class, slice) combination. */
export interface OutcomePartition {
  readonly family: Family;
  /** Run values: outcome index. */
  readonly outcome: Runs;
}

/** Everything known about one combination, including which rule decides where. */
export interface EntryPartition extends OutcomePartition {
  readonly rules: RulePartition;
}

export interface ResolvedProbe {
  readonly from: Address;
  readonly iface: number;
  readonly serviceClass: ServiceClass;
  /** The service as the probe named it, or the catalogue name. */
  readonly serviceLabel: string;
  /** Device address index, or -1 when the interface has no address of the family (arrival fails). */
  readonly to: number;
  readonly atMs: number;
  readonly account: number;
}

export interface ProbeInput {
  readonly from: string;
  readonly interface: string;
  readonly service: string;
  readonly to?: string;
  /** ISO date-time text, epoch milliseconds or a Date; default now. */
  readonly at?: string | number | Date;
  readonly account?: string;
}

const PORT_SERVICE = /^(tcp|udp)\/([0-9]{1,5})$/;

/** Partition ids are unique across compiled models, so a model compiled on a basis can share the basis's partitions and caches keyed by them. */
let nextPartitionId = 0;

/** A hash of a partition's content: its family and its rules' tokens in order (FNV-1a over the numbers). */
function contentHash(family: Family, tokens: ArrayLike<number>): number {
  let hash = 0x811c9dc5 ^ family;
  for (let i = 0; i < tokens.length; i++) hash = Math.imul(hash ^ tokens[i], 0x01000193);
  return hash ^ tokens.length;
}

/** Options of compileModel. */
export interface CompileOptions {
  /**
   * The compiled previous version of the same device. Whatever an edit cannot change is
   * taken from it instead of recomputed: address sets, the source elements, rule bitsets,
   * first-match partitions of rule lists whose rules kept their sources, and the outcome
   * runs of those partitions when the rules kept their actions.
   */
  readonly basis?: CompiledModel;
}

export class CompiledModel {
  readonly clock: LocalClock;
  readonly week: WeekPlan;
  readonly catalogue: readonly CatalogueService[];
  readonly classes: readonly ServiceClass[];
  readonly rules: readonly CompiledRule[];
  readonly accounts: readonly CompiledAccount[];
  readonly addresses: readonly DeviceAddress[];
  /** Per interface: its device address indices in document order. */
  readonly interfaceAddresses: readonly (readonly number[])[];
  readonly listening: readonly ReadonlySet<string>[];
  readonly domains: Readonly<Record<Family, Domain>>;
  readonly defaultAllow: boolean;
  readonly unlistenedReset: boolean;

  private readonly interfaceIndex = new Map<string, number>();
  private readonly accountIndex = new Map<string, number>();
  private readonly classByKey = new Map<string, ServiceClass>();
  private readonly addressIndex = new Map<string, number>();
  /** Address sets by name; the same book gives the same sets, so a model and its basis share this. */
  private readonly addressSets: Map<string, AddressSet>;
  /** Destination sets by their names (one key per list), shared with a basis of the same address book. */
  private readonly destinationSets: Map<string, AddressSet>;
  /** Service keys by the services' names (one key per list; null = any), shared with a basis of the same services. */
  private readonly serviceKeySets: Map<string, Set<string> | null>;
  private objectsByName: Map<string, DeviceModel["addresses"][number]> | null = null;
  private groupsByName: Map<string, DeviceModel["addressGroups"][number]> | null = null;
  private readonly ruleBits: readonly (readonly [SparseBits, SparseBits])[];
  /** Per rule: its source names as one key (rules with equal keys have equal sources). */
  private readonly sourceKeys: readonly string[];
  /** everythingButRules of the model, made once: the next version compiled on this one compares with it. */
  private readonly othersText: string;
  /** Bitsets per source key, shared by rules with the same sources (and with a basis of the same elements). */
  private readonly bitsBySources: Map<string, readonly [SparseBits, SparseBits]>;
  /** Bitsets per address name and family ("4|name"), shared like bitsBySources. */
  private readonly bitsByName: Map<string, SparseBits>;
  /** The address objects (and built-in names) the elements are cut from: those the rules' sources name (or more, when lent by a basis). */
  private readonly sourceObjects: ReadonlySet<string>;
  /** The basis whose partitions may be re-used (same elements), or null. Weak, so a chain of edits does not keep every earlier version alive. */
  private readonly basisRef: WeakRef<CompiledModel> | null = null;
  /** Partitions taken from the basis whose outcome runs carry over too (same actions, services, accounts, defaults). */
  private readonly outcomesCarried = new Set<RulePartition>();
  /** Per partition taken from the basis with other actions or updated from one of its partitions (updatedPartition): that basis partition. */
  private readonly updatedFrom = new Map<RulePartition, RulePartition>();
  /** The basis's partitions by a hash of their family and rule tokens. */
  private basisIndex: Map<number, RulePartition[]> | null = null;
  /** partitionsByContent, once built. */
  private contentIndex: Map<number, RulePartition[]> | undefined;
  /**
   * Per position: the rule's slot, the number partitions name it by. A rule keeps its slot in
   * a model compiled on a basis with the same elements while its id and sources stay, so the
   * basis's partitions of kept rules are this model's as they are, whatever moved.
   */
  private readonly ruleSlots: Int32Array;
  /** Per slot: the rule's position, or -1 for a slot of the basis this model has not. */
  private readonly slotPositions: Int32Array;
  /** Slots are below this. */
  readonly slotCount: number;
  /** Positions of rules in a partition that is not the basis's own (same rules, same order, same actions). */
  private readonly touched = new Set<number>();
  /** Whether the model differs from its basis in its inbound rules alone. */
  private readonly onlyRulesChanged: boolean = false;
  /**
   * After an edit of the inbound rules alone: per rule the edit changed (added, removed, any
   * field, or moved), each version's reach as a candidate — the cells where neither version is
   * a candidate have the basis's candidate slots, partitions and outcomes. Null when the model
   * is not compiled on such a basis or the rule order changed beyond one moved rule.
   */
  private readonly changedRules: readonly CandidateReach[] | null = null;
  private readonly changedIds: ReadonlySet<string> | null = null;
  /** The changed rules' reach as this model has them, by id (absent for a removed rule). */
  private readonly changedReach = new Map<string, CandidateReach>();
  private positionsById: Map<string, number> | undefined;

  private touch(active: Int32Array): void {
    // Only ruleUntouched reads it, and only for a model compiled on a basis.
    if (!this.onlyRulesChanged) return;
    for (const slot of active) this.touched.add(this.slotPositions[slot]);
  }

  /**
   * Whether every first-match decision about the rule is the basis's: the model was compiled
   * on a basis that differs only in its inbound rules, the rule is in the basis unchanged, and
   * every partition it is in (of those computed so far: ask after the analysis has walked
   * them) was taken from the basis with the same rules, order and actions. What a finding
   * says about such a rule is what the basis's finding said.
   */
  ruleUntouched(position: number): boolean {
    if (!this.onlyRulesChanged || this.touched.has(position)) return false;
    const id = this.rules[position].id;
    return this.editedRule?.id !== id && this.basisPositions[position] !== undefined;
  }

  /**
   * How this model's rule partitions came about: swept over their whole list, derived from the
   * list with every rule on (some scheduled rules off), updated from the basis after an edit,
   * or taken from the basis; and how many cells (interface × destination × class) took all of
   * theirs from the basis without looking at their rules (no changed rule is a candidate there).
   */
  readonly partitionSources = { swept: 0, derived: 0, updated: 0, reused: 0, inherited: 0 };
  /** Cells (interface, destination, class) already counted in partitionSources.inherited. */
  private cellStates: Uint8Array | undefined;
  /** The one rule an edit changed in a way that changes lists (not only its action), when exactly one did. */
  private readonly editedRule: { id: string; basisPosition: number } | null = null;
  /** Per position: the same rule's position in the basis, or undefined when it is new. */
  private readonly basisPositions: (number | undefined)[] = [];
  private readonly sameCatalogueAndAccounts: boolean = false;
  /** Per family, per account: dense bitset of the elements inside its login sources. */
  private readonly accountBits: Readonly<Record<Family, readonly Int32Array[]>>;
  /** Indexed by (interface, destination, class). */
  private readonly candidates: (Candidates | undefined)[] = [];
  // Candidate lists by content hash; equal lists share one id (compared in full within a bucket).
  private readonly candidateLists = new Map<number, Array<{ id: number; rules: Int32Array }>>();
  private candidateListCount = 0;
  /** candidateRules's lists by the hash of their mask over rule positions (interface × class AND destination). */
  private readonly candidatesByMask = new Map<number, Array<{ readonly mask: Int32Array; readonly candidates: Candidates }>>();
  private maskScratch: Int32Array | undefined;
  private readonly byInterface = new Map<number, number[]>();
  private readonly byInterfaceAndClass: (Int32Array | undefined)[] = [];
  /** Per device address: whether each rule's destinations hold it (one byte per rule position). */
  private destinationColumns: Uint8Array[] | undefined;
  /** The same as bitmasks over positions. */
  private destinationMasks: Int32Array[] | undefined;
  /** Per service class: whether each rule's services match it. */
  private readonly serviceColumns = new Map<number, Uint8Array>();
  private readonly partitions = new Map<string, RulePartition>();
  /** Indexed by (interface, destination, class, slice). */
  /** Per cell (interface, destination, class): its entries by slice, built as asked for. A dense array over every key would be sparse and slow. */
  private readonly entries = new Map<number, (EntryPartition | undefined)[]>();
  /** Rule partitions per (candidate list, family), by slice, so a slice need not rebuild the list's key. */
  private readonly slicePartitions = new Map<number, (RulePartition | undefined)[]>();
  private readonly loginRuns = new Map<string, Runs>();
  /** weekOutcomes per cell (interface, destination, class), as asked for. */
  private readonly weekOutcomesByCell = new Map<number, readonly OutcomePartition[]>();
  /** Outcome runs per (rule partition, class, listening). */
  private readonly outcomeCache = new Map<number, Runs>();
  /** Outcome runs per owner runs object, by (class, listening, family): this model's actions and accounts. */
  private readonly outcomesByOwner = new WeakMap<Runs, Map<number, Runs>>();
  private patchScratch: Uint8Array | undefined;
  /** Per position: the rule's schedule index, or -1 for all week. */
  private ruleSchedules: Int32Array | undefined;
  private readonly scratch: Record<Family, { remaining: Int32Array; owner: Int32Array; wordOwners: Int32Array; pieceStarts: Int32Array }>;

  constructor(
    readonly model: DeviceModel,
    options: CompileOptions = {},
  ) {
    const basis = options.basis !== undefined && sameAddressBook(options.basis.model, model) ? options.basis : undefined;
    this.addressSets = basis !== undefined ? basis.addressSets : new Map();
    // After an edit of rules alone, the rules the edit left alone compile as they did in the basis.
    this.othersText = everythingButRules(model);
    const onlyRulesChanged = basis !== undefined && basis.othersText === this.othersText;
    const edit = basis === undefined ? null : ruleEdit(basis.model, model);
    // The basis's own id → position map (made once per basis, not once per edit compiled on it).
    const basisIndexOf = basis === undefined ? null : basis.positionsOfIds();
    const changedIds = edit === null || edit.changed === null ? null : new Set(edit.changed);
    // Per position, looked up once: the basis's index of the rule with the same id, and of a
    // rule this model compiles exactly as the basis did (-1 when none).
    const basisIndexAt = new Int32Array(model.inboundRules.length).fill(-1);
    const keptAt = new Int32Array(model.inboundRules.length).fill(-1);
    if (basisIndexOf !== null) {
      model.inboundRules.forEach((r, i) => {
        const j = basisIndexOf.get(r.id);
        if (j === undefined) return;
        basisIndexAt[i] = j;
        if (onlyRulesChanged && changedIds !== null && !changedIds.has(r.id)) keptAt[i] = j;
      });
    }
    this.clock = onlyRulesChanged && basis !== undefined ? basis.clock : new LocalClock(model.device.timezone);
    this.week = onlyRulesChanged && basis !== undefined ? basis.week : planWeek(model.schedules.map((s) => s.windows));
    this.defaultAllow = model.device.defaultInbound === "allow";
    this.unlistenedReset = model.device.unlistenedPort === "reset";

    this.catalogue = [
      ...BUILTIN_SERVICES,
      ...model.services.map((s): CatalogueService => ({ name: s.name, protocol: s.protocol, port: s.port, kind: s.kind, builtin: false })),
    ];
    const classes: ServiceClass[] = this.catalogue.map((service, index) => ({
      index,
      key: serviceKey(service.protocol, service.port),
      service,
      kind: service.kind,
      protocol: service.protocol,
    }));
    classes.push({ index: classes.length, key: "other", service: null, kind: "other", protocol: "tcp" });
    this.classes = classes;
    for (const c of classes) this.classByKey.set(c.key, c);

    model.interfaces.forEach((f, i) => this.interfaceIndex.set(f.name, i));
    model.accounts.forEach((a, i) => this.accountIndex.set(a.name, i));

    const addresses: DeviceAddress[] = [];
    this.interfaceAddresses = model.interfaces.map((f, i) =>
      f.addresses.map((text) => {
        const slash = text.indexOf("/");
        const a = parseAddress(slash < 0 ? text : text.slice(0, slash));
        const index = addresses.length;
        addresses.push({ index, family: a.family, value: a.value, text: formatAddress(a.family, a.value), iface: i });
        this.addressIndex.set(`${a.family}:${a.value}`, index);
        return index;
      }),
    );
    this.addresses = addresses;
    this.listening = model.interfaces.map((f) => new Set(f.listeners));

    const scheduleIndex = new Map(model.schedules.map((s, i) => [s.name, i]));
    const setOf = (names: readonly string[]): AddressSet => this.setOfNames(names);
    // Rules name the same destinations and services again and again; so do a model and its basis.
    const sameServices = basis !== undefined && JSON.stringify([basis.model.services, basis.model.serviceGroups]) === JSON.stringify([model.services, model.serviceGroups]);
    this.destinationSets = basis !== undefined ? basis.destinationSets : new Map();
    this.serviceKeySets = sameServices ? basis.serviceKeySets : new Map();
    this.rules = model.inboundRules.map((r, position): CompiledRule => {
      const kept = keptAt[position];
      if (kept >= 0 && basis !== undefined) {
        const b = basis.rules[kept];
        return new RuleOfModel(position, r.id, b.allow, b.enabled, b.iface, r.sources, setOf, b.destinations, b.anyService ? null : b.serviceKeys, b.schedule);
      }
      const serviceKey = r.services.join("\n");
      let keys = this.serviceKeySets.get(serviceKey);
      if (keys === undefined) {
        keys = this.serviceKeysOf(r.services);
        this.serviceKeySets.set(serviceKey, keys);
      }
      const destinationKey = r.destinations.join("\n");
      let destinations = this.destinationSets.get(destinationKey);
      if (destinations === undefined) {
        destinations = this.setOfNames(r.destinations);
        this.destinationSets.set(destinationKey, destinations);
      }
      return new RuleOfModel(
        position,
        r.id,
        r.action === "allow",
        r.enabled,
        r.interface === ANY_INTERFACE ? -1 : (this.interfaceIndex.get(r.interface) ?? -2),
        r.sources,
        setOf,
        destinations,
        keys,
        r.schedule === ALL_WEEK_SCHEDULE ? -1 : (scheduleIndex.get(r.schedule) ?? -1),
      );
    });
    // Accounts unchanged (onlyRulesChanged compares them) over the same address book compile alike: the basis's.
    this.accounts = onlyRulesChanged && basis !== undefined ? basis.accounts : model.accounts.map((a, index): CompiledAccount => ({
      index,
      name: a.name,
      enabled: a.enabled,
      secondFactor: a.secondFactor !== "none",
      services: a.services.length === 0 ? null : new Set(a.services),
      loginSources: a.loginSources.length === 0 ? ANY_SET : this.loginSetOf(a.loginSources),
    }));

    this.sourceKeys = model.inboundRules.map((r, i) => (keptAt[i] >= 0 && basis !== undefined ? basis.sourceKeys[keptAt[i]] : r.sources.join("\n")));
    const sameAccounts = onlyRulesChanged || (basis !== undefined && JSON.stringify(basis.model.accounts) === JSON.stringify(model.accounts));
    // Elements come from the address objects every rule's sources name (disabled rules too, so
    // switching a rule on or off keeps them; groups through their members) and the login
    // sources: any list of those names is a union of elements, and the same names and
    // accounts give the same elements, shared with the basis — a rule edit that names no new
    // object keeps them.
    // Elements cut for more objects than these rules name are still exact (only finer), so a
    // basis whose objects include all of these lends its elements too (a rule removed).
    // Source lists the basis has bits for name only objects it has elements for; only new lists need a look.
    const newLists = basis === undefined ? model.inboundRules : model.inboundRules.filter((_, i) => keptAt[i] < 0 && !basis.bitsBySources.has(this.sourceKeys[i]));
    const sameElements = sameAccounts && basis !== undefined && this.objectNames(newLists.flatMap((r) => r.sources)).every((name) => basis.sourceObjects.has(name));
    const named = sameElements ? [] : this.objectNames(model.inboundRules.flatMap((r) => r.sources));
    this.sourceObjects = sameElements ? basis.sourceObjects : new Set(named);
    const domainFor = (family: Family): Domain =>
      new Domain(family, [
        ...named.map((name) => rangesOf(this.addressSetOf(name), family)),
        ...this.accounts.map((a) => rangesOf(a.loginSources, family)),
      ]);
    this.domains = sameElements ? basis.domains : { 4: domainFor(4), 6: domainFor(6) };
    this.bitsByName = sameElements ? basis.bitsByName : new Map();
    this.bitsBySources = sameElements ? basis.bitsBySources : new Map();
    model.inboundRules.forEach((r, i) => {
      const key = this.sourceKeys[i];
      // A kept rule's sources are the basis's key, whose bits a basis of the same elements holds.
      if ((sameElements && keptAt[i] >= 0) || this.bitsBySources.has(key)) return;
      this.bitsBySources.set(key, [
        this.domains[4].unionBits(r.sources.map((name) => this.bitsOfName(name, 4))),
        this.domains[6].unionBits(r.sources.map((name) => this.bitsOfName(name, 6))),
      ]);
    });
    this.ruleBits = this.sourceKeys.map((key, i) => (sameElements && keptAt[i] >= 0 ? basis.ruleBits[keptAt[i]] : (this.bitsBySources.get(key) as readonly [SparseBits, SparseBits])));
    // Slots: the basis's for rules with the same id and sources; new ones past the basis's.
    let slotCount = sameElements ? basis.slotCount : model.inboundRules.length;
    const basisSlotAt = (i: number): number | undefined => {
      const j = basisIndexAt[i];
      return j >= 0 && basis !== undefined && basis.sourceKeys[j] === this.sourceKeys[i] ? basis.ruleSlots[j] : undefined;
    };
    const ruleSlots = new Int32Array(model.inboundRules.length);
    for (let i = 0; i < ruleSlots.length; i++) ruleSlots[i] = sameElements ? (basisSlotAt(i) ?? slotCount++) : i;
    this.ruleSlots = ruleSlots;
    this.slotCount = slotCount;
    this.slotPositions = new Int32Array(slotCount).fill(-1);
    this.ruleSlots.forEach((slot, position) => (this.slotPositions[slot] = position));
    if (sameElements) {
      this.basisRef = new WeakRef(basis);
      this.onlyRulesChanged = onlyRulesChanged;
      const { changed, edited } = edit ?? ruleEdit(basis.model, model);
      this.editedRule = edited === null ? null : { id: edited, basisPosition: basisIndexOf?.get(edited) ?? -1 };
      const basisPositions = new Array<number | undefined>(basisIndexAt.length);
      for (let i = 0; i < basisIndexAt.length; i++) basisPositions[i] = basisIndexAt[i] >= 0 ? basisIndexAt[i] : undefined;
      this.basisPositions = basisPositions;
      this.sameCatalogueAndAccounts =
        JSON.stringify(basis.model.services) === JSON.stringify(model.services) &&
        basis.defaultAllow === this.defaultAllow &&
        basis.unlistenedReset === this.unlistenedReset;
      if (this.onlyRulesChanged && changed !== null) {
        {
          const reach: CandidateReach[] = [];
          changed.forEach((id) => {
            const before = basisIndexOf?.get(id);
            if (before !== undefined) reach.push(basis.candidateReach(basis.rules[before]));
            const after = this.rules.findIndex((r) => r.id === id);
            if (after >= 0) {
              const now = this.candidateReach(this.rules[after]);
              reach.push(now);
              this.changedReach.set(id, now);
            }
          });
          this.changedRules = reach;
          this.changedIds = changedIds;
        }
      }
    }
    const denseBits = (family: Family, set: AddressSet): Int32Array => {
      const d = this.domains[family];
      const dense = new Int32Array(d.words);
      const sparse = d.toBits(d.toIndexRanges(rangesOf(set, family)));
      for (let k = 0; k < sparse.words.length; k++) dense[sparse.words[k]] |= sparse.masks[k];
      return dense;
    };
    this.accountBits =
      sameElements && basis !== undefined
        ? basis.accountBits
        : {
            4: this.accounts.map((a) => denseBits(4, a.loginSources)),
            6: this.accounts.map((a) => denseBits(6, a.loginSources)),
          };
    if (sameElements && this.sameCatalogueAndAccounts && basis !== undefined) for (const [key, runs] of basis.loginRuns) this.loginRuns.set(key, runs);
    const scratchFor = (family: Family) => ({
      remaining: new Int32Array(this.domains[family].words),
      owner: new Int32Array(this.domains[family].size),
      wordOwners: new Int32Array(this.domains[family].words),
      pieceStarts: new Int32Array(this.domains[family].words),
    });
    // Scratch is used only within one call; a model that shares its basis's elements shares its scratch too.
    this.scratch = sameElements ? basis.scratch : { 4: scratchFor(4), 6: scratchFor(6) };
  }

  /** The model this one was compiled on, while it is still alive and shares this one's elements. */
  get basisModel(): CompiledModel | undefined {
    return this.basisRef?.deref();
  }

  /**
   * The basis, when this model differs from it in a few inbound rules only and it is still
   * alive: then every cell `cellMayDiffer` calls unchanged has the basis's partitions and
   * outcomes, and whole-model analyses may be kept by difference (cells.ts).
   */
  get incrementalBasis(): CompiledModel | undefined {
    return this.changedRules === null ? undefined : this.basisRef?.deref();
  }

  /** The ids of the rules the edit against the incremental basis changed (added, removed, moved, or any field); null without one. */
  get changedRuleIds(): ReadonlySet<string> | null {
    return this.changedRules === null ? null : this.changedIds;
  }

  /** Whether the edit against the basis changed the rule at this position (added, moved, or any field); false without a basis. */
  ruleChangedByEdit(position: number): boolean {
    return this.changedIds?.has(this.rules[position].id) ?? false;
  }

  // ---- name resolution ----

  /** The address set named by an address object, group or built-in. */
  addressSetOf(name: string): AddressSet {
    const cached = this.addressSets.get(name);
    if (cached !== undefined) return cached;
    let set: AddressSet;
    if (name === "any") set = ANY_SET;
    else if (name === "any4") set = { v4: ANY_SET.v4, v6: [] };
    else if (name === "any6") set = { v4: [], v6: ANY_SET.v6 };
    else {
      this.objectsByName ??= new Map(this.model.addresses.map((a) => [a.name, a]));
      this.groupsByName ??= new Map(this.model.addressGroups.map((g) => [g.name, g]));
      const object = this.objectsByName.get(name);
      if (object !== undefined) set = setFromRanges(parsedEntries(object.entries) ?? object.entries.map((e) => parseEntry(e).range));
      else {
        const group = this.groupsByName.get(name);
        // Validation rules out unknown names and cycles; mark in-progress to stay safe anyway.
        this.addressSets.set(name, EMPTY_SET);
        set = group === undefined ? EMPTY_SET : this.setOfNames(group.members);
      }
    }
    this.addressSets.set(name, set);
    return set;
  }

  /** The address objects and built-in names behind a list of names (groups through their members), sorted and distinct. */
  private objectNames(names: readonly string[]): string[] {
    this.groupsByName ??= new Map(this.model.addressGroups.map((g) => [g.name, g]));
    const groups = this.groupsByName;
    const out = new Set<string>();
    const seen = new Set<string>();
    const visit = (name: string): void => {
      if (seen.has(name)) return;
      seen.add(name);
      const group = groups.get(name);
      if (group === undefined) out.add(name);
      else for (const member of group.members) visit(member);
    };
    for (const name of names) visit(name);
    return [...out].sort();
  }

  /** The elements of a named address set as a sparse bitset (a group's as the union of its members'). */
  private bitsOfName(name: string, family: Family): SparseBits {
    const key = `${family}|${name}`;
    const cached = this.bitsByName.get(key);
    if (cached !== undefined) return cached;
    const domain = this.domains[family];
    this.groupsByName ??= new Map(this.model.addressGroups.map((g) => [g.name, g]));
    const group = this.groupsByName.get(name);
    // Validation rules out cycles; an empty set in progress keeps a cycle finite anyway.
    if (group !== undefined) this.bitsByName.set(key, { words: new Int32Array(0), masks: new Int32Array(0) });
    const bits =
      group === undefined
        ? domain.toBits(domain.toIndexRanges(rangesOf(this.addressSetOf(name), family)))
        : domain.unionBits(group.members.map((member) => this.bitsOfName(member, family)));
    this.bitsByName.set(key, bits);
    return bits;
  }

  /** The first address of the rule's sources in the family, or undefined when it has none there. */
  firstSourceOf(position: number, family: Family): bigint | undefined {
    const element = this.domains[family].firstElement(this.ruleBits[position][family === 4 ? 0 : 1]);
    return element < 0 ? undefined : this.domains[family].bounds[element];
  }

  /** Whether the rule's sources hold every address of the family. */
  ruleHoldsEverySource(position: number, family: Family): boolean {
    return this.domains[family].holdsAll(this.ruleBits[position][family === 4 ? 0 : 1]);
  }

  setOfNames(names: readonly string[]): AddressSet {
    return names.reduce((acc, n) => unionSets(acc, this.addressSetOf(n)), EMPTY_SET);
  }

  /** Login sources: names or literal entries. */
  loginSetOf(items: readonly string[]): AddressSet {
    const literals = items.filter((t) => looksLikeAddressEntry(t)).map((t) => parseEntry(t).range);
    const named = items.filter((t) => !looksLikeAddressEntry(t));
    return unionSets(setFromRanges(literals), this.setOfNames(named));
  }

  /** Service keys named by services, service groups and "any" (null = every protocol and port). */
  serviceKeysOf(names: readonly string[], seen: Set<string> = new Set()): Set<string> | null {
    const keys = new Set<string>();
    for (const n of names) {
      if (n === ANY_SERVICE) return null;
      if (seen.has(n)) continue;
      seen.add(n);
      const service = this.catalogue.find((s) => s.name === n);
      if (service !== undefined) {
        keys.add(serviceKey(service.protocol, service.port));
        continue;
      }
      const group = this.model.serviceGroups.find((g) => g.name === n);
      if (group === undefined) continue;
      const inner = this.serviceKeysOf(group.members, seen);
      if (inner === null) return null;
      for (const k of inner) keys.add(k);
    }
    return keys;
  }

  // ---- probes ----

  interfaceOf(name: string): number {
    const i = this.interfaceIndex.get(name);
    if (i === undefined) throw new ProbeError(`unknown interface "${name}"`);
    return i;
  }

  accountOf(name: string): number {
    const i = this.accountIndex.get(name);
    if (i === undefined) throw new ProbeError(`unknown account "${name}"`);
    return i;
  }

  /** A catalogue name, or tcp/PORT, udp/PORT, icmp/echo. */
  serviceClassOf(text: string): ServiceClass {
    const named = this.catalogue.findIndex((s) => s.name === text);
    if (named >= 0) return this.classes[named];
    if (text === "icmp/echo") return this.classes[BUILTIN_SERVICES.findIndex((s) => s.protocol === "icmp")];
    const m = PORT_SERVICE.exec(text);
    if (m !== null) {
      const port = Number(m[2]);
      if (port < 1 || port > 65535 || m[2].startsWith("0")) throw new ProbeError(`"${text}" has an invalid port (1-65535)`);
      const found = this.classByKey.get(text);
      if (found !== undefined) return found;
      return { ...this.classes[this.classes.length - 1], protocol: m[1] as "tcp" | "udp" };
    }
    throw new ProbeError(`unknown service "${text}" (a catalogue name, tcp/PORT, udp/PORT or icmp/echo)`);
  }

  deviceAddressOf(address: Address): number {
    return this.addressIndex.get(`${address.family}:${address.value}`) ?? -1;
  }

  /** Validates the whole probe first (input errors throw ProbeError), then resolves it. */
  resolveProbe(probe: ProbeInput, nowMs: number = Date.now()): ResolvedProbe {
    const iface = this.interfaceOf(probe.interface);
    const serviceClass = this.serviceClassOf(probe.service);
    const from = parseProbeAddress(probe.from, "from");
    let to = -1;
    if (probe.to !== undefined && probe.to !== "") {
      const target = parseProbeAddress(probe.to, "to");
      if (target.family !== from.family) throw new ProbeError(`"from" and "to" are in different families`);
      to = this.deviceAddressOf(target);
      if (to < 0) throw new ProbeError(`"${probe.to}" is not an address of the device`);
    }
    const account = probe.account !== undefined && probe.account !== "" ? this.accountOf(probe.account) : -1;
    const atMs = this.instantOf(probe.at, nowMs);
    // Arrival needs an address of the family on this interface; `to` may belong to another interface.
    const first = this.interfaceAddresses[iface].find((a) => this.addresses[a].family === from.family);
    if (first === undefined) to = -1;
    else if (to < 0) to = first;
    return { from, iface, serviceClass, serviceLabel: probe.service, to, atMs, account };
  }

  instantOf(at: string | number | Date | undefined, nowMs: number): number {
    if (at === undefined || at === "") return nowMs;
    if (typeof at === "number") return at;
    if (at instanceof Date) return at.getTime();
    const ms = parseInstant(at, this.model.device.timezone);
    if (ms === null) throw new ProbeError(`"${at}" is not an ISO 8601 date-time`);
    return ms;
  }

  sliceAt(ms: number): number {
    return this.week.sliceAt[this.clock.weekMinute(ms)];
  }

  // ---- partitions ----

  /** Where a rule is a candidate: its interface, and per device address and service class whether it names them. */
  private candidateReach(rule: CompiledRule): CandidateReach {
    if (!rule.enabled) return { iface: -2, destinations: new Uint8Array(0), classes: new Uint8Array(0) };
    return {
      iface: rule.iface,
      destinations: Uint8Array.from(this.addresses, (target) => (contains(rangesOf(rule.destinations, target.family), target.value) ? 1 : 0)),
      classes: Uint8Array.from(this.classes, (c) => (rule.anyService || rule.serviceKeys.has(c.key) ? 1 : 0)),
    };
  }

  /**
   * The basis, when the cell (interface, destination, class) is one no changed rule is a
   * candidate for: its candidate rules are the basis's (by slot, in order, with the same
   * actions), so its partitions and outcomes in every slice are the basis's objects.
   */
  private basisOfCleanCell(iface: number, to: number, cls: number): CompiledModel | undefined {
    const changed = this.changedRules;
    if (changed === null) return undefined;
    const cell = (iface * this.addresses.length + to) * this.classes.length + cls;
    // Per cell: 0 not yet looked at, 1 a changed rule is a candidate there, 2 clean (and counted as inherited).
    const cells = (this.cellStates ??= new Uint8Array(this.interfaceAddresses.length * this.addresses.length * this.classes.length));
    let state = cells[cell];
    if (state === 0) {
      state = 2;
      for (const reach of changed) {
        if ((reach.iface === -1 || reach.iface === iface) && reach.destinations[to] === 1 && reach.classes[cls] === 1) state = 1;
      }
      if (state === 2 && this.basisRef?.deref() === undefined) return undefined;
      cells[cell] = state;
      if (state === 2) this.partitionSources.inherited++;
    }
    return state === 1 ? undefined : this.basisRef?.deref();
  }

  /** Whether an edit against the basis can change the cell's partitions or outcomes (true when the model is not compiled incrementally). */
  cellMayDiffer(iface: number, to: number, cls: number): boolean {
    return this.basisOfCleanCell(iface, to, cls) === undefined;
  }

  /** Enabled rules that can match (interface, destination, service class) at some time, in order. */
  candidateRules(iface: number, to: number, cls: number): Candidates {
    const key = (iface * this.addresses.length + to) * this.classes.length + cls;
    const cached = this.candidates[key];
    if (cached !== undefined) return cached;
    const fromBasis = this.candidatesFromBasis(iface, to, cls);
    if (fromBasis !== undefined) return (this.candidates[key] = fromBasis);
    // Addresses every rule's destinations treat alike have the same lists.
    const alike = this.destinationRepresentative(to);
    if (alike !== to) return (this.candidates[key] = this.candidateRules(iface, alike, cls));
    this.destinationColumn(to);
    const destinations = (this.destinationMasks as Int32Array[])[to];
    const onInterface = this.serviceRulesOnInterface(iface, cls);
    // Both as bitmasks over positions, a word at a time. Most cells share their list with
    // another (5,000 cells, under 300 lists on the benchmark model): the list is looked up by
    // its mask, so only a new one is turned into positions.
    const mask = (this.maskScratch ??= new Int32Array(onInterface.length));
    let hash = 0x811c9dc5;
    for (let w = 0; w < onInterface.length; w++) {
      const both = onInterface[w] & destinations[w];
      mask[w] = both;
      hash = Math.imul(hash ^ both, 0x01000193);
    }
    const bucket = this.candidatesByMask.get(hash);
    if (bucket !== undefined) {
      for (const known of bucket) {
        let w = 0;
        while (w < mask.length && known.mask[w] === mask[w]) w++;
        if (w === mask.length) return (this.candidates[key] = known.candidates);
      }
    }
    const list: number[] = [];
    const scheduledList: number[] = [];
    // Only the rules in both are visited.
    for (let w = 0; w < mask.length; w++) {
      let both = mask[w];
      while (both !== 0) {
        const low = both & -both;
        const position = (w << 5) + 31 - Math.clz32(low);
        list.push(position);
        if (this.rules[position].schedule >= 0) scheduledList.push(position);
        both ^= low;
      }
    }
    const rules = Int32Array.from(list);
    const result: Candidates = { id: this.candidateListId(rules), rules, scheduled: scheduledList.length > 0, scheduledRules: Int32Array.from(scheduledList) };
    this.candidates[key] = result;
    const entry = { mask: mask.slice(), candidates: result };
    if (bucket === undefined) this.candidatesByMask.set(hash, [entry]);
    else bucket.push(entry);
    return result;
  }

  /**
   * After an edit of a few rules: the basis's list for the cell with the changed rules taken
   * out and put in where they now are candidates — the unchanged rules' membership and order
   * are the basis's — so a changed cell needs no destination columns over every rule.
   */
  private candidatesFromBasis(iface: number, to: number, cls: number): Candidates | undefined {
    const changed = this.changedRules;
    const ids = this.changedIds;
    const basis = changed === null ? undefined : this.basisRef?.deref();
    if (basis === undefined || ids === null) return undefined;
    const before = basis.candidateRules(iface, to, cls);
    // The changed rules that are candidates here now, by position; few, and the same for many cells.
    const added: number[] = [];
    for (const id of ids) {
      const position = this.positionOfId(id);
      if (position < 0) continue;
      const reach = this.changedReach.get(id);
      if (reach !== undefined && (reach.iface === -1 || reach.iface === iface) && reach.destinations[to] === 1 && reach.classes[cls] === 1) added.push(position);
    }
    // Cells with the same basis list and the same changed rules in it get the same list.
    const key = added.length === 0 ? `${before.id}` : `${before.id}|${added.join(",")}`;
    const known = this.listsFromBasis.get(key);
    if (known !== undefined) return known;
    const toNow = this.positionsFromBasis(basis, ids);
    const list: number[] = [];
    for (let k = 0; k < before.rules.length; k++) {
      const position = toNow[before.rules[k]];
      if (position >= 0) list.push(position);
    }
    list.push(...added);
    list.sort((a, b) => a - b);
    const rules = Int32Array.from(list);
    const scheduledRules = rules.filter((position) => this.rules[position].schedule >= 0);
    const candidates: Candidates = { id: this.candidateListId(rules), rules, scheduled: scheduledRules.length > 0, scheduledRules };
    this.listsFromBasis.set(key, candidates);
    return candidates;
  }

  /** candidatesFromBasis's lists, by the basis's list id and the changed rules added. */
  private readonly listsFromBasis = new Map<string, Candidates>();
  private basisToNow: Int32Array | undefined;

  /** Per basis position: this model's position of the same rule, or -1 for a rule the edit changed or removed. */
  private positionsFromBasis(basis: CompiledModel, ids: ReadonlySet<string>): Int32Array {
    if (this.basisToNow === undefined) {
      const toNow = new Int32Array(basis.rules.length);
      for (let k = 0; k < toNow.length; k++) toNow[k] = ids.has(basis.rules[k].id) ? -1 : this.positionOfId(basis.rules[k].id);
      this.basisToNow = toNow;
    }
    return this.basisToNow;
  }

  /** This model's position of a rule id, or -1. */
  private positionOfId(id: string): number {
    return this.positionsOfIds().get(id) ?? -1;
  }

  /** Rule positions by id, made once. */
  private positionsOfIds(): ReadonlyMap<string, number> {
    this.positionsById ??= new Map(this.rules.map((r) => [r.id, r.position]));
    return this.positionsById;
  }

  /** Enabled rules for the interface (or any) that name the service class, as a bitmask over positions: every destination's candidates are a subset. */
  private serviceRulesOnInterface(iface: number, cls: number): Int32Array {
    const key = iface * this.classes.length + cls;
    let mask = this.byInterfaceAndClass[key];
    if (mask === undefined) {
      const services = this.serviceColumn(cls);
      mask = new Int32Array((this.rules.length + 31) >>> 5);
      for (const position of this.rulesOnInterface(iface)) if (services[position] !== 0) mask[position >>> 5] |= 1 << (position & 31);
      this.byInterfaceAndClass[key] = mask;
    }
    return mask;
  }

  /** Equal lists (e.g. two services named by the same rules) share one id, so their partitions are shared. */
  private candidateListId(rules: Int32Array): number {
    let hash = 0x811c9dc5 ^ rules.length;
    for (let i = 0; i < rules.length; i++) hash = Math.imul(hash ^ rules[i], 0x01000193);
    const bucket = this.candidateLists.get(hash);
    if (bucket !== undefined) {
      for (const entry of bucket) {
        if (entry.rules.length !== rules.length) continue;
        let i = 0;
        while (i < rules.length && entry.rules[i] === rules[i]) i++;
        if (i === rules.length) return entry.id;
      }
    }
    const id = this.candidateListCount++;
    if (bucket === undefined) this.candidateLists.set(hash, [{ id, rules }]);
    else bucket.push({ id, rules });
    return id;
  }

  private serviceColumn(cls: number): Uint8Array {
    let column = this.serviceColumns.get(cls);
    if (column === undefined) {
      const classKey = this.classes[cls].key;
      // Plain loops, here and below: a typed array's `from` with a mapping function is many times slower.
      column = new Uint8Array(this.rules.length);
      for (let position = 0; position < column.length; position++) {
        const rule = this.rules[position];
        if (rule.anyService || rule.serviceKeys.has(classKey)) column[position] = 1;
      }
      this.serviceColumns.set(cls, column);
    }
    return column;
  }

  /** Per device address: the first address whose destination column is the same. */
  private destinationRepresentatives: Int32Array | undefined;

  private destinationRepresentative(to: number): number {
    if (this.destinationRepresentatives === undefined) {
      const byHash = new Map<number, number[]>();
      this.destinationRepresentatives = Int32Array.from(this.addresses, (address) => {
        const column = this.destinationColumn(address.index);
        let hash = 0x811c9dc5;
        for (let i = 0; i < column.length; i++) hash = Math.imul(hash ^ column[i], 0x01000193);
        const bucket = byHash.get(hash) ?? [];
        const found = bucket.find((other) => {
          const seen = this.destinationColumn(other);
          for (let i = 0; i < column.length; i++) if (seen[i] !== column[i]) return false;
          return true;
        });
        if (found !== undefined) return found;
        bucket.push(address.index);
        byHash.set(hash, bucket);
        return address.index;
      });
    }
    return this.destinationRepresentatives[to];
  }

  private destinationColumn(to: number): Uint8Array {
    if (this.destinationColumns === undefined) {
      // Every address's column at once: rules share their destination sets, so each set is
      // tested against the device addresses once, not once per rule.
      const columns = this.addresses.map(() => new Uint8Array(this.rules.length));
      const masks = this.addresses.map(() => new Int32Array((this.rules.length + 31) >>> 5));
      const holds = new Map<AddressSet, Uint8Array>();
      for (const rule of this.rules) {
        let held = holds.get(rule.destinations);
        if (held === undefined) {
          held = Uint8Array.from(this.addresses, (target) => (contains(rangesOf(rule.destinations, target.family), target.value) ? 1 : 0));
          holds.set(rule.destinations, held);
        }
        const position = rule.position;
        for (let address = 0; address < held.length; address++) {
          if (held[address] === 0) continue;
          columns[address][position] = 1;
          masks[address][position >>> 5] |= 1 << (position & 31);
        }
      }
      this.destinationColumns = columns;
      this.destinationMasks = masks;
    }
    return this.destinationColumns[to];
  }

  /** Enabled rules for the interface or any, in order. */
  private rulesOnInterface(iface: number): number[] {
    let list = this.byInterface.get(iface);
    if (list === undefined) {
      list = this.rules.filter((r) => r.enabled && (r.iface === -1 || r.iface === iface)).map((r) => r.position);
      this.byInterface.set(iface, list);
    }
    return list;
  }

  /** First-match partition for (interface, destination, class, slice); shared between equal rule lists. */
  entry(iface: number, to: number, cls: number, slice: number): EntryPartition {
    if (this.changedRules !== null) {
      // After a rule edit a cell the edit left alone is the basis's, kept there (not copied
      // here); a changed cell is asked for in every slice (exposure, census, findings), so its
      // week is built at once, shared by the changed cells of the same list, class and listening.
      const basis = this.basisOfCleanCell(iface, to, cls);
      return basis !== undefined ? basis.entry(iface, to, cls, slice) : this.changedWeek(iface, to, cls).entries[slice];
    }
    const cell = (iface * this.addresses.length + to) * this.classes.length + cls;
    const bySlice = this.entries.get(cell);
    const cached = bySlice?.[slice];
    if (cached !== undefined) return cached;
    const family = this.addresses[to].family;
    const rules = this.rulePartitionAt(iface, to, cls, slice);
    const result: EntryPartition = { family, rules, outcome: this.outcomeRunsOf(rules, iface, cls) };
    if (bySlice === undefined) {
      const entries = new Array<EntryPartition | undefined>(this.week.slices.length).fill(undefined);
      entries[slice] = result;
      this.entries.set(cell, entries);
    } else bySlice[slice] = result;
    return result;
  }

  /** The first-match partition of entry(iface, to, cls, slice).rules, without building or keeping the entry. */
  rulePartitionAt(iface: number, to: number, cls: number, slice: number): RulePartition {
    const basis = this.basisOfCleanCell(iface, to, cls);
    if (basis !== undefined) return basis.rulePartitionAt(iface, to, cls, slice);
    const family = this.addresses[to].family;
    return this.partitionsBySlice(family, this.candidateRules(iface, to, cls), [slice])[0];
  }

  /**
   * The first-match partitions of (interface, destination, class) for every slice, in slice
   * order: one array per candidate list and family (cells alike get the same array).
   */
  weekRulePartitions(iface: number, to: number, cls: number): readonly RulePartition[] {
    const basis = this.basisOfCleanCell(iface, to, cls);
    if (basis !== undefined) return basis.weekRulePartitions(iface, to, cls);
    return this.partitionsBySlice(this.addresses[to].family, this.candidateRules(iface, to, cls), null);
  }

  /** Rule partitions of a candidate list for the given slices (null = all, in order: then the list's own array, every slice filled). */
  private partitionsBySlice(family: Family, candidates: Candidates, slices: readonly number[] | null): readonly RulePartition[] {
    const listKey = candidates.id * 2 + (family === 4 ? 0 : 1);
    let bySlice = this.slicePartitions.get(listKey);
    if (bySlice === undefined) {
      bySlice = new Array<RulePartition | undefined>(this.week.slices.length).fill(undefined);
      this.slicePartitions.set(listKey, bySlice);
    }
    if (slices === null) {
      for (let slice = 0; slice < bySlice.length; slice++) bySlice[slice] ??= this.slicePartition(family, candidates, slice);
      return bySlice as readonly RulePartition[];
    }
    const count = slices.length;
    const out: RulePartition[] = new Array<RulePartition>(count);
    for (let k = 0; k < count; k++) {
      const slice = slices[k];
      let rules = bySlice[slice];
      if (rules === undefined) {
        rules = this.slicePartition(family, candidates, slice);
        bySlice[slice] = rules;
      }
      out[k] = rules;
    }
    return out;
  }

  /** Outcome runs of a rule partition on an interface for a class (shared per partition, class and listening). */
  private outcomeRunsOf(rules: RulePartition, iface: number, cls: number): Runs {
    const listening = this.classes[cls].service !== null && this.listening[iface].has(this.classes[cls].service?.name ?? "");
    const outcomeKey = (rules.id * this.classes.length + cls) * 2 + (listening ? 1 : 0);
    let outcome = this.outcomeCache.get(outcomeKey);
    if (outcome === undefined) {
      // A partition taken from the basis is the basis's own object, under the same key there.
      const basis = this.basisRef?.deref();
      if (this.outcomesCarried.has(rules)) outcome = basis?.outcomeCache.get(outcomeKey);
      const from = basis === undefined || basis.classes.length !== this.classes.length ? undefined : this.updatedFrom.get(rules);
      const before = from === undefined ? undefined : basis?.outcomeCache.get((from.id * this.classes.length + cls) * 2 + (listening ? 1 : 0));
      // Updated from a basis partition without a change of owner (the edited rule shadowed
      // there): with every rule's action as in the basis, the outcome is the basis's.
      if (outcome === undefined && before !== undefined && from?.owner === rules.owner && basis !== undefined && this.allowsAsBasis(basis)) outcome = before;
      if (outcome === undefined) {
        // Partitions with the same owner runs (a derived partition whose off rules took
        // nothing keeps its base's, interned runs) have the same outcome: one object serves
        // them all, and whatever is kept per runs object is computed once for them.
        const byOwner = this.outcomesByOwner.get(rules.owner);
        const ownerKey = (cls * 2 + (listening ? 1 : 0)) * 2 + (rules.family === 4 ? 0 : 1);
        outcome = byOwner?.get(ownerKey);
        if (outcome === undefined) {
          outcome = this.outcomeRuns(rules.family, rules, cls, listening);
          if (byOwner === undefined) this.outcomesByOwner.set(rules.owner, new Map([[ownerKey, outcome]]));
          else byOwner.set(ownerKey, outcome);
        }
        // Most edits change no outcome in most places they touch (a shadowed rule removed, an
        // element passed to a next match that acts alike): equal runs are then the basis's object,
        // so what is kept per runs object (counts, exposure, login coverage) carries over.
        if (before !== undefined && sameRuns(before, outcome)) outcome = before;
      }
      this.outcomeCache.set(outcomeKey, outcome);
    }
    return outcome;
  }

  #allowsAsBasis: boolean | undefined;

  /**
   * Whether outcomes follow from owners here as in the basis: only rules changed, the same
   * catalogue, accounts and defaults, and every rule in both (by slot) with the same action.
   */
  private allowsAsBasis(basis: CompiledModel): boolean {
    if (this.#allowsAsBasis === undefined) {
      let same = this.onlyRulesChanged && this.sameCatalogueAndAccounts;
      const slots = Math.min(this.slotCount, basis.slotCount);
      for (let slot = 0; same && slot < slots; slot++) {
        const here = this.slotPositions[slot];
        const there = basis.slotPositions[slot];
        if (here >= 0 && there >= 0 && this.rules[here].allow !== basis.rules[there].allow) same = false;
      }
      this.#allowsAsBasis = same;
    }
    return this.#allowsAsBasis;
  }

  /**
   * The distinct outcome partitions of (interface, destination, class) over the week, in
   * slice order: the same as outcomeOf for every slice with repeated outcomes left out
   * (equal outcomes are the same Runs object), without building an entry per slice.
   */
  weekOutcomes(iface: number, to: number, cls: number): readonly OutcomePartition[] {
    const c = this.classes[cls];
    const listening = c.service !== null && this.listening[iface].has(c.service.name);
    const family = this.addresses[to].family;
    if (!listening && (c.kind === "echo" || !this.unlistenedReset)) return family === 4 ? SILENT_WEEK_V4 : SILENT_WEEK_V6;
    if (this.changedRules !== null) {
      const basis = this.basisOfCleanCell(iface, to, cls);
      return basis !== undefined ? basis.weekOutcomes(iface, to, cls) : this.changedWeek(iface, to, cls).outcomes;
    }
    // Exposure, login reach and the findings each walk every cell's week: built once per cell.
    const cell = (iface * this.addresses.length + to) * this.classes.length + cls;
    const cached = this.weekOutcomesByCell.get(cell);
    if (cached !== undefined) return cached;
    const basis = this.basisOfCleanCell(iface, to, cls);
    if (basis !== undefined) return basis.weekOutcomes(iface, to, cls);
    const out: OutcomePartition[] = [];
    const seen = new Set<Runs>();
    let previous: RulePartition | undefined;
    for (const rules of this.weekRulePartitions(iface, to, cls)) {
      // Neighbouring slices mostly share a partition (only a schedule's edge changes it): its outcome is already in.
      if (rules === previous) continue;
      previous = rules;
      const outcome = this.outcomeRunsOf(rules, iface, cls);
      if (seen.has(outcome)) continue;
      seen.add(outcome);
      out.push({ family, outcome });
    }
    this.weekOutcomesByCell.set(cell, out);
    return out;
  }

  /** changedWeek's weeks, by candidate list, family, class and listening. */
  private readonly changedWeeks = new Map<number, { readonly entries: readonly EntryPartition[]; readonly outcomes: readonly OutcomePartition[] }>();

  /**
   * After a rule edit, a changed cell's entries in every slice and its distinct outcomes in
   * slice order (weekOutcomes): shared by the cells with the same candidate list, family,
   * class and listening, which have the same partitions and outcome runs.
   */
  private changedWeek(iface: number, to: number, cls: number): { readonly entries: readonly EntryPartition[]; readonly outcomes: readonly OutcomePartition[] } {
    const family = this.addresses[to].family;
    const candidates = this.candidateRules(iface, to, cls);
    const c = this.classes[cls];
    const listening = c.service !== null && this.listening[iface].has(c.service.name);
    const key = ((candidates.id * 2 + (family === 4 ? 0 : 1)) * this.classes.length + cls) * 2 + (listening ? 1 : 0);
    let week = this.changedWeeks.get(key);
    if (week === undefined) {
      const partitions = this.partitionsBySlice(family, candidates, null);
      const entries = new Array<EntryPartition>(partitions.length);
      const outcomes: OutcomePartition[] = [];
      const seen = new Set<Runs>();
      for (let slice = 0; slice < partitions.length; slice++) {
        const rules = partitions[slice];
        // Neighbouring slices often have the same partition: one entry serves them.
        const previous = slice > 0 ? entries[slice - 1] : undefined;
        if (previous !== undefined && previous.rules === rules) {
          entries[slice] = previous;
          continue;
        }
        const outcome = this.outcomeRunsOf(rules, iface, cls);
        entries[slice] = { family, rules, outcome };
        if (seen.has(outcome)) continue;
        seen.add(outcome);
        outcomes.push({ family, outcome });
      }
      week = { entries, outcomes };
      this.changedWeeks.set(key, week);
    }
    return week;
  }

  /**
   * Per candidate list and family: the distinct schedules of its scheduled rules, and its
   * partitions by which of them are off — many slices share that state, and each slice then
   * costs a look at those few schedules instead of a walk over the list's scheduled rules.
   */
  private readonly partitionsByOffState = new Map<number, { readonly schedules: Int32Array; readonly byState: Map<number | string, RulePartition> }>();

  /** The rule partition of a candidate list in one slice: only the list's scheduled rules that are on. */
  private slicePartition(family: Family, candidates: Candidates, slice: number): RulePartition {
    if (!candidates.scheduled) return this.slicePartitionAllOn(family, candidates);
    let schedules = this.ruleSchedules;
    if (schedules === undefined) {
      schedules = this.ruleSchedules = new Int32Array(this.rules.length);
      for (let position = 0; position < schedules.length; position++) schedules[position] = this.rules[position].schedule;
    }
    const listKey = candidates.id * 2 + (family === 4 ? 0 : 1);
    let known = this.partitionsByOffState.get(listKey);
    if (known === undefined) {
      const used = [...new Set(Array.from(candidates.scheduledRules, (position) => schedules[position]))].sort((a, b) => a - b);
      known = { schedules: Int32Array.from(used), byState: new Map() };
      this.partitionsByOffState.set(listKey, known);
    }
    const state = this.week.slices[slice].active;
    // The partition depends only on which of the list's schedules are off in this slice.
    let offState: number | string = 0;
    if (known.schedules.length <= 30) {
      for (let i = 0; i < known.schedules.length; i++) if (!state[known.schedules[i]]) offState |= 1 << i;
    } else offState = Array.from(known.schedules, (s) => (state[s] ? "1" : "0")).join("");
    const cached = known.byState.get(offState);
    if (cached !== undefined) return cached;
    let rules = offState === 0 ? this.slicePartitionAllOn(family, candidates) : undefined;
    if (rules === undefined) {
      rules = this.partitionWithOff(family, candidates, state, schedules);
      // Kept with every partition made here, for the content index (partitionsByContent).
      this.partitions.set(`off|${listKey}|${offState}`, rules);
    }
    known.byState.set(offState, rules);
    return rules;
  }

  /** The partition of a candidate list with the scheduled rules whose schedules are off in `state` left out. */
  private partitionWithOff(family: Family, candidates: Candidates, state: readonly boolean[], schedules: Int32Array): RulePartition {
    const off: number[] = [];
    for (const p of candidates.scheduledRules) if (!state[schedules[p]]) off.push(p);
    if (off.length === 0) return this.slicePartitionAllOn(family, candidates);
    const base = this.slicePartitionAllOn(family, candidates);
    // Without a basis to look the list up in, the active list is made only if something reads it (few do: most partitions of a week differ from their list's by a few rules off).
    if (this.basisRef === null) {
      const rules = this.derivedPartition(family, base, null, off);
      this.remember(rules);
      return rules;
    }
    const active = new Int32Array(candidates.rules.length - off.length);
    const list = candidates.rules;
    let n = 0;
    for (let k = 0; k < list.length; k++) {
      const s = schedules[list[k]];
      if (s < 0 || state[s]) active[n++] = this.ruleSlots[list[k]];
    }
    const rules = this.basisPartition(family, active) ?? this.derivedPartition(family, base, active, off);
    this.remember(rules);
    return rules;
  }

  /** The partition of a candidate list with every one of its rules on (whether or not some slice has them all on). */
  private slicePartitionAllOn(family: Family, candidates: Candidates): RulePartition {
    const listKey = candidates.id * 2 + (family === 4 ? 0 : 1);
    let rules = this.partitionsAllOn.get(listKey);
    if (rules === undefined) {
      const active = new Int32Array(candidates.rules.length);
      for (let k = 0; k < active.length; k++) active[k] = this.ruleSlots[candidates.rules[k]];
      const key = `${family}|${candidates.id}`;
      rules = this.basisPartition(family, active) ?? this.rulePartition(family, active, key);
      this.partitions.set(key, rules);
      this.partitionsAllOn.set(listKey, rules);
      this.remember(rules);
    }
    return rules;
  }

  /** slicePartitionAllOn's partitions by list and family. */
  private readonly partitionsAllOn = new Map<number, RulePartition>();

  /**
   * The partition of a list with some of its scheduled rules off, from the list's partition with
   * all of them on: an element an off rule took goes to the next rule of `active` that covers it
   * (or to the default); every other element keeps its owner, since the rules before it are
   * the same or fewer. Costs the base's runs and the off rules' elements, not a sweep of the list.
   */
  private derivedPartition(family: Family, base: RulePartition, given: Int32Array | null, off: readonly number[]): RulePartition {
    this.partitionSources.derived++;
    const offSlots = new Int32Array(off.length);
    for (let i = 0; i < off.length; i++) offSlots[i] = this.ruleSlots[off[i]];
    const partition = (owner: Runs): RulePartition =>
      given !== null ? new Partition(nextPartitionId++, family, given, owner) : new Partition(nextPartitionId++, family, null, owner, { all: base.active, off: Int32Array.from(off), slotPositions: this.slotPositions });
    if (given !== null) this.touch(given);
    // Most off rules own nothing in the base (a later rule's schedule, or one shadowed there): the runs are then the base's, shared.
    const owners = this.ownerMask(base);
    let owning = false;
    for (let i = 0; i < offSlots.length && !owning; i++) owning = ((owners[offSlots[i] >>> 5] >>> (offSlots[i] & 31)) & 1) === 1;
    if (!owning) return partition(base.owner);
    const domain = this.domains[family];
    const { remaining: need, owner } = this.scratch[family];
    const patched = (this.patchScratch ??= new Uint8Array(this.slotCount + 1));
    for (const slot of offSlots) patched[slot + 1] = 1;
    const freed = freeElementsOwnedBy(base.owner, domain.size, owner, need, (slot) => patched[slot + 1] === 1);
    const wordsInOrder = freed.wordsInOrder;
    let count = freed.count;
    if (count === 0) {
      // The off rules took nothing: every element keeps its owner, and the runs are the base's (shared, not copied).
      for (const slot of offSlots) patched[slot + 1] = 0;
      return partition(base.owner);
    }
    let firstOff = Infinity;
    for (const position of off) if (position < firstOff) firstOff = position;
    const familySlot = family === 4 ? 0 : 1;
    // The rules of the base's list that are on (the active list), in order.
    const all = base.active;
    for (let k = 0; k < all.length && count > 0; k++) {
      const slot = all[k];
      if (patched[slot + 1] === 1) continue;
      const position = this.slotPositions[slot];
      if (position < firstOff) continue;
      count -= claimNeeded(need, wordsInOrder, owner, slot, this.ruleBits[position][familySlot]);
    }
    const runs = this.internedRuns(family, patchedRuns(base.owner, patched, owner, domain.size));
    for (const slot of offSlots) patched[slot + 1] = 0;
    return partition(runs);
  }

  /** Per partition asked for: a bitmask over slots of the rules that own elements in it. */
  private readonly ownerMasks = new WeakMap<RulePartition, Int32Array>();

  private ownerMask(p: RulePartition): Int32Array {
    let mask = this.ownerMasks.get(p);
    if (mask === undefined) {
      mask = new Int32Array((this.slotCount + 31) >>> 5);
      const values = p.owner.values;
      for (let k = 0; k < values.length; k++) if (values[k] >= 0) mask[values[k] >>> 5] |= 1 << (values[k] & 31);
      this.ownerMasks.set(p, mask);
    }
    return mask;
  }

  /** Derived partitions' runs by family and content: different off rules often leave the same owners, and one copy serves them all. */
  private readonly runsByContent = new Map<number, Runs[]>();

  private internedRuns(family: Family, runs: Runs): Runs {
    let hash = (0x811c9dc5 ^ runs.values.length ^ (family << 24)) | 0;
    for (let k = 0; k < runs.values.length; k++) hash = Math.imul(Math.imul(hash ^ runs.starts[k], 0x01000193) ^ runs.values[k], 0x01000193);
    const bucket = this.runsByContent.get(hash);
    if (bucket !== undefined) for (const other of bucket) if (sameRuns(other, runs)) return other;
    if (bucket === undefined) this.runsByContent.set(hash, [runs]);
    else bucket.push(runs);
    return runs;
  }

  /**
   * The basis's partition of the same rules (by id, each with the same sources) in the same
   * order: the same object, since both name rules by slot; undefined when the basis has none.
   */
  private basisPartition(family: Family, active: Int32Array): RulePartition | undefined {
    const basis = this.basisRef?.deref();
    if (basis === undefined) return undefined;
    this.basisIndex ??= basis.partitionsByContent();
    const found = this.basisIndex.get(contentHash(family, active))?.find((p) => sameSlots(p, family, active));
    if (found !== undefined) {
      this.partitionSources.reused++;
      // Its outcome runs carry over too when every rule in it kept its action.
      let sameActions = this.sameCatalogueAndAccounts;
      for (let k = 0; k < active.length && sameActions; k++) sameActions = basis.rules[basis.slotPositions[active[k]]].allow === this.rules[this.slotPositions[active[k]]].allow;
      if (sameActions) this.outcomesCarried.add(found);
      else {
        this.touch(active);
        this.updatedFrom.set(found, found);
      }
      return found;
    }
    const updated = this.updatedPartition(basis, family, active);
    if (updated !== undefined) {
      this.partitionSources.updated++;
      this.touch(active);
    }
    return updated;
  }

  /**
   * After an edit of one rule (added, removed, moved, switched, or its interface, sources,
   * destinations, services or schedule changed): the basis's partition of the same list
   * without the rule — or with the rule where the basis had it, which is taken out first
   * (its elements go to their next match) — with the rule put in at its new place (it takes
   * the elements it covers from later rules and from the default). Linear in the elements
   * instead of a sweep over the whole list. Undefined when the basis has neither list.
   */
  private editedSlot: number | undefined;

  private updatedPartition(basis: CompiledModel, family: Family, active: Int32Array): RulePartition | undefined {
    const edited = this.editedRule;
    if (edited === null) return undefined;
    // The edited rule's slot here (by id, looked up once): a list holds it at most once.
    if (this.editedSlot === undefined) {
      const position = this.positionOfId(edited.id);
      this.editedSlot = position < 0 ? -1 : this.ruleSlots[position];
    }
    const at = this.editedSlot < 0 ? -1 : active.indexOf(this.editedSlot);
    const without = at < 0 ? active : active.filter((_, k) => k !== at);
    const index = this.basisIndex as Map<number, RulePartition[]>;
    const lookup = (list: Int32Array) => index.get(contentHash(family, list))?.find((p) => sameSlots(p, family, list));
    let base = lookup(without);
    let removeAt = -1;
    if (base === undefined && edited.basisPosition >= 0) {
      // The list as the basis had it: the rule between its basis neighbours.
      let insertAt = 0;
      while (insertAt < without.length && (this.basisPositions[this.slotPositions[without[insertAt]]] ?? -1) < edited.basisPosition) insertAt++;
      const withIt = new Int32Array(without.length + 1);
      withIt.set(without.subarray(0, insertAt));
      withIt[insertAt] = basis.ruleSlots[edited.basisPosition];
      withIt.set(without.subarray(insertAt), insertAt + 1);
      base = lookup(withIt);
      removeAt = insertAt;
    }
    if (base === undefined) return undefined;

    const domain = this.domains[family];
    const familySlot = family === 4 ? 0 : 1;
    let runs = base.owner;
    if (removeAt >= 0) {
      // Its elements go to the next rule of the basis's list that covers them, else to the default;
      // every other element keeps its owner. Costs the rule's elements and the later rules' words there.
      const removed = base.active[removeAt];
      const { owner, remaining: need } = this.scratch[family];
      const { values } = base.owner;
      // Most often the rule owns nothing there (a shadowed rule: 82 of 100 lists after the
      // benchmark's removal): the runs are the basis partition's own object, so its outcome
      // carries over without being mapped again (outcomeRunsOf).
      let owns = false;
      for (let k = 0; k < values.length && !owns; k++) owns = values[k] === removed;
      if (owns) {
        const freed = freeElementsOwnedBy(base.owner, domain.size, owner, need, (slot) => slot === removed);
        const wordsInOrder = freed.wordsInOrder;
        let count = freed.count;
        for (let k = removeAt + 1; k < base.active.length && count > 0; k++) {
          const slot = base.active[k];
          count -= claimNeeded(need, wordsInOrder, owner, slot, basis.ruleBits[basis.slotPositions[slot]][familySlot]);
        }
        const patched = (this.patchScratch ??= new Uint8Array(this.slotCount + 1));
        patched[removed + 1] = 1;
        runs = patchedRuns(base.owner, patched, owner, domain.size);
        patched[removed + 1] = 0;
      }
    }
    if (at >= 0) {
      // The rule takes what it covers from later rules and from the default.
      const slot = active[at];
      const position = this.slotPositions[slot];
      runs = takenRuns(runs, this.ruleBits[position][familySlot], slot, (owner) => owner < 0 || this.slotPositions[owner] > position, domain.size);
    }
    const updated = new Partition(nextPartitionId++, family, active, runs);
    this.updatedFrom.set(updated, base);
    return updated;
  }

  /**
   * Partitions by the hash of their content (family and the rules' slots in order): this
   * model's own and, after a rule edit, its basis's — cells the edit left alone use the
   * basis's partitions without copying them here, and the next edit looks them up through
   * this index. Built once, then kept up to date as partitions are made.
   */
  private partitionsByContent(): Map<number, RulePartition[]> {
    if (this.contentIndex !== undefined) return this.contentIndex;
    const basis = this.incrementalBasis;
    const out = new Map<number, RulePartition[]>();
    if (basis !== undefined) for (const [hash, bucket] of basis.partitionsByContent()) out.set(hash, [...bucket]);
    this.contentIndex = out;
    for (const p of this.partitions.values()) this.remember(p);
    return out;
  }

  /** Adds a partition to the content index, when there is one. */
  private remember(p: RulePartition): void {
    const index = this.contentIndex;
    if (index === undefined) return;
    const hash = contentHash(p.family, p.active);
    const bucket = index.get(hash);
    if (bucket === undefined) index.set(hash, [p]);
    else if (!bucket.includes(p)) bucket.push(p);
  }

  /**
   * The outcome partition alone. When nothing listens and the probe would get no answer
   * anyway (ICMP echo, or unlistenedPort drop), every source is silent whatever the rules
   * say, so the rules are not evaluated at all.
   */
  outcomeOf(iface: number, to: number, cls: number, slice: number): OutcomePartition {
    const c = this.classes[cls];
    const listening = c.service !== null && this.listening[iface].has(c.service.name);
    if (!listening && (c.kind === "echo" || !this.unlistenedReset)) return this.addresses[to].family === 4 ? SILENT_V4 : SILENT_V6;
    return this.entry(iface, to, cls, slice);
  }

  /** Which rule is the first match for each element, by a bitset sweep over the rules in order. */
  rulePartition(family: Family, active: Int32Array, key: string = `${family}|${active.join(",")}`): RulePartition {
    const cached = this.partitions.get(key);
    if (cached !== undefined) return cached;
    this.partitionSources.swept++;
    this.touch(active);
    const domain = this.domains[family];
    const { remaining, owner, wordOwners, pieceStarts } = this.scratch[family];
    remaining.fill(-1);
    if ((domain.size & 31) !== 0) remaining[domain.words - 1] = (1 << (domain.size & 31)) - 1;
    // Per word: the one rule that took all of it at once, MIXED_WORD, or UNTOUCHED; for a
    // mixed word, where its pieces start (owner holds each piece's slot at its first element).
    wordOwners.fill(UNTOUCHED);
    pieceStarts.fill(0);
    let live = domain.words;
    const familySlot = family === 4 ? 0 : 1;
    outer: for (let k = 0; k < active.length; k++) {
      const slot = active[k];
      const bits = this.ruleBits[this.slotPositions[slot]][familySlot];
      const words = bits.words;
      const masks = bits.masks;
      for (let j = 0; j < words.length; j++) {
        const w = words[j];
        const fresh = remaining[w] & masks[j];
        if (fresh === 0) continue;
        remaining[w] ^= fresh;
        if (fresh === -1) wordOwners[w] = slot;
        else {
          wordOwners[w] = MIXED_WORD;
          let starts = pieceStartBits(fresh);
          pieceStarts[w] |= starts;
          const base = w << 5;
          while (starts !== 0) {
            const low = starts & -starts;
            owner[base + 31 - Math.clz32(low)] = slot;
            starts ^= low;
          }
        }
        if (remaining[w] === 0 && --live === 0) break outer;
      }
    }
    // Elements no rule took go to the default.
    for (let w = 0; w < domain.words && live > 0; w++) {
      if (wordOwners[w] === UNTOUCHED) {
        wordOwners[w] = -1;
        continue;
      }
      let starts = pieceStartBits(remaining[w]);
      if (starts === 0) continue;
      pieceStarts[w] |= starts;
      const base = w << 5;
      while (starts !== 0) {
        const low = starts & -starts;
        owner[base + 31 - Math.clz32(low)] = -1;
        starts ^= low;
      }
    }
    const partition: RulePartition = new Partition(nextPartitionId++, family, active, runsFromPieces(owner, wordOwners, pieceStarts, domain.size));
    this.partitions.set(key, partition);
    this.remember(partition);
    return partition;
  }

  /** Login outcome per element for one service class: denied, second factor, or password alone. */
  loginClassRuns(family: Family, cls: number): Runs {
    const key = `${family}|${cls}`;
    const cached = this.loginRuns.get(key);
    if (cached !== undefined) return cached;
    const name = this.classes[cls].service?.name ?? "";
    // Classes whose services the same accounts may use get the same runs: keyed by those accounts.
    let applies = `${family}`;
    for (const a of this.accounts) if (a.enabled && (a.services === null || a.services.has(name))) applies += `,${a.index}`;
    let runs = this.loginRunsByAccounts.get(applies);
    if (runs === undefined) {
      runs = this.loginRunsOf(family, name);
      this.loginRunsByAccounts.set(applies, runs);
    }
    this.loginRuns.set(key, runs);
    return runs;
  }

  /** loginClassRuns by family and the accounts that apply (a key listing them). */
  private readonly loginRunsByAccounts = new Map<string, Runs>();
  /** Per family and account: its login sources as element index ranges. */
  private readonly accountIndexRanges: Record<Family, (Int32Array | undefined)[]> = { 4: [], 6: [] };

  /**
   * The login runs for a service name: a coverage difference array per second-factor kind
   * (+1 where an account's sources start, -1 past their end), then one pass that takes the
   * most exposed kind covering each element — linear in the accounts' ranges and the
   * elements, not in the elements each account covers.
   */
  private loginRunsOf(family: Family, name: string): Runs {
    const domain = this.domains[family];
    const size = domain.size;
    const mfa = new Int32Array(size + 1);
    const password = new Int32Array(size + 1);
    for (const a of this.accounts) {
      if (!a.enabled || (a.services !== null && !a.services.has(name))) continue;
      let idx = this.accountIndexRanges[family][a.index];
      if (idx === undefined) this.accountIndexRanges[family][a.index] = idx = domain.toIndexRanges(rangesOf(a.loginSources, family));
      const diff = a.secondFactor ? mfa : password;
      for (let i = 0; i < idx.length; i += 2) {
        diff[idx[i]]++;
        diff[idx[i + 1] + 1]--;
      }
    }
    const starts: number[] = [];
    const values: number[] = [];
    let byMfa = 0;
    let byPassword = 0;
    for (let e = 0; e < size; e++) {
      byMfa += mfa[e];
      byPassword += password[e];
      const value = byPassword > 0 ? LOGIN_PASSWORD : byMfa > 0 ? LOGIN_MFA : LOGIN_DENIED;
      if (e === 0 || values[values.length - 1] !== value) {
        starts.push(e);
        values.push(value);
      }
    }
    return { starts: Int32Array.from(starts), values: Int32Array.from(values) };
  }

  private outcomeRuns(family: Family, rules: RulePartition, cls: number, listening: boolean): Runs {
    const kind = this.classes[cls].kind;
    if (!listening || kind !== "login") {
      const passed = !listening ? (kind === "echo" || !this.unlistenedReset ? SILENT : REFUSED) : ANSWERED;
      return mapRuns(rules.owner, this.outcomeTable(passed));
    }
    const allowed = this.allowTable();
    return zipRuns(rules.owner, this.loginClassRuns(family, cls), (owner, login) => (allowed[owner + 1] === 1 ? login : SILENT));
  }

  #outcomeTables = new Map<number, Int32Array>();
  #allowTable: Uint8Array | undefined;

  /** Per first-match owner (slot + 1; 0 for the default): 1 where it allows. */
  private allowTable(): Uint8Array {
    if (this.#allowTable === undefined) {
      const table = new Uint8Array(this.slotCount + 1);
      table[0] = this.defaultAllow ? 1 : 0;
      for (let position = 0; position < this.rules.length; position++) table[this.ruleSlots[position] + 1] = this.rules[position].allow ? 1 : 0;
      this.#allowTable = table;
    }
    return this.#allowTable;
  }

  /** Per first-match owner (slot + 1; 0 for the default): `passed` where it allows, silence where it drops. */
  private outcomeTable(passed: number): Int32Array {
    let table = this.#outcomeTables.get(passed);
    if (table === undefined) {
      const allowed = this.allowTable();
      // Plain loops here and below: `from` over a typed array or an array with a mapping function makes an iterator result per item.
      table = new Int32Array(allowed.length);
      for (let k = 0; k < allowed.length; k++) table[k] = allowed[k] === 1 ? passed : SILENT;
      this.#outcomeTables.set(passed, table);
    }
    return table;
  }

  /** The service class for a service key in this model ("other" when no catalogue service has it). */
  classOfKey(key: string): number {
    return (this.classByKey.get(key) ?? this.classes[this.classes.length - 1]).index;
  }

  /**
   * The rule's sources as a sparse bitset over the family's elements (read-only; shared with
   * the partitions). The diff sweeps it over only the elements an edit can change.
   */
  ruleSourceBits(position: number, family: Family): SparseBits {
    return this.ruleBits[position][family === 4 ? 0 : 1];
  }

  /** The position of the rule a partition names by this slot (owners and `active` lists hold slots). */
  positionOfSlot(slot: number): number {
    return this.slotPositions[slot];
  }

  /**
   * The basis partition a partition of this model was updated from (updatedPartition), or the
   * basis's own partition when it is taken with other actions: outside the sources of the
   * rules the edit changed (changedRuleIds, either version), every element has the same owner
   * in both. Undefined for any other partition.
   */
  partitionBasis(p: RulePartition): RulePartition | undefined {
    return this.updatedFrom.get(p);
  }

  /** The slot partitions name the rule at this position by. */
  slotOf(position: number): number {
    return this.ruleSlots[position];
  }



  /** Element index of an address in its family's domain. */
  elementOf(address: Address): number {
    const d = this.domains[address.family];
    return address.family === 4 ? d.indexOfNumber(Number(address.value)) : d.indexOf(address.value);
  }

  /** Accounts eligible for a login from the element (enabled, allowed on the service, inside login sources). */
  eligibleAccounts(family: Family, element: number, serviceName: string, only: number): number[] {
    const out: number[] = [];
    const bits = this.accountBits[family];
    for (const a of this.accounts) {
      if (only >= 0 && a.index !== only) continue;
      if (!a.enabled || (a.services !== null && !a.services.has(serviceName))) continue;
      if (((bits[a.index][element >>> 5] >>> (element & 31)) & 1) === 0) continue;
      out.push(a.index);
    }
    return out;
  }

  /** Outcome index for an IPv4 source given as a number, for batch lookups. */
  lookupIPv4(entry: OutcomePartition, value: number): number {
    return runValueAt(entry.outcome, this.domains[4].indexOfNumber(value));
  }

  lookup(entry: OutcomePartition, value: bigint): number {
    return runValueAt(entry.outcome, this.domains[entry.family].indexOf(value));
  }

}

/**
 * Frees the elements of the runs whose owning slot `freed` picks: each is marked in `need` (reset
 * first), its owner set to -1; returns the nonzero words of `need` ascending and how many
 * elements were freed — what `claimNeeded` takes.
 */
function freeElementsOwnedBy(runs: Runs, size: number, owner: Int32Array, need: Int32Array, freed: (slot: number) => boolean): { wordsInOrder: Int32Array; count: number } {
  const { starts, values } = runs;
  need.fill(0);
  const needWords: number[] = [];
  let count = 0;
  for (let k = 0; k < values.length; k++) {
    if (!freed(values[k])) continue;
    const end = k + 1 < starts.length ? starts[k + 1] : size;
    for (let element = starts[k]; element < end; element++) {
      const w = element >>> 5;
      if (need[w] === 0) needWords.push(w);
      need[w] |= 1 << (element & 31);
      owner[element] = -1;
      count++;
    }
  }
  return { wordsInOrder: Int32Array.from(needWords).sort(), count };
}

/**
 * Gives the needed elements (bits of `need`, whose nonzero words are listed ascending in
 * `wordsInOrder`) that the rule's bits cover to its slot, taking them out of `need`; returns
 * how many it took. The rule's words are searched from each needed word on, not swept.
 */
function claimNeeded(need: Int32Array, wordsInOrder: Int32Array, owner: Int32Array, slot: number, bits: SparseBits): number {
  const { words, masks } = bits;
  let taken = 0;
  let from = 0;
  for (const w of wordsInOrder) {
    if (need[w] === 0) continue;
    // The first of the rule's words at or after w (both ascending).
    let hi = words.length;
    while (from < hi) {
      const mid = (from + hi) >>> 1;
      if (words[mid] < w) from = mid + 1;
      else hi = mid;
    }
    if (from === words.length) break;
    if (words[from] !== w) continue;
    let hit = need[w] & masks[from];
    if (hit === 0) continue;
    need[w] ^= hit;
    const elementBase = w << 5;
    while (hit !== 0) {
      const low = hit & -hit;
      hit ^= low;
      owner[elementBase + 31 - Math.clz32(low)] = slot;
      taken++;
    }
  }
  return taken;
}

/**
 * Runs like `runs`, except that the elements of `bits` in runs whose owner `takes` allows go
 * to `slot`: a walk over the runs and the bitset's words, equal neighbours merged (as
 * runsFromArray would give), without an element array.
 */
function takenRuns(runs: Runs, bits: SparseBits, slot: number, takes: (owner: number) => boolean, size: number): Runs {
  // A rule shadowed there takes nothing: the same runs object (outcomes kept per runs carry over).
  if (!takesAny(runs, bits, takes, size)) return runs;
  // Into typed scratch (at most a run per element), copied out once: no arrays grown per run.
  if (takenStarts.length < size + 1) {
    takenStarts = new Int32Array(size + 1);
    takenValues = new Int32Array(size + 1);
  }
  const starts = takenStarts;
  const values = takenValues;
  let count = 0;
  let previous = UNTOUCHED;
  const { words, masks } = bits;
  const n = runs.starts.length;
  let j = 0;
  for (let k = 0; k < n; k++) {
    const start = runs.starts[k];
    const end = k + 1 < n ? runs.starts[k + 1] : size;
    const value = runs.values[k];
    if (!takes(value)) {
      if (value !== previous) {
        starts[count] = start;
        values[count++] = previous = value;
      }
      continue;
    }
    while (j < words.length && (words[j] << 5) + 31 < start) j++;
    let cursor = start;
    for (let i = j; i < words.length && words[i] << 5 < end; i++) {
      const base = words[i] << 5;
      let mask = masks[i];
      if (base < start) mask &= -1 << (start - base);
      if (end - base < 32) mask &= (1 << (end - base)) - 1;
      while (mask !== 0) {
        // The lowest set bit and the ones that follow it: one stretch the rule takes.
        const first = 31 - Math.clz32(mask & -mask);
        const inverse = ~(mask >>> first);
        const length = inverse === 0 ? 32 - first : 31 - Math.clz32(inverse & -inverse);
        if (base + first > cursor && value !== previous) {
          starts[count] = cursor;
          values[count++] = previous = value;
        }
        if (slot !== previous) {
          starts[count] = base + first;
          values[count++] = previous = slot;
        }
        cursor = base + first + length;
        mask = first + length >= 32 ? 0 : mask & ~(((1 << length) - 1) << first);
      }
    }
    if (cursor < end && value !== previous) {
      starts[count] = cursor;
      values[count++] = previous = value;
    }
  }
  return { starts: starts.slice(0, count), values: values.slice(0, count) };
}

/** takenRuns's scratch, grown to the largest domain seen. */
let takenStarts = new Int32Array(0);
let takenValues = new Int32Array(0);

/** Whether takenRuns would give any element to the rule: one of its bits lies in a run whose owner it takes from. */
function takesAny(runs: Runs, bits: SparseBits, takes: (owner: number) => boolean, size: number): boolean {
  const { words, masks } = bits;
  const n = runs.starts.length;
  let j = 0;
  for (let k = 0; k < n && j < words.length; k++) {
    if (!takes(runs.values[k])) continue;
    const start = runs.starts[k];
    const end = k + 1 < n ? runs.starts[k + 1] : size;
    while (j < words.length && (words[j] << 5) + 31 < start) j++;
    for (let i = j; i < words.length && words[i] << 5 < end; i++) {
      const base = words[i] << 5;
      let mask = masks[i];
      if (base < start) mask &= -1 << (start - base);
      if (end - base < 32) mask &= (1 << (end - base)) - 1;
      if (mask !== 0) return true;
    }
  }
  return false;
}

/** A list with some of its rules off, for a partition whose active list is made when first read. */
interface ListWithout {
  readonly all: Int32Array;
  /** Positions of the rules that are off. */
  readonly off: Int32Array;
  /** The model's slot → position table (`all` holds slots, in rule order). */
  readonly slotPositions: Int32Array;
}

/**
 * A rule partition. Every partition is of this one class (so the analyses' reads of it stay
 * monomorphic); one of a list with some rules off may have its active list (the list's
 * without those rules) made only when first read: most analyses read only the owners.
 */
class Partition implements RulePartition {
  #active: Int32Array | null;

  constructor(
    readonly id: number,
    readonly family: Family,
    active: Int32Array | null,
    readonly owner: Runs,
    private readonly without: ListWithout | null = null,
  ) {
    this.#active = active;
  }

  get active(): Int32Array {
    if (this.#active === null) {
      const { all, off, slotPositions } = this.without as ListWithout;
      // Where each off rule sits in the whole list (binary search by position), ascending.
      const places = new Int32Array(off.length);
      for (let i = 0; i < off.length; i++) {
        const position = off[i];
        let lo = 0;
        let hi = all.length;
        while (lo < hi) {
          const mid = (lo + hi) >>> 1;
          if (slotPositions[all[mid]] < position) lo = mid + 1;
          else hi = mid;
        }
        places[i] = lo;
      }
      places.sort();
      // The stretches of the whole list between them, copied as blocks.
      const active = new Int32Array(all.length - places.length);
      let from = 0;
      for (let i = 0; i < places.length; i++) {
        active.set(all.subarray(from, places[i]), from - i);
        from = places[i] + 1;
      }
      active.set(all.subarray(from), from - places.length);
      this.#active = active;
    }
    return this.#active;
  }
}

/** In a sweep's word owners: no rule has taken any element of the word yet. */
const UNTOUCHED = -3;

const SILENT_V4: OutcomePartition = { family: 4, outcome: { starts: Int32Array.of(0), values: Int32Array.of(SILENT) } };
const SILENT_V6: OutcomePartition = { family: 6, outcome: { starts: Int32Array.of(0), values: Int32Array.of(SILENT) } };
const SILENT_WEEK_V4: readonly OutcomePartition[] = [SILENT_V4];
const SILENT_WEEK_V6: readonly OutcomePartition[] = [SILENT_V6];

/** Where one version of a rule is a candidate (CompiledModel.candidateRules): interface (-1 any, -2 none), and per device address and class. */
interface CandidateReach {
  readonly iface: number;
  readonly destinations: Uint8Array;
  readonly classes: Uint8Array;
}

/** Most changed rules an incremental compile follows cell by cell; past this nearly every cell changes anyway. */
const MOST_CHANGED_RULES = 16;

type InboundRule = DeviceModel["inboundRules"][number];

/**
 * What an edit of the inbound rules changed. `changed`: the ids of the rules added, removed,
 * changed in any field, or moved (the one rule whose move explains the new order) — null
 * when the order changed otherwise or more rules changed than are worth following cell by
 * cell. `edited`: the one rule whose edit can change rule lists (added, removed, moved,
 * switched on or off, or its interface, sources, destinations, services or schedule changed;
 * a change of action alone changes no list), when exactly one did.
 */
function ruleEdit(before: DeviceModel, after: DeviceModel): { changed: string[] | null; edited: string | null } {
  // Rules before the first difference and after the last are the same rules in the same
  // order: only the window between needs the look by id (an edit touches one place or two).
  const a = before.inboundRules;
  const b = after.inboundRules;
  let head = 0;
  while (head < a.length && head < b.length && a[head].id === b[head].id && sameRule(a[head], b[head])) head++;
  let tail = 0;
  while (tail < a.length - head && tail < b.length - head && a[a.length - 1 - tail].id === b[b.length - 1 - tail].id && sameRule(a[a.length - 1 - tail], b[b.length - 1 - tail])) tail++;
  const was = a.slice(head, a.length - tail);
  const is = b.slice(head, b.length - tail);
  const old = new Map(was.map((r) => [r.id, r]));
  const now = new Map(is.map((r) => [r.id, r]));
  const changed = new Set<string>();
  const listed = new Set<string>();
  for (const [id, r] of now) {
    const previous = old.get(id);
    if (previous === undefined) {
      // An id outside the window is a rule that kept its place: a duplicate id cannot be valid.
      changed.add(id);
      listed.add(id);
    } else if (previous !== r && !sameRule(previous, r)) {
      changed.add(id);
      if (!sameLists(previous, r)) listed.add(id);
    }
  }
  for (const id of old.keys()) {
    if (now.has(id)) continue;
    changed.add(id);
    listed.add(id);
  }
  // The order of the other rules must be unchanged; a move shows as one rule out of place
  // (undefined: nothing moved; null: more than one move).
  const moved = (apart: ReadonlySet<string>): string | null | undefined => {
    const x = was.map((r) => r.id).filter((id) => now.has(id) && !apart.has(id));
    const y = is.map((r) => r.id).filter((id) => old.has(id) && !apart.has(id));
    const first = x.findIndex((id, i) => id !== y[i]);
    if (first < 0) return undefined;
    for (const candidate of [x[first], y[first]]) {
      const x2 = x.filter((id) => id !== candidate);
      const y2 = y.filter((id) => id !== candidate);
      if (x2.every((id, i) => id === y2[i])) return candidate;
    }
    return null;
  };
  let edited: string | null = null;
  if (listed.size <= 1) {
    const one = moved(listed);
    if (one === undefined) edited = listed.size === 1 ? [...listed][0] : null;
    else edited = listed.size === 0 ? one : null;
  }
  const other = moved(changed);
  if (other === null) return { changed: null, edited };
  if (other !== undefined) changed.add(other);
  return { changed: changed.size > MOST_CHANGED_RULES ? null : [...changed], edited };
}

/** Every part of a model but its inbound rules and address book, as text. */
function everythingButRules(m: DeviceModel): string {
  return JSON.stringify([m.schemaVersion, m.device, m.interfaces, m.services, m.serviceGroups, m.schedules, m.accounts, m.operatorNetworks]);
}

/** Whether two versions of a rule are the same in every field. */
function sameRule(a: InboundRule, b: InboundRule): boolean {
  return a === b || (a.action === b.action && a.note === b.note && sameLists(a, b));
}

/**
 * The fields sameRule compares (the id through its callers): typed over every field of a rule,
 * so a field the schema gains fails the typecheck here until sameRule compares it too. A
 * parsed document holds no field beyond the schema's (unknown ones are dropped), so no rule
 * is walked for others — that walk was two thirds of comparing 2,000 rules after an edit.
 */
export const RULE_FIELDS_COMPARED: Readonly<Record<keyof InboundRule, true>> = {
  id: true,
  interface: true,
  sources: true,
  destinations: true,
  services: true,
  schedule: true,
  action: true,
  enabled: true,
  note: true,
};

/** Whether two versions of a rule are in the same candidate lists with the same sources: alike but for the action (and names and notes). */
function sameLists(a: InboundRule, b: InboundRule): boolean {
  return (
    a.enabled === b.enabled &&
    a.interface === b.interface &&
    a.schedule === b.schedule &&
    sameNames(a.sources, b.sources) &&
    sameNames(a.destinations, b.destinations) &&
    sameNames(a.services, b.services)
  );
}

function sameNames(x: readonly unknown[], y: readonly unknown[]): boolean {
  if (x.length !== y.length) return false;
  for (let i = 0; i < x.length; i++) if (x[i] !== y[i]) return false;
  return true;
}

/** Whether two runs lists are equal element by element. */
function sameRuns(a: Runs, b: Runs): boolean {
  if (a === b) return true;
  const n = a.starts.length;
  if (b.starts.length !== n) return false;
  for (let k = 0; k < n; k++) if (a.starts[k] !== b.starts[k] || a.values[k] !== b.values[k]) return false;
  return true;
}

/** Whether the partition is of the family and of these slots, in order. */
function sameSlots(partition: RulePartition, family: Family, active: Int32Array): boolean {
  if (partition.family !== family || partition.active.length !== active.length) return false;
  for (let k = 0; k < active.length; k++) if (partition.active[k] !== active[k]) return false;
  return true;
}

function sameAddressBook(a: DeviceModel, b: DeviceModel): boolean {
  if (a.addresses.length !== b.addresses.length || a.addressGroups.length !== b.addressGroups.length) return false;
  // Plain loops: the book is compared on every compile with a basis (5,000 objects on the benchmark model).
  for (let i = 0; i < a.addresses.length; i++) {
    const x = a.addresses[i];
    const y = b.addresses[i];
    if (x !== y && (x.name !== y.name || !sameNames(x.entries, y.entries))) return false;
  }
  for (let i = 0; i < a.addressGroups.length; i++) {
    const x = a.addressGroups[i];
    const y = b.addressGroups[i];
    if (x !== y && (x.name !== y.name || !sameNames(x.members, y.members))) return false;
  }
  return true;
}

export function parseProbeAddress(text: string, field: string): Address {
  try {
    return parseAddress(text);
  } catch (e) {
    throw new ProbeError(`${field}: ${e instanceof Error ? e.message : String(e)}`);
  }
}
