// One revision's model, ready for analysis: the stored document, the shared objects it used,
// the self-contained effective document, and — computed on first use — the compiled model and
// the findings. Revisions never change (a database trigger refuses updates), so everything
// here can be kept for as long as memory allows. Pure: no I/O.
import { compileModel, findings, type CompiledModel, type Finding } from "../engine/index.ts";
import { effectiveDocument, type ModelDocument, type SharedLibrary } from "../workspace/index.ts";

export class RevisionAnalysis {
  readonly effective: ModelDocument;
  #compiled: CompiledModel | undefined;
  #findings: readonly Finding[] | undefined;

  constructor(
    readonly document: ModelDocument,
    readonly shared: SharedLibrary,
    known: { effective?: ModelDocument; compiled?: CompiledModel; findings?: readonly Finding[] } = {},
  ) {
    this.effective = known.effective ?? effectiveDocument(document, shared);
    this.#compiled = known.compiled;
    this.#findings = known.findings;
  }

  /** The compiled model, built once; partitions inside it are computed on demand and kept. */
  get compiled(): CompiledModel {
    this.#compiled ??= compileModel(this.effective);
    return this.#compiled;
  }

  get findings(): readonly Finding[] {
    this.#findings ??= findings(this.compiled);
    return this.#findings;
  }

  /** True once the compiled model exists (for the cache's bookkeeping and tests). */
  get isCompiled(): boolean {
    return this.#compiled !== undefined;
  }
}
