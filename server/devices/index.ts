// Devices at a revision: the repository every loader, action and service goes through.
import { DeviceRevisions } from "./device-revisions.server.ts";

export { DEFAULT_BOUNDS, DeviceRevisions, elementCount } from "./device-revisions.server.ts";
export type { DeviceAtRevision, DeviceRevisionsOptions, FleetRecord, FleetSummary, RevisionRecord } from "./device-revisions.server.ts";
export { RevisionAnalysis } from "./revision-analysis.ts";

/** The process's one repository: it owns the revision caches (bounds in DEFAULT_BOUNDS). */
export const deviceRevisions = new DeviceRevisions();
