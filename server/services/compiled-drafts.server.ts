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

/**
 * Drafts the engine has just validated, by proposal, draft version and the shared objects they
 * were read with: a draft edit validates the new draft anyway, and the effect the editor fetches
 * right after it would otherwise validate the same document again (docs: the bench's "draft edit
 * → refreshed effect headline").
 */
const validatedDrafts = new LRUCache<string, ModelDocument>({ max: 16 });

const validatedKey = (proposalId: string, draftVersion: number, libraryDigest: string) => `${proposalId}|v${draftVersion}|${libraryDigest}`;

export function rememberValidatedDraft(proposalId: string, draftVersion: number, libraryDigest: string, effective: ModelDocument): void {
  validatedDrafts.set(validatedKey(proposalId, draftVersion, libraryDigest), effective);
}

/** The self-contained draft of that version as validated with that library, when it was validated lately. */
export function validatedDraft(proposalId: string, draftVersion: number, libraryDigest: string): ModelDocument | undefined {
  return validatedDrafts.get(validatedKey(proposalId, draftVersion, libraryDigest));
}

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
