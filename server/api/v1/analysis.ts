// The analysis of a device's current revision: trace one probe, reach from one source, the
// exposure map at an instant, and the findings. The same functions answer the pages, their
// CSVs and the CLI, so every door gives the same answer.
import { createHash } from "node:crypto";
import { z } from "zod";
import { probeInputOf } from "../../analysis/probe.ts";
import { answerReach } from "../../analysis/reach.server.ts";
import { exposureEntriesAt, filterEntries, type ExposureQuery as PageExposureQuery } from "../../analysis/exposure.server.ts";
import { isLayer, isOutcome, isSeverity, isSourceBlock, trace, traceGroups } from "../../engine/index.ts";
import { Refusal } from "../../errors.ts";
import { deviceFindings } from "../../services/findings.server.ts";
import { defineEndpoint } from "../endpoint.server.ts";
import { decodeCursor, pageOf } from "../pagination.ts";
import { FleetReachQuerySchema } from "../../analysis/fleet-reach.ts";
import { fleetReachOf } from "../../services/fleet-reach.server.ts";
import { DeviceParams, ExposureQuery, ExposureSchema, FindingsSchema, FleetReachApiQuery, FleetReachSchema, namesOf, ReachQuery, ReachSchema, TraceGroupsSchema, TraceQuery, TraceSchema } from "./schemas.ts";

/** A word the engine wrote, typed again after a page-shaped row held it as a string. */
function word<W extends string>(isWord: (value: unknown) => value is W, value: string): W {
  if (!isWord(value)) throw new Error(`the engine wrote “${value}”, which is not one of its words`);
  return value;
}

export const traceEndpoint = defineEndpoint({
  method: "get",
  path: "/devices/{device}/trace",
  operationId: "trace",
  summary: "Trace a probe",
  description:
    "One probe through every layer of the device's current revision: each layer's verdict, the deciding rule and the eligible accounts. The same JSON as `sallyport trace --json`. A CIDR block as `from` is answered per group of its sources that get the same answer (TraceGroups), each group with its sources and one trace. An unknown interface, service or account, a malformed address or a block wider than its family is a 400.",
  tag: "Analysis",
  scope: "read",
  role: "trainee",
  params: DeviceParams,
  device: true,
  query: TraceQuery,
  response: { status: 200, description: "The trace, or for a block its groups.", schema: z.union([TraceSchema, TraceGroupsSchema]) },
  handle({ device, query }) {
    const probe = probeInputOf(query);
    const body = isSourceBlock(probe.from) ? traceGroups(device.analysis.compiled, probe) : trace(device.analysis.compiled, probe);
    return { body, headers: { "X-Sallyport-Revision": String(device.revision.number) } };
  },
});

export const reachEndpoint = defineEndpoint({
  method: "get",
  path: "/devices/{device}/reach",
  operationId: "reach",
  summary: "Reach from one source",
  description:
    "Everything one source can reach on the device's current revision: every interface × catalogue service with its outcome and the deciding layer. A CIDR block is answered per group of its sources that get the same answer (each row names its sources); `interface` keeps only the interfaces named. An unknown interface is a 400.",
  tag: "Analysis",
  scope: "read",
  role: "trainee",
  params: DeviceParams,
  device: true,
  query: ReachQuery,
  response: { status: 200, description: "The reach rows, in the engine's order.", schema: ReachSchema },
  handle({ device, query }) {
    const answer = answerReach(device.analysis.compiled, { from: query.from, at: query.at ?? "", interfaces: namesOf(query.interface) });
    if (!answer.ok) {
      const issues = Object.entries(answer.errors).map(([path, message]) => ({ path, message }));
      throw new Refusal(`The query is not valid: ${issues.map((issue) => `${issue.path}: ${issue.message}`).join(" · ")}`, 400, { issues });
    }
    const rows = answer.rows.map((row) => ({ interface: row.interface, to: row.to, service: row.service, outcome: row.outcome, layer: word(isLayer, row.layer), detail: row.detail, ruleId: row.ruleId, eligibleAccounts: [...row.eligibleAccounts], sources: [...row.sources], count: row.count }));
    return { body: { from: answer.from, at: answer.at, localTime: answer.localTime, rows } };
  },
});

/** The exposure page's filters with only the API's set. */
const NO_FILTERS: PageExposureQuery = { at: "", interface: "", service: "", family: "", outcome: "", focus: "", page: "", entryPage: "", block: "" };

