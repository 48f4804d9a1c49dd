// A draft compiled on the revision it is compared with, shared by the gate and the effect of a
// proposal (and by a direct save's refusal), so a page that shows both compiles the draft once.
// The draft is named by a digest of its self-contained document: two drafts with the same
// elements are the same model. A compiled 2,000-rule model is large, so only a few are kept.
import { LRUCache } from "lru-cache";
import { createHash } from "node:crypto";
import type { DeviceAtRevision } from "../devices/index.ts";
import { compileModel, findings, type CompiledModel, type Finding } from "../engine/index.ts";
import type { ModelDocument } from "../workspace/index.ts";

export type CompiledDraft = { digest: string; compiled: CompiledModel; findings(): readonly Finding[] };

const drafts = new LRUCache<string, CompiledDraft>({ max: 6 });

/** A digest of a self-contained document (its JSON as stored: the editor keeps element order). */
export function documentDigest(document: unknown): string {
  return createHash("sha256").update(JSON.stringify(document)).digest("hex");
}

/** The document compiled on `before` (docs/engine.md, "Incremental analysis"), its findings computed when first asked for. */
export function compiledOn(before: DeviceAtRevision, effective: ModelDocument, digest = documentDigest(effective)): CompiledDraft {
  const key = `${before.revision.id}|${digest}`;
  const known = drafts.get(key);
  if (known) return known;
  const compiled = compileModel(effective, { basis: before.analysis.compiled });
  let found: readonly Finding[] | null = null;
  const entry: CompiledDraft = {
    digest,
    compiled,
    findings: () => (found ??= findings(compiled)),
  };
  drafts.set(key, entry);
  return entry;
}
