// The device workspace's pure core: documents, edits, references, readable diffs, summaries.
export { currentRevision, effectiveDocument, EMPTY_LIBRARY, newDocument, sharedObjectsUsedBy, validateDocument } from "./document.ts";
export type { ModelDocument, SharedLibrary, StoredDocument, ValidatedDocument } from "./document.ts";
export {
  deleteNamed,
  deleteRule,
  duplicateRule,
  EditError,
  ELEMENT_LABELS,
  insertRule,
  moveRule,
  nextRuleId,
  setOperatorNetworks,
  setRuleEnabled,
  updateRule,
  updateSettings,
  upsertNamed,
} from "./edits.ts";
export type { NamedCollection } from "./edits.ts";
export { findUsages, renameReferences } from "./references.ts";
export type { ReferenceKind, Usage } from "./references.ts";
export { canonicalJson, diffDocuments } from "./document-diff.ts";
export {
  applyElementEdit,
  applyElementEdits,
  describeElementEdit,
  editsBetween,
  ElementEditSchema,
  elementKeyWords,
  elementsChangedIn,
  elementsTouchedBy,
  OPERATOR_NETWORKS_KEY,
  parseElementEdits,
  resolveElementEdit,
  SETTINGS_KEY,
} from "./element-edits.ts";
export type { ElementEdit, ElementEditKind, ElementKey } from "./element-edits.ts";
export type { DocumentChange } from "./document-diff.ts";
export { countElements, summariseDocument } from "./summary.ts";
export type { RevisionSummary } from "./summary.ts";
export { closeNames, didYouMean } from "./close-names.ts";
export { fieldMessagesForIssues, parseIssuePath, timeZoneProblem } from "./issue-words.ts";
export type { FieldMessages, FormTarget } from "./issue-words.ts";
