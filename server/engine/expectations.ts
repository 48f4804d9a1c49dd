// Expectations: what a team records must always hold on a device, checked exactly on any
// revision. Two kinds:
//   probe — one probe and the outcome it must get ("198.51.100.7 → wan https: Login with
//           second factor"), at one week time or in every slice of the week;
//   bound — a set of sources (a CIDR list, or every non-private source), an interface and a
//           service, and the most exposed outcome any of them may get there, over every
//           destination address and every slice of the week ("no non-private source gets
//           more than No answer on wan ssh").
// Bounds are decided on the outcome partitions themselves (every address, every slice), never
// by sampling. A failure carries a witness probe that `trace` replays.
// The file format is our own (docs/engine.md, "Expectations"): { format, version, expectations }.

import { z } from "zod";
import { formatAddress, parseEntry } from "./addresses.ts";
import type { Family } from "./addresses.ts";
import { collapse, countOf, intersect, rangesOf, setFromRanges } from "./address-sets.ts";
import type { AddressSet } from "./address-sets.ts";
import { arrivals } from "./analysis.ts";
import { ProbeError } from "./compile.ts";
import type { CompiledModel } from "./compile.ts";
import type { Runs } from "./domain.ts";
import { outcomeSets } from "./exposure.ts";
import { NON_PRIVATE, witnessSource } from "./findings/context.ts";
import { formatCount, pluralWord } from "./format.ts";
import { formatPath } from "./model.ts";
import type { ValidationIssue } from "./model.ts";
import { formatWeekMinute } from "./schedules.ts";
import { traceProbe } from "./trace.ts";
import { NAME_PATTERN, OUTCOME_LABELS, OUTCOMES, outcomeRank } from "./vocabulary.ts";
import type { Outcome } from "./vocabulary.ts";
import { instantInSlice, instantOfWeekMinute, parseWeekTime, WEEK_TIME_PATTERN } from "./week-times.ts";

/** The file format's name and version, written on export and required on import. */
export const EXPECTATIONS_FORMAT = "sallyport-expectations";
export const EXPECTATIONS_VERSION = 1;
/** How many expectations one device may keep (a list a team can read through). */
export const MAX_EXPECTATIONS = 200;
/** The word for "every non-private source" in a bound (RFC 1918, RFC 4193, RFC 6890 special-purpose space excluded; PRODUCT.md §5). */
export const NON_PRIVATE_SOURCES = "non-private";
/** A probe expectation's `when` for "in every slice of the week". */
export const ALL_WEEK = "all-week";

const SERVICE_TEXT = /^(?:[A-Za-z0-9._-]{1,63}|(?:tcp|udp)\/[1-9][0-9]{0,4}|icmp\/echo)$/;

function isAddress(text: string): boolean {
  try {
    const range = parseEntry(text).range;
    return range.first === range.last && !text.includes("/") && !text.includes("-");
  } catch {
    return false;
  }
}

function isEntry(text: string): boolean {
  try {
    parseEntry(text);
    return true;
  } catch {
    return false;
  }
}

const id = z.string().regex(NAME_PATTERN, { message: "must be 1-63 characters of A-Z a-z 0-9 . _ -" });
const note = z.string().trim().max(300, { message: "must be at most 300 characters" }).default("");
const interfaceName = z.string().regex(NAME_PATTERN, { message: "must be an interface name" });
const service = z.string().regex(SERVICE_TEXT, { message: "must be a service name, tcp/PORT, udp/PORT or icmp/echo" });
const outcome = z.enum(OUTCOMES, { message: `must be one of ${OUTCOMES.join(", ")}` });

export const ProbeExpectationSchema = z.strictObject({
  id,
  note,
  kind: z.literal("probe"),
  from: z.string().trim().refine(isAddress, { message: "must be one IPv4 or IPv6 address" }),
  interface: interfaceName,
  /** A device address; omitted: the interface's first address of the source's family (as `trace`). */
  to: z.string().trim().refine(isAddress, { message: "must be one IPv4 or IPv6 address" }).optional(),
  service,
  /** "all-week" (every slice must give the outcome) or a week time on the device's clock, "tue 10:00". */
  when: z.union([z.literal(ALL_WEEK), z.string().regex(WEEK_TIME_PATTERN, { message: 'must be "all-week" or a week time such as "tue 10:00"' })]).default(ALL_WEEK),
  expect: outcome,
});

