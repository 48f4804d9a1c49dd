// Anonymising a copy of a device model for teaching (issue 12, docs/decisions/016). Pure.
//
// Names a customer chose are replaced by names of their kind ("net-3", "rule-7"); rule notes
// are cleared. Addresses are remapped by one permutation of each family's address space that
// moves whole blocks:
//
//   - the public blocks the model names move into the documentation ranges (RFC 5737 for
//     IPv4: 192.0.2.0/24, 198.51.100.0/24, 203.0.113.0/24; RFC 3849 for IPv6: 2001:db8::/32);
//   - unique-local IPv6 blocks (RFC 4193, whose random global ID identifies a site) move into
//     fd00::/16;
//   - RFC 1918 and the other private space stay where they are.
//
// Each block the model names is moved by translation onto a free aligned block of the same
// size; the documentation addresses it displaces take the moved block's old place, so the
// mapping is a bijection of the whole space. A source outside every named block keeps its
// address. Every set the model writes is therefore mapped onto a set of the same size and the
// same structure, and every probe's outcome is the original's with its addresses mapped: the
// copy's exposure counts equal the original's, address by mapped address
// (tests/unit/training-anonymise.test.ts checks it over random models).
import { FAMILY, formatAddress, parseAddress, parseEntry, parseInterfaceAddress } from "../engine/addresses.ts";
import type { Family } from "../engine/addresses.ts";
import { collapse, complement, intersect, isSubset, union } from "../engine/address-sets.ts";
import type { Ranges } from "../engine/address-sets.ts";
import { DEFAULT_ACCOUNT_NAMES, nonPrivate } from "../engine/findings/index.ts";
import type { DeviceModel } from "../engine/index.ts";
import { ALL_WEEK_SCHEDULE, ANY_INTERFACE, ANY_SERVICE, BUILTIN_SERVICES, isBuiltinAddressName, looksLikeAddressEntry } from "../engine/vocabulary.ts";

/** An aligned block of 2^k addresses starting at a multiple of its size. */
type Block = { first: bigint; size: bigint };
/** Addresses first…last move by `offset`. */
type Move = { first: bigint; last: bigint; offset: bigint };

type AddressClass = {
  family: Family;
  /** Who they are, in the refusal's words. */
  words: string;
  region: Ranges;
  /** Where its blocks go: aligned blocks, as CIDR text. */
  pool: readonly string[];
  poolWords: string;
};

const rangeOf = (text: string): [bigint, bigint] => {
  const { range } = parseEntry(text);
  return [range.first, range.last];
};

const CLASSES: readonly AddressClass[] = [
  {
    family: 4,
    words: "public IPv4",
    region: nonPrivate(4),
    // RFC 5737 §3
    pool: ["192.0.2.0/24", "198.51.100.0/24", "203.0.113.0/24"],
    poolWords: "the 768 documentation addresses of RFC 5737",
  },
  {
    family: 6,
    words: "public IPv6",
    region: nonPrivate(6),
    // RFC 3849
    pool: ["2001:db8::/32"],
    poolWords: "the IPv6 documentation prefix 2001:db8::/32 (RFC 3849)",
  },
  {
    family: 6,
    words: "unique-local IPv6",
    // RFC 4193 §3.1
    region: collapse([rangeOf("fc00::/7")]),
    pool: ["fd00::/16"],
    poolWords: "fd00::/16",
  },
];

/** Why a model could not be anonymised, in words for the person copying it. */
export class AnonymiseError extends Error {
  override name = "AnonymiseError";
}

// ---------------------------------------------------------------------------------------------
// Blocks

function blockOf(text: string): Block {
  const [first, last] = rangeOf(text);
  return { first, size: last - first + 1n };
}

/** The minimal aligned blocks covering first…last (RFC 4632 §3.1 aggregation). */
function blocksOf(first: bigint, last: bigint, family: Family): Block[] {
  const out: Block[] = [];
  let cursor = first;
  while (cursor <= last) {
    let size = 1n;
    while (size < FAMILY[family].size && cursor % (size * 2n) === 0n && cursor + size * 2n - 1n <= last) size *= 2n;
    out.push({ first: cursor, size });
    cursor += size;
  }
  return out;
}

function blocksOfRanges(ranges: Ranges, family: Family): Block[] {
  const out: Block[] = [];
  for (let i = 0; i < ranges.length; i += 2) out.push(...blocksOf(ranges[i], ranges[i + 1], family));
  return out;
}

