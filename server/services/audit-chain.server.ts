// Verifying the audit log's hash chains (docs/decisions/020). The database chains every entry as
// it is inserted (migrations/20261206-0300-audit-hash-chain.ts); this walks each chain in order and
// recomputes every hash here, with Node's SHA-256 over the canonical content PostgreSQL serialises,
// so a changed, removed, reordered or unchained entry is found and named. It only reads: the
// runtime role may run it.
import { createHash } from "node:crypto";
import { QueryTypes, type Sequelize } from "sequelize";
import { plural } from "../engine/format.ts";

/** The chain of entries that belong to no organisation (sign-ups, account-wide events). */
export const ACCOUNT_CHAIN = "00000000-0000-0000-0000-000000000000";
/** The previous hash of a chain's first entry. */
export const GENESIS_HASH = "0".repeat(64);

export type ChainProblem =
  /** The entry's content no longer matches its hash. */
  | "changed"
  /** Entries are missing before this one (its place skips ahead). */
  | "missing"
  /** The entry does not link to the hash of the entry before it. */
  | "relinked"
  /** The chain's recorded head lies beyond its last entry: entries at its end are missing. */
  | "truncated"
  /** The chain's recorded head does not match its last entry. */
  | "head"
  /** An entry without a place in any chain (inserted with the chaining trigger off). */
  | "unchained"
  /** An anchor recorded earlier no longer matches the chain: it was rewritten. */
  | "anchor";

export type ChainBreak = {
  chain: string;
  problem: ChainProblem;
  /** The first broken entry, when there is one to name. */
  entryId: string | null;
  at: Date | null;
  /** The entry's place in its chain (1 = first), or the place the problem was found at. */
  place: number;
  message: string;
};

export type ChainHead = { chain: string; organisationName: string | null; entries: number; seq: number; hash: string };

export type ChainReport = { chains: ChainHead[]; entries: number; breaks: ChainBreak[] };

/** A chain's last place and hash, written down off the machine after a verify, to check later that the chain was not rewritten. */
export type ChainAnchors = Record<string, { seq: number; hash: string }>;

type EntryRow = { id: string; created_at: Date; chain_seq: string; prev_hash: string; hash: string; canonical: string };

const BATCH = 2_000;
const ENTRIES = { one: "entry is", other: "entries are" } as const;

export function sha256Hex(text: string): string {
  return createHash("sha256").update(text, "utf8").digest("hex");
}

function when(at: Date | null): string {
  return at ? at.toISOString() : "an unknown time";
}

/**
 * Walks every chain (or one organisation's: pass its id, or null for the account chain) and
 * reports each chain's first break. `anchors` are heads recorded by an earlier verify: each must
 * still be in its chain with the same hash.
 */