export const BoundExpectationSchema = z.strictObject({
  id,
  note,
  kind: z.literal("bound"),
  /** "non-private", or CIDRs, addresses and ranges. */
  sources: z.union([
    z.literal(NON_PRIVATE_SOURCES),
    z
      .array(z.string().trim().refine(isEntry, { message: "must be a CIDR, an address or a range A-B" }))
      .min(1, { message: "must name at least one CIDR" })
      .max(100, { message: "must name at most 100 CIDRs" }),
  ]),
  interface: interfaceName,
  service,
  /** The most exposed outcome any of the sources may get. */
  atMost: outcome,
});

export const ExpectationSchema = z.discriminatedUnion("kind", [ProbeExpectationSchema, BoundExpectationSchema], {
  message: 'kind must be "probe" or "bound"',
});

export type ProbeExpectation = z.output<typeof ProbeExpectationSchema>;
export type BoundExpectation = z.output<typeof BoundExpectationSchema>;
export type Expectation = z.output<typeof ExpectationSchema>;
export type ExpectationInput = z.input<typeof ExpectationSchema>;

const ListSchema = z
  .array(ExpectationSchema)
  .max(MAX_EXPECTATIONS, { message: `must hold at most ${MAX_EXPECTATIONS} expectations` })
  .superRefine((list, context) => {
    const seen = new Set<string>();
    list.forEach((expectation, index) => {
      if (seen.has(expectation.id)) context.addIssue({ code: "custom", path: [index, "id"], message: `"${expectation.id}" is used by an earlier expectation` });
      seen.add(expectation.id);
    });
  });

export const ExpectationsFileSchema = z.strictObject({
  format: z.literal(EXPECTATIONS_FORMAT, { message: `must be "${EXPECTATIONS_FORMAT}"` }),
  version: z.literal(EXPECTATIONS_VERSION, { message: `must be ${EXPECTATIONS_VERSION}` }),
  /** The device the list was exported from; informational. */
  device: z.string().max(200).optional(),
  expectations: ListSchema,
});

export type ExpectationsFile = z.output<typeof ExpectationsFileSchema>;

export type ParsedExpectations = { readonly ok: true; readonly expectations: readonly Expectation[] } | { readonly ok: false; readonly errors: readonly ValidationIssue[] };

function issuesOf(error: z.ZodError, prefix: readonly PropertyKey[] = []): ValidationIssue[] {
  return error.issues.map((issue) => ({ path: formatPath([...prefix, ...issue.path]), message: issue.message }));
}

/** Reads an expectations file (the JSON value); every error names its path ("expectations[2].from"). */
export function parseExpectationsFile(input: unknown): ParsedExpectations {
  const parsed = ExpectationsFileSchema.safeParse(input);
  return parsed.success ? { ok: true, expectations: parsed.data.expectations } : { ok: false, errors: issuesOf(parsed.error) };
}

/** Reads one expectation (a form's fields gathered into an object). */
export function parseExpectation(input: unknown): { readonly ok: true; readonly expectation: Expectation } | { readonly ok: false; readonly errors: readonly ValidationIssue[] } {
  const parsed = ExpectationSchema.safeParse(input);
  return parsed.success ? { ok: true, expectation: parsed.data } : { ok: false, errors: issuesOf(parsed.error) };
}

/** The file an export writes. */
export function expectationsFile(expectations: readonly Expectation[], device?: string): ExpectationsFile {
  return { format: EXPECTATIONS_FORMAT, version: EXPECTATIONS_VERSION, ...(device === undefined ? {} : { device }), expectations: [...expectations] };
}

// ---------------------------------------------------------------------------------------------
// Words