export const exposureEndpoint = defineEndpoint({
  method: "get",
  path: "/devices/{device}/exposure",
  operationId: "exposure",
  summary: "The exposure map at an instant",
  description:
    "For every interface × device address × catalogue service, the exact partition of the source space by outcome at one instant: address counts and minimal CIDR lists. Paged by entry (the next pages keep the first page's instant and revision: a cursor from another revision is a 409).",
  tag: "Analysis",
  scope: "read",
  role: "trainee",
  params: DeviceParams,
  device: true,
  query: ExposureQuery,
  refusals: [409],
  response: { status: 200, description: "A page of the map's entries.", schema: ExposureSchema },
  handle({ device, query }) {
    // A later page keeps the instant of the first, so "now" does not move under the pages.
    const decoded = query.cursor ? decodeCursor(query.cursor) : null;
    const pinnedAt = decoded && !("problem" in decoded) ? decoded.pin.split("|")[1] : undefined;
    const answer = exposureEntriesAt(device.analysis.compiled, query.at ?? pinnedAt ?? "");
    if (!answer.ok) throw new Refusal(`The query parameter at is not valid: ${answer.error}`, 400, { issues: [{ path: "at", message: answer.error }] });
    const entries = filterEntries(answer.entries, { ...NO_FILTERS, interface: query.interface ?? "", service: query.service ?? "", family: query.family ?? "" });
    const indexed = entries.map((entry, index) => ({ entry, index }));
    const map = answer.map;
    const page = pageOf(indexed, (item) => item.index, query, { pin: `${device.revision.id}|${map.at}` });
    return {
      body: {
        at: map.at,
        localTime: map.localTime,
        slice: map.slice,
        revision: device.revision.number,
        items: page.items.map(({ entry }) => ({ interface: entry.interface, to: entry.to, service: entry.service, counts: entry.counts, ranges: entry.ranges })),
        nextCursor: page.nextCursor,
      },
    };
  },
});

export const findingsEndpoint = defineEndpoint({
  method: "get",
  path: "/devices/{device}/findings",
  operationId: "findings",
  summary: "The device's findings",
  description: "The hardening findings of the device's current revision, most severe first, each with its published source, a witness probe where there is one, and its dismissal state.",
  tag: "Analysis",
  scope: "read",
  role: "trainee",
  params: DeviceParams,
  device: true,
  response: { status: 200, description: "The findings.", schema: FindingsSchema },
  async handle({ device }) {
    const { findings } = await deviceFindings(device);
    return {
      body: {
        revision: device.revision.number,
        items: findings.map((finding) => ({
          key: finding.key,
          code: finding.code,
          severity: word(isSeverity, finding.severity),
          title: finding.title,
          detail: finding.detail,
          elements: finding.elements,
          source: finding.source,
          witness: finding.witness ? { ...finding.witness, outcome: word(isOutcome, finding.witness.outcome) } : null,
          dismissal: finding.dismissal ? { state: finding.dismissal.state, reason: finding.dismissal.reason, by: finding.dismissal.by, at: finding.dismissal.at } : null,
        })),
      },
    };
  },
});

export const fleetReachEndpoint = defineEndpoint({
  method: "get",
  path: "/reach",
  operationId: "fleetReach",
  summary: "Fleet reach from one source",
  description:
    "Which of the organisation's devices one source (an address or a CIDR block) reaches, and how: every device at its current revision, now or at a chosen time, one row per device × interface × service (× group of sources, for a block) with the outcome and the deciding layer, most exposed first. The same answer as the Fleet reach page and its CSV, paged by row with `limit` and `cursor` (the next pages keep the first page's instant; a cursor from before a device's revision changed is a 409).",
  tag: "Fleet",
  scope: "read",
  role: "trainee",
  query: FleetReachApiQuery,
  refusals: [409],
  response: { status: 200, description: "A page of the rows, most exposed first.", schema: FleetReachSchema },
  async handle({ principal, query }) {
    const question = FleetReachQuerySchema.safeParse({ from: query.from, at: query.at, roles: namesOf(query.role), services: namesOf(query.service), site: query.site });
    if (!question.success) {
      const issues = question.error.issues.map((issue) => ({ path: issue.path.join(".") || "query", message: issue.message }));
      throw new Refusal(`The query is not valid: ${issues.map((issue) => `${issue.path}: ${issue.message}`).join(" · ")}`, 400, { issues });
    }
    // A later page is asked at the first page's instant, so "now" does not move under the pages.
    const decoded = query.cursor ? decodeCursor(query.cursor) : null;
    const pinnedNow = decoded && !("problem" in decoded) ? Number(decoded.pin.split("|")[1]) : NaN;
    const nowMs = Number.isSafeInteger(pinnedNow) && pinnedNow > 0 ? pinnedNow : Date.now();
    const answer = await fleetReachOf(principal.organisation.id, question.data, nowMs);
    // The pin names the revisions that answered and the instant: positions from other ones would mean other rows.
    const revisions = createHash("sha256")
      .update([...new Set(answer.rows.map((row) => `${row.deviceId}:${row.revision}`))].sort().join(","))
      .digest("base64url")
      .slice(0, 16);
    const page = pageOf(answer.rows.map((row, index) => ({ row, index })), (item) => item.index, query, { pin: `${revisions}|${nowMs}` });
    return { body: { ...answer, rows: page.items.map((item) => item.row), totalRows: answer.rows.length, nextCursor: page.nextCursor } };
  },
});