export async function verifyAuditChains(sequelize: Sequelize, options: { chain?: string; anchors?: ChainAnchors } = {}): Promise<ChainReport> {
  const only = options.chain;
  const heads = await sequelize.query<{ chain_key: string; seq: string; hash: string }>(
    `SELECT chain_key, seq, hash FROM audit_chain_heads ${only ? "WHERE chain_key = :only" : ""}`,
    { type: QueryTypes.SELECT, replacements: { only } },
  );
  const present = await sequelize.query<{ chain_key: string }>(
    `SELECT DISTINCT audit_chain_key(organisation_id) AS chain_key FROM audit_events ${only ? "WHERE audit_chain_key(organisation_id) = :only" : ""}`,
    { type: QueryTypes.SELECT, replacements: { only } },
  );
  const headOf = new Map(heads.map((head) => [head.chain_key, { seq: Number(head.seq), hash: head.hash.trim() }]));
  const keys = [...new Set([...heads.map((head) => head.chain_key), ...present.map((row) => row.chain_key), ...Object.keys(options.anchors ?? {}).filter((key) => !only || key === only)])].sort();
  const names = new Map(
    (await sequelize.query<{ id: string; name: string }>("SELECT id, name FROM organisations WHERE id IN (:keys)", { type: QueryTypes.SELECT, replacements: { keys: keys.length ? keys : [ACCOUNT_CHAIN] } }))
      .map((row) => [row.id, row.name]),
  );

  const breaks: ChainBreak[] = [];
  const chains: ChainHead[] = [];
  let entries = 0;
  for (const chain of keys) {
    const anchor = options.anchors?.[chain];
    let place = 0;
    let previous = GENESIS_HASH;
    let count = 0;
    let broken: ChainBreak | null = null;
    walk: for (;;) {
      const rows = await sequelize.query<EntryRow>(
        `SELECT id, created_at, chain_seq, prev_hash, hash, audit_event_canonical(e) AS canonical
           FROM audit_events e
          WHERE audit_chain_key(organisation_id) = :chain AND chain_seq > :after
          ORDER BY chain_seq LIMIT ${BATCH}`,
        { type: QueryTypes.SELECT, replacements: { chain, after: place } },
      );
      for (const row of rows) {
        const seq = Number(row.chain_seq);
        const base = { chain, entryId: String(row.id), at: row.created_at, place: seq };
        count += 1;
        if (seq !== place + 1) {
          const gap = seq - place - 1;
          broken = { ...base, problem: "missing", message: `${plural(gap, ENTRIES)} missing before entry ${row.id} of ${when(row.created_at)} (place ${seq}; the entry before it is at place ${place})` };
        } else if (sha256Hex(row.canonical) !== row.hash?.trim()) {
          broken = { ...base, problem: "changed", message: `entry ${row.id} of ${when(row.created_at)} (place ${seq}) was changed after it was written: its content no longer matches its hash` };
        } else if (row.prev_hash?.trim() !== previous) {
          broken = { ...base, problem: "relinked", message: `entry ${row.id} of ${when(row.created_at)} (place ${seq}) does not link to the entry before it: that entry was replaced or rewritten` };
        } else if (anchor && seq === anchor.seq && row.hash.trim() !== anchor.hash) {
          broken = { ...base, problem: "anchor", message: `entry ${row.id} of ${when(row.created_at)} (place ${seq}) does not match the anchor recorded earlier: the chain was rewritten up to here` };
        }
        if (broken) break walk;
        place = seq;
        previous = row.hash.trim();
      }
      if (rows.length < BATCH) break;
    }
    entries += count;
    const head = headOf.get(chain);
    if (!broken && anchor && place < anchor.seq) {
      broken = { chain, problem: "anchor", entryId: null, at: null, place: anchor.seq, message: `the chain ends at place ${place}, before the anchor recorded earlier at place ${anchor.seq}: entries at its end were removed` };
    }
    if (!broken && !head && place > 0) {
      broken = { chain, problem: "head", entryId: null, at: null, place, message: "the chain's recorded head is missing" };
    }
    if (!broken && head && head.seq > place) {
      const gap = head.seq - place;
      broken = { chain, problem: "truncated", entryId: null, at: null, place: place + 1, message: `the last ${plural(gap, ENTRIES)} missing: the chain ends at place ${place} but its head is at place ${head.seq}` };
    }
    if (!broken && head && (head.seq < place || head.hash !== previous)) {
      broken = { chain, problem: "head", entryId: null, at: null, place, message: `the chain's recorded head (place ${head.seq}) does not match its last entry (place ${place})` };
    }
    if (broken) breaks.push(broken);
    chains.push({ chain, organisationName: names.get(chain) ?? null, entries: count, seq: place, hash: previous });
  }

  const unchained = await sequelize.query<{ id: string; created_at: Date; chain_key: string }>(
    `SELECT id, created_at, audit_chain_key(organisation_id) AS chain_key FROM audit_events
      WHERE (chain_seq IS NULL OR hash IS NULL OR prev_hash IS NULL) ${only ? "AND audit_chain_key(organisation_id) = :only" : ""}
      ORDER BY id LIMIT 1`,
    { type: QueryTypes.SELECT, replacements: { only } },
  );
  for (const row of unchained) {
    breaks.push({ chain: row.chain_key, problem: "unchained", entryId: String(row.id), at: row.created_at, place: 0, message: `entry ${row.id} of ${when(row.created_at)} has no place in the chain: it was inserted around the chaining` });
  }
  return { chains, entries, breaks };
}

/** The heads of a verified report, to keep off the machine and pass back as anchors later. */
export function anchorsOf(report: ChainReport): ChainAnchors {
  return Object.fromEntries(report.chains.filter((chain) => chain.seq > 0).map((chain) => [chain.chain, { seq: chain.seq, hash: chain.hash }]));
}
