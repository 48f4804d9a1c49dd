// The zod schemas of the REST API v1: path parameters, queries, bodies and answers. The routes
// validate with them and the OpenAPI document is generated from them (server/api/openapi.ts);
// `.meta({ id })` names a schema in the document's components. Answers reuse the engine's words
// (outcomes, layers, severities, roles) from the vocabulary, so a new word shows up here too.
import { z } from "zod";
import { ROLES } from "#models/roles.ts";
import { API_TOKEN_KINDS, API_TOKEN_SCOPES } from "#models/api-token-words.ts";
import { PROPOSAL_STATES } from "#models/proposal-states.ts";
import { INTERFACE_ROLES, LAYERS, MODEL_SCHEMA_VERSION, OUTCOMES, SEVERITIES } from "../../engine/index.ts";
import { MODEL_DOCUMENT_SCHEMA } from "../../engine/index.ts";
import { ProbeQuerySchema } from "../../analysis/probe.ts";
import { FleetReachResultSchema } from "../../analysis/fleet-reach.ts";
import { PageQuerySchema } from "../pagination.ts";

// ---------------------------------------------------------------------------------------------
// Path parameters

const uuid = (what: string) => z.uuid({ message: `must be a UUID (the ${what}'s id)` }).meta({ description: `The ${what}'s id (a UUID).` });

export const DeviceParams = z.object({ device: uuid("device") });
export const RevisionParams = DeviceParams.extend({
  revision: z.coerce
    .number({ message: "must be a revision number (1, 2, …)" })
    .int("must be a whole number")
    .min(1, "must be 1 or more")
    .max(1_000_000, "must be a revision number (1, 2, …)")
    .meta({ description: "The revision's number (1 is the first)." }),
});
export const ProposalParams = DeviceParams.extend({ proposal: uuid("proposal") });

// ---------------------------------------------------------------------------------------------
// The model document (the engine's own schema, version 2)

/** The model document as the engine validates it (PRODUCT.md §4); version-1 documents are accepted too and upgraded. */
export const ModelDocumentSchema = MODEL_DOCUMENT_SCHEMA.meta({
  id: "ModelDocument",
  description: `A device model document, schemaVersion ${MODEL_SCHEMA_VERSION}. Omitted optional fields take their defaults; version-1 documents are read and upgraded.`,
});

/** A document in a request body: any JSON object, checked by the engine (its problems come back with their document paths). */
export const DocumentField = z
  .record(z.string(), z.unknown(), { message: "must be the model document, a JSON object" })
  .meta({ $ref: "#/components/schemas/ModelDocument", description: "The model document (version 2, or 1)." } as Record<string, unknown>);

// ---------------------------------------------------------------------------------------------
// Token

export const TokenInfoSchema = z
  .object({
    name: z.string(),
    kind: z.enum(API_TOKEN_KINDS),
    scope: z.enum(API_TOKEN_SCOPES),
    role: z.enum(ROLES).meta({ description: "The role the token acts with now: its owner's in the organisation (personal), or the one chosen when it was made (service)." }),
    organisation: z.object({ slug: z.string(), name: z.string() }),
    owner: z.object({ name: z.string(), email: z.string() }).nullable(),
    expiresAt: z.iso.datetime(),
    rateLimitPerMinute: z.number().int(),
  })
  .meta({ id: "TokenInfo", description: "The token the call was made with." });

// ---------------------------------------------------------------------------------------------
// Devices and revisions

const SeverityCounts = z.partialRecord(z.enum(SEVERITIES), z.number().int()).meta({ id: "SeverityCounts", description: "How many active findings of each severity (dismissed ones left out)." });

export const DeviceSchema = z
  .object({
    id: z.uuid(),
    name: z.string(),
    site: z.object({ id: z.uuid(), name: z.string() }),
    revision: z.number().int().meta({ description: "The current revision's number." }),
    updatedAt: z.iso.datetime(),
    updatedBy: z.string(),
    findingsBySeverity: SeverityCounts,
    worstOutsideOutcome: z.enum(OUTCOMES).nullable().meta({ description: "The most exposed outcome any source gets on a wan or dmz interface at any time; null without such an interface." }),
    openProposals: z.number().int(),
  })
  .meta({ id: "Device" });

