// A revision's findings as the fleet table counts them: each one's key and severity. Pure, so
// the analysis pool's worker threads compute it too.
import { findingKey, type Finding } from "../engine/index.ts";

/** Each finding's key and severity, in the findings' order. */
export function keysOf(found: readonly Finding[]): Array<[string, string]> {
  return found.map((finding) => [findingKey(finding), finding.severity]);
}