/** Aligned blocks nest or are apart: keep those no other contains. */
function maximalBlocks(blocks: readonly Block[]): Block[] {
  const sorted = [...blocks].sort((a, b) => (a.first < b.first ? -1 : a.first > b.first ? 1 : a.size > b.size ? -1 : a.size < b.size ? 1 : 0));
  const out: Block[] = [];
  for (const block of sorted) {
    const last = out.at(-1);
    if (last && block.first + block.size <= last.first + last.size) continue;
    out.push(block);
  }
  return out;
}

const rangesOfBlocks = (blocks: readonly Block[]): Ranges => collapse(blocks.map((block) => [block.first, block.first + block.size - 1n] as const));

/**
 * A free aligned block of the pool for each block, largest first (a buddy split: the smallest
 * free block that fits, halved until it is the right size); null when they do not fit.
 */
function allocate(blocks: readonly Block[], pool: readonly Block[]): Map<Block, Block> | null {
  const free = [...pool];
  const targets = new Map<Block, Block>();
  const order = [...blocks].sort((a, b) => (a.size > b.size ? -1 : a.size < b.size ? 1 : a.first < b.first ? -1 : 1));
  for (const block of order) {
    let best = -1;
    free.forEach((candidate, index) => {
      if (candidate.size < block.size) return;
      const current = free[best];
      if (best < 0 || candidate.size < current.size || (candidate.size === current.size && candidate.first < current.first)) best = index;
    });
    if (best < 0) return null;
    let [target] = free.splice(best, 1);
    while (target.size > block.size) {
      const half = target.size / 2n;
      free.push({ first: target.first + half, size: half });
      target = { first: target.first, size: half };
    }
    targets.set(block, target);
  }
  return targets;
}

// ---------------------------------------------------------------------------------------------
// The permutation of one family

/** The moves of one family, sorted and apart; an address in none keeps its value. */
class Permutation {
  constructor(readonly moves: readonly Move[]) {}

  value(value: bigint): bigint {
    for (const move of this.moves) if (value >= move.first && value <= move.last) return value + move.offset;
    return value;
  }

  /** The image of first…last, as canonical ranges. */
  ranges(first: bigint, last: bigint): Ranges {
    const pieces: Array<readonly [bigint, bigint]> = [];
    let cursor = first;
    for (const move of this.moves) {
      if (move.last < cursor) continue;
      if (move.first > last) break;
      if (move.first > cursor) pieces.push([cursor, move.first - 1n]);
      const end = move.last < last ? move.last : last;
      const start = move.first > cursor ? move.first : cursor;
      pieces.push([start + move.offset, end + move.offset]);
      cursor = end + 1n;
      if (cursor > last) break;
    }
    if (cursor <= last) pieces.push([cursor, last]);
    return collapse(pieces);
  }
}

/** Moves first…last of `from` onto `to` in order: both lists of ranges hold the same number of addresses. */
function streamMoves(from: Ranges, to: Ranges): Move[] {
  const moves: Move[] = [];
  let i = 0;
  let j = 0;
  let a = from[0];
  let b = to[0];
  while (i < from.length && j < to.length) {
    const leftA = from[i + 1] - a + 1n;
    const leftB = to[j + 1] - b + 1n;
    const length = leftA < leftB ? leftA : leftB;
    moves.push({ first: a, last: a + length - 1n, offset: b - a });
    a += length;
    b += length;
    if (a > from[i + 1]) {
      i += 2;
      a = from[i];
    }
    if (b > to[j + 1]) {
      j += 2;
      b = to[j];
    }
  }
  return moves;
}

/**
 * The permutation of one family for the sets the model writes. `required` are entries' ranges
 * (every one must be representable), `optional` blocks are interface links, moved whole when
 * they fit so a device address keeps its place in its link, else left to their host address.
 */
