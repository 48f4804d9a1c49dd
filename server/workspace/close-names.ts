// "Did you mean …?" for a name that does not exist: the valid names of the right kind that lie
// within a few typing slips of it. Pure; the distance is the npm `damerau-levenshtein`
// package (optimal string alignment: insertions, deletions, substitutions and swaps of two
// neighbouring characters, so "admni" is one slip from "admin").
import distance from "damerau-levenshtein";

/** At most this many suggestions: more reads as a list to choose from, not a correction. */
export const MAX_SUGGESTIONS = 3;

/**
 * How many slips a name of this length may carry and still be a likely typo: one for short
 * names (where two slips turn "ssh" into "ftp"), two up to eight characters, three beyond.
 */
export function slipsAllowed(length: number): number {
  if (length <= 4) return 1;
  if (length <= 8) return 2;
  return 3;
}

/**
 * The candidates closest to `typed`, nearest first (ties alphabetical), at most three. Case is
 * ignored in the distance, so "NOC-net" suggests "noc-net"; the typed name itself is never
 * suggested. Only the candidates given are considered: the caller passes the names of the kind
 * the field takes (address names for sources, services for services, …).
 */
export function closeNames(typed: string, candidates: Iterable<string>): string[] {
  const wanted = typed.trim();
  if (wanted === "") return [];
  const folded = wanted.toLowerCase();
  const limit = slipsAllowed(wanted.length);
  const scored: Array<{ name: string; steps: number }> = [];
  for (const name of new Set(candidates)) {
    if (name === wanted) continue;
    // Cheap reject before the matrix: a length gap alone costs that many insertions.
    if (Math.abs(name.length - wanted.length) > limit) continue;
    const steps = distance(folded, name.toLowerCase()).steps;
    if (steps <= limit) scored.push({ name, steps });
  }
  scored.sort((a, b) => a.steps - b.steps || a.name.localeCompare(b.name));
  return scored.slice(0, MAX_SUGGESTIONS).map((entry) => entry.name);
}

/** “a”, “a” or “b”, “a”, “b” or “c”: the names quoted as the messages quote them. */
export function quotedChoice(names: readonly string[]): string {
  const quoted = names.map((name) => `“${name}”`);
  if (quoted.length <= 1) return quoted.join("");
  return `${quoted.slice(0, -1).join(", ")} or ${quoted[quoted.length - 1]}`;
}

/** " Did you mean “x”?" for the close names, or "" when none is close. */
export function didYouMean(typed: string, candidates: Iterable<string>): string {
  const close = closeNames(typed, candidates);
  return close.length === 0 ? "" : ` Did you mean ${quotedChoice(close)}?`;
}
