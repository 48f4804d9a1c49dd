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
  #basis: RevisionAnalysis | undefined;

  /** `known.basis`: the analysis of the revision this one was saved on; compiling re-uses what the edit left alone (compileModel's basis). */
  constructor(
    readonly document: ModelDocument,
    readonly shared: SharedLibrary,
    known: { effective?: ModelDocument; compiled?: CompiledModel; findings?: readonly Finding[]; basis?: RevisionAnalysis } = {},
  ) {
    this.effective = known.effective ?? effectiveDocument(document, shared);
    this.#compiled = known.compiled;
    this.#findings = known.findings;
    this.#basis = known.basis?.isCompiled ? known.basis : undefined;
  }

  /** The compiled model, built once; partitions inside it are computed on demand and kept. */
  get compiled(): CompiledModel {
    if (this.#compiled === undefined) {
      this.#compiled = compileModel(this.effective, { basis: this.#basis?.compiled });
      // Held no longer than needed: a chain of revisions must not keep each other alive.
      this.#basis = undefined;
    }
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