/** "non-private source(s)" or "source(s) in 198.51.100.0/24, …". */
function sourcesWords(sources: BoundExpectation["sources"], count: number | bigint = 1): string {
  const noun = pluralWord(count, { one: "source", other: "sources" });
  if (sources === NON_PRIVATE_SOURCES) return `non-private ${noun}`;
  const shown = sources.slice(0, 3).join(", ");
  return `${noun} in ${shown}${sources.length > 3 ? ` (+${sources.length - 3} more)` : ""}`;
}

/** What the expectation says, in one line. */
export function expectationWords(expectation: Expectation): string {
  if (expectation.kind === "probe") {
    const to = expectation.to === undefined ? "" : ` (${expectation.to})`;
    const when = expectation.when === ALL_WEEK ? "all week" : `at ${expectation.when}`;
    return `${expectation.from} → ${expectation.interface}${to} ${expectation.service}: ${OUTCOME_LABELS[expectation.expect]}, ${when}`;
  }
  return `No ${sourcesWords(expectation.sources)} gets more than ${OUTCOME_LABELS[expectation.atMost]} on ${expectation.interface} ${expectation.service}`;
}

// ---------------------------------------------------------------------------------------------
// Checking

/** A probe that shows a failure, in the words `trace` takes. */
export interface ExpectationWitness {
  readonly from: string;
  readonly interface: string;
  readonly service: string;
  /** Omitted when the probe never arrives (the interface has no address of the source's family). */
  readonly to?: string;
  /** ISO 8601, UTC: an instant in the slice of the week that shows it. */
  readonly at: string;
  /** What `trace` gives for this probe. */
  readonly outcome: Outcome;
}

export type ExpectationStatus = "holds" | "fails" | "unknown";

export interface ExpectationResult {
  readonly id: string;
  readonly kind: Expectation["kind"];
  /** "unknown": the revision cannot answer it (an interface or service it names does not exist there). */
  readonly status: ExpectationStatus;
  readonly holds: boolean;
  /** The expectation itself in words. */
  readonly expectation: string;
  /** What the revision does, in words. */
  readonly words: string;
  readonly witness?: ExpectationWitness;
}

const countText = (count: bigint): string => formatCount(count).text;

function unknown(expectation: Expectation, why: string): ExpectationResult {
  return { id: expectation.id, kind: expectation.kind, status: "unknown", holds: false, expectation: expectationWords(expectation), words: `Cannot be checked on this revision: ${why}.` };
}

function checkProbe(engine: CompiledModel, expectation: ProbeExpectation): ExpectationResult {
  const probe = { from: expectation.from, interface: expectation.interface, service: expectation.service, ...(expectation.to === undefined ? {} : { to: expectation.to }) };
  const base = { id: expectation.id, kind: expectation.kind, expectation: expectationWords(expectation) } as const;
  const label = `${expectation.from} → ${expectation.interface} ${expectation.service}`;
  try {
    engine.resolveProbe(probe, 0);
  } catch (error) {
    if (error instanceof ProbeError) return unknown(expectation, error.message);
    throw error;
  }
  const instants =
    expectation.when === ALL_WEEK
      ? engine.week.slices.map((_, slice) => instantInSlice(engine, slice))
      : [new Date(instantOfWeekMinute(engine, parseWeekTime(expectation.when) ?? 0)).toISOString()];
  const misses: { at: string; outcome: Outcome; to: string | null }[] = [];
  for (const at of instants) {
    const traced = traceProbe(engine, { ...probe, at });
    if (traced.outcome !== expectation.expect) misses.push({ at, outcome: traced.outcome, to: traced.to });
  }
  const when = expectation.when === ALL_WEEK ? "all week" : `at ${expectation.when}`;
  if (misses.length === 0) return { ...base, status: "holds", holds: true, words: `${label} gets ${OUTCOME_LABELS[expectation.expect]} ${when}, as expected.` };
  const first = misses[0];
  const got = [...new Set(misses.map((miss) => OUTCOME_LABELS[miss.outcome]))].join(" or ");
  const where =
    expectation.when === ALL_WEEK
      ? ` in ${misses.length} of ${instants.length} ${pluralWord(instants.length, { one: "slice", other: "slices" })} of the week, first from ${formatWeekMinute(engine.clock.weekMinute(Date.parse(first.at)))}`
      : ` ${when}`;
  return {
    ...base,
    status: "fails",
    holds: false,
    words: `${label} gets ${got}${where}; expected ${OUTCOME_LABELS[expectation.expect]}.`,
    witness: { ...probe, ...(first.to === null ? {} : { to: first.to }), at: first.at, outcome: first.outcome },
  };
}

