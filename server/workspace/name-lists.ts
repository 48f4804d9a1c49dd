// How a form's list of names is read: one per line, or separated by commas or spaces. Pure and
// dependency-free, so the action (reading a text area or repeated fields) and the browser's
// name picker (starting from what was submitted) split a list the same way.

/** The names in a text area's value or a submitted list, empty items dropped. */
export function namesIn(text: string): string[] {
  return text
    .split(/[\s,]+/)
    .map((item) => item.trim())
    .filter(Boolean);
}
