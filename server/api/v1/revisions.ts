// A device's revisions: the list (newest first, paged), one revision's facts, and its export —
// the self-contained model document, as the app's export and the CLI read it. Revisions never
// change, so the two single-revision answers carry an ETag (If-None-Match → 304).
import { deviceRevisions, type DeviceAtRevision } from "../../devices/index.ts";
import { Refusal } from "../../errors.ts";
import { listRevisions } from "../../services/devices.server.ts";
import { defineEndpoint } from "../endpoint.server.ts";
import { pageOf, PageQuerySchema, pageSchema } from "../pagination.ts";
import { DeviceParams, ModelDocumentSchema, RevisionDetailSchema, RevisionParams, RevisionSchema } from "./schemas.ts";

/** The device at the revision in the path; 404 when it has no such revision. */
async function revisionOf(organisationId: string, device: DeviceAtRevision, number: number): Promise<DeviceAtRevision> {
  if (number === device.revision.number) return device;
  const found = await deviceRevisions.find(organisationId, device.device.id, { revisionNumber: number });
  if (!found) throw new Refusal(`This device has no revision ${number}.`, 404);
  return found;
}

/** What the revision endpoints share: their tag, a read token of any role, the device in the path. */
const REVISION_READ = { tag: "Revisions", scope: "read", role: "trainee", device: true } as const;

/** A revision's own facts, as the list and the single revision give them. */
function revisionFacts(revision: { number: number; message: string; authorEmail: string; createdAt: Date | string }) {
  return { number: revision.number, message: revision.message, author: revision.authorEmail, createdAt: typeof revision.createdAt === "string" ? revision.createdAt : revision.createdAt.toISOString() };
}

export const listRevisionsEndpoint = defineEndpoint({
  method: "get",
  path: "/devices/{device}/revisions",
  operationId: "listRevisions",
  summary: "List a device's revisions",
  description: "The device's revisions, newest first: number, message, author and when.",
  ...REVISION_READ,
  params: DeviceParams,
  query: PageQuerySchema,
  response: { status: 200, description: "A page of revisions.", schema: pageSchema(RevisionSchema, "RevisionPage", "A page of revisions, newest first.") },
  async handle({ device, query }) {
    const revisions = await listRevisions(device.device.id);
    const page = pageOf(revisions, (revision) => revision.number, query, { descending: true });
    return { body: { items: page.items.map(revisionFacts), nextCursor: page.nextCursor } };
  },
});

export const getRevisionEndpoint = defineEndpoint({
  method: "get",
  path: "/devices/{device}/revisions/{revision}",
  operationId: "getRevision",
  summary: "Get a revision",
  description: "One revision's facts: message, author, element counts and the engine's summary (findings by severity, the most exposed outcome on the outside).",
  ...REVISION_READ,
  params: RevisionParams,
  response: { status: 200, description: "The revision.", schema: RevisionDetailSchema, etag: true },
  async handle({ principal, device, params }) {
    const found = await revisionOf(principal.organisation.id, device, params.revision);
    const [summary] = await deviceRevisions.summariesOf([found.revision]);
    return {
      body: {
        ...revisionFacts(found.revision),
        device: { id: device.device.id, name: device.device.name },
        current: found.revision.number === device.revision.number,
        counts: found.revision.summary.counts,
        findingsBySeverity: summary.findingsBySeverity,
        worstOutsideOutcome: summary.worstOutsideOutcome,
      },
    };
  },
});

export const exportRevisionEndpoint = defineEndpoint({
  method: "get",
  path: "/devices/{device}/revisions/{revision}/export",
  operationId: "exportRevision",
  summary: "Export a revision as a model document",
  description: "The revision as a self-contained model document: the device's own elements and the shared objects it used, with the values they had then. `sallyport` reads it as it is.",
  ...REVISION_READ,
  params: RevisionParams,
  response: { status: 200, description: "The model document.", schema: ModelDocumentSchema, etag: true },
  async handle({ principal, device, params }) {
    const found = await revisionOf(principal.organisation.id, device, params.revision);
    return { body: found.effective };
  },
});