/** The sources a bound speaks of. */
export function boundSources(expectation: BoundExpectation): AddressSet {
  return expectation.sources === NON_PRIVATE_SOURCES ? NON_PRIVATE : setFromRanges(expectation.sources.map((text) => parseEntry(text).range));
}

function checkBound(engine: CompiledModel, expectation: BoundExpectation): ExpectationResult {
  const base = { id: expectation.id, kind: expectation.kind, expectation: expectationWords(expectation) } as const;
  let iface: number;
  let cls: number;
  try {
    iface = engine.interfaceOf(expectation.interface);
    cls = engine.serviceClassOf(expectation.service).index;
  } catch (error) {
    if (error instanceof ProbeError) return unknown(expectation, error.message);
    throw error;
  }
  const limit = outcomeRank(expectation.atMost);
  const sources = boundSources(expectation);
  const over: Record<Family, [bigint, bigint][]> = { 4: [], 6: [] };
  let worst = -1;
  let witness: ExpectationWitness | undefined;
  // Every destination a probe arriving on the interface may be sent to, every slice: the partitions decide for every address at once.
  for (const { iface: arrival, to } of arrivals(engine)) {
    if (arrival !== iface) continue;
    const family = engine.addresses[to].family;
    const wanted = rangesOf(sources, family);
    if (wanted.length === 0) continue;
    const seen = new Set<Runs>();
    for (let slice = 0; slice < engine.week.slices.length; slice++) {
      const partition = engine.outcomeOf(iface, to, cls, slice);
      if (seen.has(partition.outcome)) continue;
      seen.add(partition.outcome);
      const sets = outcomeSets(engine, partition);
      for (let rank = OUTCOMES.length - 1; rank > limit; rank--) {
        if (sets.counts[rank] === 0n) continue;
        const hit = intersect(sets.ranges[rank], wanted);
        if (hit.length === 0) continue;
        for (let i = 0; i < hit.length; i += 2) over[family].push([hit[i], hit[i + 1]]);
        if (rank > worst) {
          worst = rank;
          const source = witnessSource(hit, family) as bigint;
          const at = instantInSlice(engine, slice);
          witness = { from: formatAddress(family, source), interface: expectation.interface, service: expectation.service, to: engine.addresses[to].text, at, outcome: OUTCOMES[rank] };
        }
      }
    }
  }
  const place = `${expectation.interface} ${expectation.service}`;
  if (worst < 0) return { ...base, status: "holds", holds: true, words: `No ${sourcesWords(expectation.sources)} gets more than ${OUTCOME_LABELS[expectation.atMost]} on ${place}, at any address or time.` };
  const count = countOf(collapse(over[4])) + countOf(collapse(over[6]));
  return {
    ...base,
    status: "fails",
    holds: false,
    words: `${countText(count)} ${sourcesWords(expectation.sources, count)} ${pluralWord(count, { one: "gets", other: "get" })} more than ${OUTCOME_LABELS[expectation.atMost]} on ${place}, up to ${OUTCOME_LABELS[OUTCOMES[worst]]} (e.g. ${witness?.from ?? ""}).`,
    ...(witness === undefined ? {} : { witness }),
  };
}

/** Each expectation checked on one revision, in the order given. */
export function checkExpectations(device: CompiledModel, expectations: readonly Expectation[]): ExpectationResult[] {
  return expectations.map((expectation) => (expectation.kind === "probe" ? checkProbe(device, expectation) : checkBound(device, expectation)));
}