function permutationFor(family: Family, required: readonly Ranges[], optional: readonly Block[]): Permutation {
  const moves: Move[] = [];
  for (const addressClass of CLASSES.filter((entry) => entry.family === family)) {
    const pool = addressClass.pool.map(blockOf);
    const poolRanges = rangesOfBlocks(pool);
    const pieces = required.map((ranges) => intersect(ranges, addressClass.region)).filter((ranges) => ranges.length > 0);
    // A piece that covers the whole pool may cover all the class moves (`any` written as 0.0.0.0/0): it maps onto itself.
    const covering = pieces.filter((ranges) => isSubset(poolRanges, ranges));
    const named = pieces.filter((ranges) => !isSubset(poolRanges, ranges)).flatMap((ranges) => blocksOfRanges(ranges, family));
    const optionalHere = optional.filter((block) => isSubset([block.first, block.first + block.size - 1n], addressClass.region));
    let blocks = maximalBlocks([...named, ...optionalHere]);
    let targets = allocate(blocks, pool);
    if (targets === null && optionalHere.length > 0) {
      blocks = maximalBlocks(named);
      targets = allocate(blocks, pool);
    }
    if (targets === null) {
      const largest = [...blocks].sort((a, b) => (a.size > b.size ? -1 : 1))[0];
      const total = blocks.reduce((sum, block) => sum + block.size, 0n);
      throw new AnonymiseError(
        `The ${addressClass.words} addresses this device names (${blocks.length} blocks, ${total} addresses; the largest ${formatAddress(family, largest.first)} and the ${largest.size - 1n} after it) do not fit in ${addressClass.poolWords}. Copy it without anonymising, or narrow those entries first.`,
      );
    }
    const sources = rangesOfBlocks(blocks);
    const destinations = rangesOfBlocks([...targets.values()]);
    const moved = union(sources, destinations);
    for (const ranges of covering) {
      if (!isSubset(moved, ranges)) throw new AnonymiseError(`An entry covers part of the ${addressClass.words} addresses that move into ${addressClass.poolWords}, and would give their old places away. Narrow it, or copy without anonymising.`);
    }
    for (const [block, target] of targets) moves.push({ first: block.first, last: block.first + block.size - 1n, offset: target.first - block.first });
    // The documentation addresses the model did not name take the places the moved blocks left.
    const complementOf = (ranges: Ranges, within: Ranges) => intersect(within, complement(ranges, family));
    moves.push(...streamMoves(complementOf(sources, destinations), complementOf(destinations, sources)));
  }
  moves.sort((a, b) => (a.first < b.first ? -1 : 1));
  return new Permutation(moves);
}


/** Text for a range: an address, a CIDR when it is one aligned block, else "A-B". */
function rangeText(family: Family, first: bigint, last: bigint): string[] {
  if (first === last) return [formatAddress(family, first)];
  const blocks = blocksOf(first, last, family);
  if (blocks.length === 1) return [`${formatAddress(family, first)}/${FAMILY[family].bits - log2(blocks[0].size)}`];
  return [`${formatAddress(family, first)}-${formatAddress(family, last)}`];
}

function log2(size: bigint): number {
  let bits = 0;
  for (let value = size; value > 1n; value >>= 1n) bits++;
  return bits;
}

// ---------------------------------------------------------------------------------------------
// Names

/** New names per kind, in document order. */
export type NameMaps = {
  interfaces: Map<string, string>;
  addresses: Map<string, string>;
  services: Map<string, string>;
  schedules: Map<string, string>;
  rules: Map<string, string>;
  accounts: Map<string, string>;
};

function namesOf(model: DeviceModel): NameMaps {
  const numbered = <T>(items: readonly T[], name: (item: T) => string, label: (item: T, n: number) => string) => {
    const counts = new Map<string, number>();
    return new Map(
      items.map((item) => {
        const key = label(item, 0);
        const n = (counts.get(key) ?? 0) + 1;
        counts.set(key, n);
        return [name(item), label(item, n)];
      }),
    );
  };
  const addresses = new Map([...numbered(model.addresses, (object) => object.name, (_, n) => `net-${n}`), ...numbered(model.addressGroups, (group) => group.name, (_, n) => `net-group-${n}`)]);
  const services = new Map([...numbered(model.services, (service) => service.name, (_, n) => `service-${n}`), ...numbered(model.serviceGroups, (group) => group.name, (_, n) => `service-group-${n}`)]);
  // A factory-default account name is the trade's, not the customer's: it stays, so its finding does too.
  const accounts = new Map(
    Array.from(numbered(model.accounts, (account) => account.name, (_, n) => `account-${n}`), ([name, replacement]) => [name, DEFAULT_ACCOUNT_NAMES.includes(name.toLowerCase()) ? name : replacement] as const),
  );
  return {
    interfaces: numbered(model.interfaces, (entry) => entry.name, (entry, n) => `${entry.role}-${n}`),
    addresses,
    services,
    schedules: numbered(model.schedules, (schedule) => schedule.name, (_, n) => `window-${n}`),
    rules: numbered(model.inboundRules, (rule) => rule.id, (_, n) => `rule-${n}`),
    accounts,
  };
}

// ---------------------------------------------------------------------------------------------
// The copy

export type Anonymised = {
  document: DeviceModel;
  names: NameMaps;
  /** An address of the original, as the copy writes it (RFC 5952 for IPv6). */
  mapAddress: (text: string) => string;
};

