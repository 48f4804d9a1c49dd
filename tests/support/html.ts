/** A UUID as a regular-expression source, for picking ids out of page links. */
export const UUID = "[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}";

/** Text of an HTML page without React's text separators, entities decoded. */
export function plain(html: string): string {
  return html
    .replace(/<!-- -->/g, "")
    .replace(/&quot;/g, '"')
    .replace(/&#x27;/g, "'")
    .replace(/&lt;/g, "<")
    .replace(/&gt;/g, ">")
    .replace(/&amp;/g, "&");
}

const escapeRegExp = (text: string) => text.replace(/[.*+?^${}()|[\]\\]/g, "\\$&");

/** The page as a person reads it: without scripts (where the hydration data lives) and tags. */
export function visibleText(html: string): string {
  return plain(html.replace(/<script[\s\S]*?<\/script>/g, "").replace(/<[^>]+>/g, " "));
}

/** The page's words as sentences: visibleText with the spaces its tags left behind closed up. */
export function wordsOf(html: string): string {
  return visibleText(html).replace(/\s+/g, " ").replace(/ ([.,:;)])/g, "$1").replace(/\( /g, "(");
}

/**
 * The message shown beside the field with this label, or null: the label's `for` names the
 * control, and the message is the element with that id plus "-error" (the design system's
 * fields and the name pickers render it so).
 */
export function fieldError(html: string, label: string): string | null {
  const id = new RegExp(`<label[^>]*for="([^"]+)"[^>]*>${escapeRegExp(label)}</label>`).exec(html)?.[1];
  if (!id) throw new Error(`no field labelled "${label}" on the page`);
  const message = new RegExp(`<p[^>]*id="${escapeRegExp(id)}-error"[^>]*>([\\s\\S]*?)</p>`).exec(html)?.[1];
  return message === undefined ? null : plain(message).replace(/<[^>]+>/g, "");
}

/** The text of the form-level alert at the top of the page (the summary of a refused form). */
export function formAlert(html: string): string | null {
  const message = /<div role="alert"[^>]*>([\s\S]*?)<\/div>/.exec(html)?.[1];
  return message === undefined ? null : plain(message).replace(/<[^>]+>/g, "");
}
