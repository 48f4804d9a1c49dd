// What replacing a device's current revision with another document would do, judged by effect
// before anything is saved: element counts before → after, the model's own changes, who gains
// and who loses (the engine's diff), findings new and resolved, and the lockout guard. The
// import page shows it for a new revision of an existing device.
import { diffModels } from "../engine/index.ts";
import { compiledOn } from "./compiled-drafts.server.ts";
import { exposureChangeOf } from "../analysis/exposure-change.ts";
import { deviceRevisions, type DeviceAtRevision } from "../devices/index.ts";
import { countElements, diffDocuments, summariseDocument, type ModelDocument, type RevisionSummary } from "../workspace/index.ts";
import type { DeviceEffect } from "./shared-objects.server.ts";

export type RevisionEffect = DeviceEffect & {
  /** Element counts of the current revision and of the document (interfaces, inbound rules, accounts, address objects). */
  counts: { before: Record<string, number>; after: Record<string, number> };
  /** The document's own summary (findings by severity, worst on wan), from the same compiled model. */
  after: RevisionSummary;
};

/**
 * The effect of replacing `current` (a device at its current revision) with the self-contained
 * document `effective`. The new model is compiled on the current one (docs/engine.md,
 * "Incremental analysis"; compiledOn keeps it for the gate and the save that may follow) and
 * compared with the repository's findings of the current revision.
 */
export function revisionEffect(current: DeviceAtRevision, effective: ModelDocument): RevisionEffect {
  const draft = compiledOn(current, effective);
  const compiled = draft.compiled;
  const found = draft.findings();
  const diff = diffModels(current.analysis.compiled, compiled, { findings: { before: deviceRevisions.findingsOf(current), after: found } });
  return {
    deviceId: current.device.id,
    deviceName: current.device.name,
    siteName: current.device.site.name,
    revision: current.revision.number,
    changes: diffDocuments(current.effective, effective),
    exposure: exposureChangeOf(diff, effective.device.timezone),
    counts: { before: countElements(current.effective), after: countElements(effective) },
    after: summariseDocument(effective, compiled, found),
  };
}