/**
 * The anonymised copy of a validated, self-contained model (its shared objects inlined), named
 * `deviceName`. Throws AnonymiseError when the addresses cannot be remapped into the
 * documentation ranges without changing what any probe gets.
 */
export function anonymiseModel(model: DeviceModel, deviceName: string): Anonymised {
  const entryRanges: Record<Family, Ranges[]> = { 4: [], 6: [] };
  const links: Record<Family, Block[]> = { 4: [], 6: [] };
  const addEntry = (text: string) => {
    const { range } = parseEntry(text);
    entryRanges[range.family].push([range.first, range.last]);
  };
  for (const entry of model.interfaces) {
    for (const text of entry.addresses) {
      const address = parseInterfaceAddress(text);
      entryRanges[address.family].push([address.value, address.value]);
      // Links up to a /24 (IPv4) or a /48 (IPv6) move whole when they fit.
      const bits = FAMILY[address.family].bits;
      if (address.prefix >= (address.family === 4 ? 24 : 48) && address.prefix < bits) {
        const size = 1n << BigInt(bits - address.prefix);
        links[address.family].push({ first: (address.value / size) * size, size });
      }
    }
  }
  for (const object of model.addresses) object.entries.forEach(addEntry);
  for (const account of model.accounts) account.loginSources.filter(looksLikeAddressEntry).forEach(addEntry);
  const permutations: Record<Family, Permutation> = { 4: permutationFor(4, entryRanges[4], links[4]), 6: permutationFor(6, entryRanges[6], links[6]) };

  const mapEntry = (text: string): string[] => {
    const { range } = parseEntry(text);
    const image = permutations[range.family].ranges(range.first, range.last);
    // Unmoved (private space, or a set that holds every moved block): the text stays as written.
    if (image.length === 2 && image[0] === range.first && image[1] === range.last) return [text];
    const out: string[] = [];
    for (let i = 0; i < image.length; i += 2) out.push(...rangeText(range.family, image[i], image[i + 1]));
    return out;
  };
  const mapAddress = (text: string): string => {
    const address = parseAddress(text);
    return formatAddress(address.family, permutations[address.family].value(address.value));
  };

  const names = namesOf(model);
  const rename = (map: Map<string, string>) => (name: string) => map.get(name) ?? name;
  const address = (name: string) => (isBuiltinAddressName(name) ? name : rename(names.addresses)(name));
  const service = (name: string) => (name === ANY_SERVICE || BUILTIN_SERVICES.some((entry) => entry.name === name) ? name : rename(names.services)(name));
  const document: DeviceModel = {
    ...model,
    device: { ...model.device, name: deviceName },
    interfaces: model.interfaces.map((entry) => ({
      ...entry,
      name: rename(names.interfaces)(entry.name),
      addresses: entry.addresses.map((text) => {
        const parsed = parseInterfaceAddress(text);
        const mapped = formatAddress(parsed.family, permutations[parsed.family].value(parsed.value));
        return text.includes("/") ? `${mapped}/${parsed.prefix}` : mapped;
      }),
      listeners: entry.listeners.map(service),
    })),
    services: model.services.map((entry) => ({ ...entry, name: service(entry.name) })),
    addresses: model.addresses.map((object) => ({ ...object, name: address(object.name), entries: object.entries.flatMap(mapEntry) })),
    addressGroups: model.addressGroups.map((group) => ({ ...group, name: address(group.name), members: group.members.map(address) })),
    serviceGroups: model.serviceGroups.map((group) => ({ ...group, name: service(group.name), members: group.members.map(service) })),
    schedules: model.schedules.map((schedule) => ({ ...schedule, name: rename(names.schedules)(schedule.name) })),
    inboundRules: model.inboundRules.map((rule) => ({
      ...rule,
      id: rename(names.rules)(rule.id),
      interface: rule.interface === ANY_INTERFACE ? rule.interface : rename(names.interfaces)(rule.interface),
      sources: rule.sources.map(address),
      destinations: rule.destinations.map(address),
      services: rule.services.map(service),
      schedule: rule.schedule === ALL_WEEK_SCHEDULE ? rule.schedule : rename(names.schedules)(rule.schedule),
      // Free text may name the customer, a ticket or a person.
      note: "",
    })),
    accounts: model.accounts.map((account) => ({
      ...account,
      name: rename(names.accounts)(account.name),
      loginSources: account.loginSources.flatMap((item) => (looksLikeAddressEntry(item) ? mapEntry(item) : [address(item)])),
      services: account.services.map(service),
    })),
    operatorNetworks: model.operatorNetworks.map(address),
  };
  return { document, names, mapAddress };
}
