// Size limits in one place, so what Sallyport exports it can always import again.
//
// A model document is at most MAX_MODEL_DOCUMENT_BYTES as exported (pretty-printed UTF-8): a save
// or import that would make a larger one is refused with 413, so every export fits the import.
// The import route's request limit leaves room for that document plus the form around it.

/** Any request body, but for the routes that carry a whole model document. */
export const MAX_REQUEST_BYTES = 2 * 1024 * 1024;

/** A model document as exported (`documentExportText`), in bytes. */
export const MAX_MODEL_DOCUMENT_BYTES = 8 * 1024 * 1024;

/** A request that carries one model document (upload, or the import step's form, or the API's JSON). */
export const MAX_DOCUMENT_REQUEST_BYTES = MAX_MODEL_DOCUMENT_BYTES + 1024 * 1024;

/** The exported form of a document: what the export route sends and the import reads. */
export function documentExportText(document: unknown): string {
  return `${JSON.stringify(document, null, 2)}\n`;
}

/** "8 MiB", "2.5 MiB", "900 KiB": a byte count for a message. */
export function sizeWords(bytes: number): string {
  if (bytes >= 1024 * 1024) return `${Number((bytes / (1024 * 1024)).toFixed(1))} MiB`;
  return `${Math.ceil(bytes / 1024)} KiB`;
}