export const DeviceDetailSchema = DeviceSchema.extend({
  timezone: z.string(),
  counts: z.record(z.string(), z.number().int()).meta({ description: "Element counts of the current revision." }),
  interfaces: z.array(z.object({ name: z.string(), role: z.enum(INTERFACE_ROLES), addresses: z.array(z.string()) })),
}).meta({ id: "DeviceDetail" });

export const NewDeviceBody = z
  .object({
    siteId: z.uuid({ message: "must be a UUID (the site's id)" }).meta({ description: "The site of the organisation the device belongs to." }),
    message: z.string().trim().max(200, "must be at most 200 characters").default("Created through the API").meta({ description: "The first revision's message." }),
    document: DocumentField,
  })
  .meta({ id: "NewDevice" });

export const RevisionSchema = z
  .object({
    number: z.number().int(),
    message: z.string(),
    author: z.string(),
    createdAt: z.iso.datetime(),
  })
  .meta({ id: "Revision" });

export const RevisionDetailSchema = RevisionSchema.extend({
  device: z.object({ id: z.uuid(), name: z.string() }),
  current: z.boolean().meta({ description: "Whether this is the device's current revision." }),
  counts: z.record(z.string(), z.number().int()),
  findingsBySeverity: SeverityCounts.meta({ description: "Findings of this revision by severity (all of them, dismissed or not)." }),
  worstOutsideOutcome: z.enum(OUTCOMES).nullable(),
}).meta({ id: "RevisionDetail", description: "A revision's facts; revisions never change, so an ETag lets a caller skip unchanged ones." });

// ---------------------------------------------------------------------------------------------
// Analysis

/** An instant, read as the trace's `at` is. */
const at = ProbeQuerySchema.shape.at;

const TraceLayerSchema = z.object({
  layer: z.enum(LAYERS),
  result: z.enum(["pass", "stop"]),
  detail: z.string(),
  ruleId: z.string().optional(),
});

export const TraceSchema = z
  .object({
    outcome: z.enum(OUTCOMES),
    at: z.iso.datetime(),
    localTime: z.string(),
    from: z.string(),
    interface: z.string(),
    service: z.string(),
    to: z.string().nullable(),
    layers: z.array(TraceLayerSchema),
    ruleId: z.string().nullable(),
    eligibleAccounts: z.array(z.string()),
  })
  .meta({ id: "Trace", description: "The probe through every layer: the same JSON as `sallyport trace --json`." });

/** Names in one query parameter, separated by commas ("outside,dmz"): a query holds one value per name. */
const commaList = (description: string) =>
  z
    .string()
    .trim()
    .max(1000, "is too long")
    .regex(/^[A-Za-z0-9._/,: -]*$/, "must be names separated by commas")
    .optional()
    .meta({ description });

/** "outside, dmz" → ["outside", "dmz"]: trimmed, without empty or repeated names. */
export function namesOf(list: string | undefined): string[] {
  return [...new Set((list ?? "").split(",").map((name) => name.trim()))].filter((name) => name !== "");
}

export const TraceGroupsSchema = z
  .object({
    from: z.string().meta({ description: "The block as normalised text." }),
    count: z.string().meta({ description: "Addresses in the block, decimal." }),
    interface: z.string(),
    service: z.string(),
    to: z.string().nullable(),
    at: z.iso.datetime(),
    localTime: z.string(),
    groups: z.array(
      z.object({
        sources: z.array(z.string()).meta({ description: "The group's sources inside the block: a minimal CIDR list, ascending." }),
        count: z.string().meta({ description: "How many addresses, decimal." }),
        example: z.string().meta({ description: "The group's first address, whose trace `trace` is." }),
        outcome: z.enum(OUTCOMES),
        layer: z.enum(LAYERS).meta({ description: "The deciding layer." }),
        ruleId: z.string().nullable(),
        eligibleAccounts: z.array(z.string()),
        trace: TraceSchema,
      }),
    ),
  })
  .meta({ id: "TraceGroups", description: "A probe from a CIDR block: one group per distinct answer, most exposed first — the same JSON as `sallyport trace --json` with a block." });

/** The trace's question, its source an address or a CIDR block. */
export const TraceQuery = ProbeQuerySchema.extend({
  from: ProbeQuerySchema.shape.from.meta({ description: "The source: an address (IPv4 or IPv6), or a CIDR block answered per group of its sources that get the same answer." }),
});

