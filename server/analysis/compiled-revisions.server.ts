import { Device, DeviceRevision } from "#models/index.ts";
import { ensureDatabase } from "../db/database.server.ts";
import { compileModel, type CompiledModel } from "../engine/index.ts";
import { effectiveDocument, type ModelDocument } from "../workspace/index.ts";

// Revisions never change, so a compiled model can be kept for as long as memory allows; a
// small least-recently-used set keeps the busiest devices warm for interactive tracing.
const CACHE_SIZE = 24;
const cache = new Map<string, { compiled: CompiledModel; effective: ModelDocument }>();

function remember(revisionId: string, entry: { compiled: CompiledModel; effective: ModelDocument }) {
  cache.delete(revisionId);
  cache.set(revisionId, entry);
  while (cache.size > CACHE_SIZE) cache.delete(cache.keys().next().value!);
}

/** A revision's model, compiled once and shared by every page and API that analyses it. */
export function compiledRevision(revisionId: string, effective: () => ModelDocument): CompiledModel {
  const cached = cache.get(revisionId);
  if (cached) {
    remember(revisionId, cached);
    return cached.compiled;
  }
  const document = effective();
  const entry = { compiled: compileModel(document), effective: document };
  remember(revisionId, entry);
  return entry.compiled;
}

export type CompiledRevision = { device: Device; revisionNumber: number; compiled: CompiledModel; effective: ModelDocument };

/** The current revision of a device of this organisation, compiled (cached by revision); null when there is none. */
export async function compiledCurrentRevision(organisationId: string, deviceId: string): Promise<CompiledRevision | null> {
  ensureDatabase();
  if (!/^[0-9a-f-]{36}$/i.test(deviceId)) return null;
  const device = await Device.findOne({ where: { id: deviceId, organisationId } });
  if (!device) return null;
  const head = await DeviceRevision.findOne({ where: { deviceId, number: device.currentRevisionNumber }, attributes: ["id", "number"] });
  if (!head) return null;
  const cached = cache.get(head.id);
  if (cached) {
    remember(head.id, cached);
    return { device, revisionNumber: head.number, ...cached };
  }
  const revision = await DeviceRevision.findByPk(head.id);
  if (!revision) return null;
  const effective = effectiveDocument(revision.document as unknown as ModelDocument, revision.sharedObjects);
  return { device, revisionNumber: head.number, compiled: compiledRevision(head.id, () => effective), effective };
}