export const ReachQuery = z.object({
  from: z
    .string()
    .trim()
    .min(1, "is needed: the source address")
    .max(100, "is too long")
    .meta({ description: "The source: an address (IPv4 or IPv6) or a CIDR block, answered per group of its sources that get the same answer." }),
  at,
  interface: commaList("Only these interfaces: a name, or several separated by commas. Empty: every interface."),
});

export const ReachSchema = z
  .object({
    from: z.string(),
    at: z.iso.datetime(),
    localTime: z.string(),
    rows: z.array(
      z.object({
        interface: z.string(),
        to: z.string().nullable(),
        service: z.string(),
        outcome: z.enum(OUTCOMES),
        layer: z.enum(LAYERS).meta({ description: "The deciding layer." }),
        detail: z.string(),
        ruleId: z.string().nullable(),
        eligibleAccounts: z.array(z.string()),
        sources: z.array(z.string()).meta({ description: "The sources this row answers for, as a minimal CIDR list: the source itself, or for a block one group of its sources that get the same answer." }),
        count: z.string().meta({ description: "How many addresses `sources` holds, decimal." }),
      }),
    ),
  })
  .meta({ id: "Reach", description: "Everything one source reaches: every interface × catalogue service (× group of sources, for a block), in the engine's order." });

export const FleetReachApiQuery = z.object({
  from: z.string().trim().min(1, "is needed: the source address or CIDR block").max(100, "is too long").meta({ description: "The source: an address or a CIDR block." }),
  at: z.string().trim().max(40, "is too long").optional().meta({ description: "ISO 8601. Without an offset it is read on each device's own clock; with Z or an offset it is that instant. Default: now." }),
  role: commaList(`Only interfaces of these roles (${INTERFACE_ROLES.join(", ")}), separated by commas. Empty: every interface.`),
  service: commaList("Only these services: catalogue names, tcp/PORT or udp/PORT, separated by commas. Empty: every service of each device's catalogue."),
  site: z.uuid({ message: "must be a UUID (a site's id)" }).optional().meta({ description: "Only the devices of this site." }),
}).extend(PageQuerySchema.shape);

export const FleetReachSchema = FleetReachResultSchema.extend({
  rows: FleetReachResultSchema.shape.rows.meta({ description: "This page's rows: device × interface × service × group of sources, most exposed first." }),
  totalRows: z.number().int().meta({ description: "Rows in all pages together." }),
  nextCursor: z.string().nullable().meta({ description: "Pass as `cursor` (with the same question) for the next page; null on the last page." }),
}).meta({
  id: "FleetReach",
  description:
    "Which of the organisation's devices one source reaches, and how: one row per device × interface × service (× group of sources, for a block), most exposed first, a page at a time. The next pages keep the first page's instant; a cursor from before a device's revision changed is a 409.",
});

export const ExposureQuery = z.object({
  at,
  interface: z.string().trim().max(63, "is too long").optional().meta({ description: "Only this interface's entries." }),
  service: z.string().trim().max(63, "is too long").optional().meta({ description: "Only this service's entries." }),
  family: z.enum(["4", "6"], { message: "must be 4 or 6" }).optional().meta({ description: "Only destinations of this address family." }),
  limit: z.coerce.number({ message: "must be a whole number" }).int("must be a whole number").min(1, "must be at least 1").max(200, "must be at most 200").default(20),
  cursor: z.string().max(400).regex(/^[A-Za-z0-9_-]+$/, "is not a cursor this API gave").optional(),
});

const OutcomeCounts = z.record(z.enum(OUTCOMES), z.string().regex(/^\d+$/)).meta({ description: "Decimal address counts per outcome; they sum to 2^32 or 2^128." });
const OutcomeRanges = z.record(z.enum(OUTCOMES), z.array(z.string())).meta({ description: "Minimal CIDR lists per outcome, ascending." });

export const ExposureSchema = z
  .object({
    at: z.iso.datetime(),
    localTime: z.string(),
    slice: z.object({ start: z.string(), end: z.string() }).meta({ description: "The slice of the device's week the instant falls in." }),
    revision: z.number().int(),
    items: z.array(z.object({ interface: z.string(), to: z.string(), service: z.string(), counts: OutcomeCounts, ranges: OutcomeRanges })),
    nextCursor: z.string().nullable(),
  })
  .meta({ id: "Exposure", description: "The exposure map at one instant: per interface × device address × service, the exact partition of the source space by outcome." });

const WitnessSchema = z.object({
  probe: z.object({ from: z.string(), interface: z.string(), service: z.string(), to: z.string(), at: z.iso.datetime() }),
  outcome: z.enum(OUTCOMES),
  shows: z.string(),
  proof: z.string().nullable(),
});

export const FindingSchema = z
  .object({
    key: z.string().meta({ description: "Stable across revisions while the finding's code and elements stay." }),
    code: z.string(),
    severity: z.enum(SEVERITIES),
    title: z.string(),
    detail: z.string(),
    elements: z.array(z.string()),
    source: z.string().meta({ description: "The published source, or “common practice”." }),
    witness: WitnessSchema.nullable().meta({ description: "A probe that shows the finding; `trace` replays it." }),
    dismissal: z
      .object({ state: z.enum(["in-effect", "awaiting-confirmation"]), reason: z.string(), by: z.string(), at: z.iso.datetime() })
      .nullable()
      .meta({ description: "An accepted risk (in effect), or one asked for and waiting for a second person's confirmation." }),
  })
  .meta({ id: "Finding" });

export const FindingsSchema = z
  .object({ revision: z.number().int(), items: z.array(FindingSchema) })
  .meta({ id: "Findings", description: "The current revision's findings, most severe first, with their dismissal state." });

// ---------------------------------------------------------------------------------------------
// Proposals

export const ProposalCreatedSchema = z
  .object({
    id: z.uuid(),
    state: z.enum(PROPOSAL_STATES),
    baseRevision: z.number().int(),
    url: z.string().meta({ description: "The proposal's page in the app (a path)." }),
  })
  .meta({ id: "ProposalCreated" });

const GateReasonSchema = z.object({ kind: z.string(), words: z.string(), details: z.array(z.string()) }).meta({ id: "GateReason", description: "Why a change is blocked: the lockout guard, or an expectation that held and would fail." });

const EffectFindingSchema = z.object({ key: z.string(), code: z.string(), severity: z.enum(SEVERITIES), title: z.string(), elements: z.array(z.string()) });

export const EffectSchema = z
  .object({
    proposal: z.object({ id: z.uuid(), baseRevision: z.number().int(), draftVersion: z.number().int(), appliedRevision: z.number().int().nullable() }),
    timezone: z.string(),
    ok: z.boolean().meta({ description: "False when the draft no longer validates (then `problems` says why and `effect` is null)." }),
    problems: z.array(z.string()),
    effect: z
      .object({
        headline: z.string(),
        changed: z.boolean(),
        blocked: z.boolean().meta({ description: "Whether the lockout guard or an expectation blocks it." }),
        totals: z.object({ gains: z.string(), loses: z.string() }).meta({ description: "Distinct sources (decimal) that gain, and that lose, somewhere." }),
        blocking: z.array(z.object({ kind: z.enum(["lockout", "work-from", "expectation"]), subject: z.string(), words: z.string() })),
        groups: z.array(
          z.object({
            key: z.string(),
            before: z.enum(OUTCOMES),
            after: z.enum(OUTCOMES),
            direction: z.enum(["gains", "loses"]),
            count: z.string(),
            words: z.string(),
            witness: z.object({ from: z.string(), interface: z.string(), service: z.string(), to: z.string(), at: z.iso.datetime(), when: z.string() }),
          }),
        ),
        findings: z.object({ new: z.array(EffectFindingSchema), resolved: z.array(EffectFindingSchema), unchanged: z.number().int() }),
      })
      .nullable(),
  })
  .meta({ id: "ProposalEffect", description: "What the proposal's draft changes against its base revision, as a reviewer reads it." });

export const SubmitBody = z
  .object({
    acknowledgement: z
      .string()
      .trim()
      .max(2000, "must be at most 2,000 characters")
      .default("")
      .meta({ description: "When the lockout guard or an expectation blocks the change: the author's written acknowledgement (then only an admin or owner can approve it)." }),
  })
  .meta({ id: "SubmitProposal" });

export const SubmittedSchema = z
  .object({ id: z.uuid(), state: z.enum(PROPOSAL_STATES), reasons: z.array(GateReasonSchema) })
  .meta({ id: "ProposalSubmitted" });
