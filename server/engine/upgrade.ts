// Reading older versions of the device model document. Version 1 (the first release) differs
// from version 2 only in names (PRODUCT.md §4): the interface roles outside, inside and mgmt
// became wan, lan and management, and the built-in schedule "always" became "all-week". The
// upgrade renames those words and nothing else, so a version-1 document means exactly what it
// meant before (tests/engine/upgrade.test.ts checks every trace and the exposure map). Pure:
// the input is never changed; a version-2 document is returned as it is.

import { ALL_WEEK_SCHEDULE, INTERFACE_ROLES, MODEL_SCHEMA_VERSION, READABLE_SCHEMA_VERSIONS } from "./vocabulary.ts";
import type { InterfaceRole, SchemaVersion } from "./vocabulary.ts";

/** Version 1's interface roles and the version-2 role each became (PRODUCT.md §4). */
export const VERSION_1_ROLES = {
  outside: "wan",
  inside: "lan",
  dmz: "dmz",
  mgmt: "management",
  other: "other",
} as const satisfies Record<string, InterfaceRole>;
export type VersionOneRole = keyof typeof VERSION_1_ROLES;

/** Version 1's name for the built-in schedule that is active every minute of the week. */
export const VERSION_1_ALL_WEEK_SCHEDULE = "always";

/** One line that says what reading a version-1 document changed (the CLI prints it). */
export const VERSION_1_UPGRADE_SUMMARY =
  `roles ${Object.entries(VERSION_1_ROLES)
    .filter(([from, to]) => from !== to)
    .map(([from, to]) => `${from} → ${to}`)
    .join(", ")}; schedule ${VERSION_1_ALL_WEEK_SCHEDULE} → ${ALL_WEEK_SCHEDULE}`;

interface Issue {
  readonly path: string;
  readonly message: string;
}

export type UpgradeResult =
  | {
      readonly ok: true;
      /** The document in version-2 words; the input itself when it already was version 2. */
      readonly document: unknown;
      /** The version the input was written in. */
      readonly from: SchemaVersion;
      /** What the upgrade had to rename beyond the version's words (a schedule whose name became built in). */
      readonly warnings: readonly Issue[];
    }
  | { readonly ok: false; readonly errors: readonly Issue[] };

type Json = Record<string, unknown>;

function isRecord(value: unknown): value is Json {
  return typeof value === "object" && value !== null && !Array.isArray(value);
}

function isReadableVersion(value: unknown): value is SchemaVersion {
  return READABLE_SCHEMA_VERSIONS.some((version) => version === value);
}

function isVersionOneRole(value: string): value is VersionOneRole {
  return Object.hasOwn(VERSION_1_ROLES, value);
}

/**
 * Brings a device model document as written to the current version (2). Unknown versions are
 * refused; a version-1 document gets the version-2 words. Anything else malformed is left for
 * the schema to report at its own path.
 */
export function upgradeModel(input: unknown): UpgradeResult {
  if (!isRecord(input)) return { ok: false, errors: [{ path: "", message: "must be a JSON object (a device model document)" }] };
  const version = input.schemaVersion;
  if (version === undefined) {
    return { ok: false, errors: [{ path: "schemaVersion", message: `is missing: write ${MODEL_SCHEMA_VERSION} (version-1 documents are read too)` }] };
  }
  if (!isReadableVersion(version)) {
    return {
      ok: false,
      errors: [{ path: "schemaVersion", message: `${JSON.stringify(version)} is not a version Sallyport reads: it reads ${READABLE_SCHEMA_VERSIONS.join(" and ")}, and writes ${MODEL_SCHEMA_VERSION}` }],
    };
  }
  if (version === MODEL_SCHEMA_VERSION) return { ok: true, document: input, from: version, warnings: [] };
  return fromVersionOne(input);
}

function fromVersionOne(input: Json): UpgradeResult {
  const errors: Issue[] = [];
  const warnings: Issue[] = [];

  const interfaces = Array.isArray(input.interfaces)
    ? input.interfaces.map((entry: unknown, i) => {
        if (!isRecord(entry) || typeof entry.role !== "string") return entry;
        if (isVersionOneRole(entry.role)) return { ...entry, role: VERSION_1_ROLES[entry.role] };
        // A version-2 word in a version-1 document is a mix-up, not something to guess at.
        const known = Object.keys(VERSION_1_ROLES).join(", ");
        const hint = INTERFACE_ROLES.some((role) => role === entry.role) ? ` ("${entry.role}" is a version-2 role: write schemaVersion 2, or the version-1 word)` : "";
        errors.push({ path: `interfaces[${i}].role`, message: `must be a version-1 role: ${known}${hint}` });
        return entry;
      })
    : input.interfaces;

  // "always" was built in, so no version-1 schedule may have that name. "all-week" was an
  // ordinary name; a schedule called that is renamed, because the built-in one takes it now.
  const scheduleNames = new Set((Array.isArray(input.schedules) ? input.schedules : []).flatMap((entry) => (isRecord(entry) && typeof entry.name === "string" ? [entry.name] : [])));
  let renamedAllWeek: string | undefined;
  const schedules = Array.isArray(input.schedules)
    ? input.schedules.map((entry: unknown, i) => {
        if (!isRecord(entry)) return entry;
        if (entry.name === VERSION_1_ALL_WEEK_SCHEDULE) {
          errors.push({ path: `schedules[${i}].name`, message: `"${VERSION_1_ALL_WEEK_SCHEDULE}" is a built-in schedule name in version 1` });
        }
        if (entry.name !== ALL_WEEK_SCHEDULE) return entry;
        renamedAllWeek ??= freeName(ALL_WEEK_SCHEDULE, scheduleNames);
        warnings.push({ path: `schedules[${i}].name`, message: `"${ALL_WEEK_SCHEDULE}" is the built-in schedule's name from version 2; this schedule is read as "${renamedAllWeek}", and so are the rules that use it` });
        return { ...entry, name: renamedAllWeek };
      })
    : input.schedules;

  const inboundRules = Array.isArray(input.inboundRules)
    ? input.inboundRules.map((entry: unknown, i) => {
        if (!isRecord(entry) || typeof entry.schedule !== "string") return entry;
        if (entry.schedule === VERSION_1_ALL_WEEK_SCHEDULE) return { ...entry, schedule: ALL_WEEK_SCHEDULE };
        if (entry.schedule !== ALL_WEEK_SCHEDULE) return entry;
        if (renamedAllWeek !== undefined) return { ...entry, schedule: renamedAllWeek };
        // Unknown in version 1; reading it as the built-in schedule would make a broken rule valid.
        errors.push({ path: `inboundRules[${i}].schedule`, message: `unknown schedule "${ALL_WEEK_SCHEDULE}" (version 1 calls the built-in schedule "${VERSION_1_ALL_WEEK_SCHEDULE}")` });
        return entry;
      })
    : input.inboundRules;

  if (errors.length > 0) return { ok: false, errors };
  const document: Json = { ...input, schemaVersion: MODEL_SCHEMA_VERSION };
  // Only fields the input has: an omitted list stays omitted (and takes its default).
  if ("interfaces" in input) document.interfaces = interfaces;
  if ("schedules" in input) document.schedules = schedules;
  if ("inboundRules" in input) document.inboundRules = inboundRules;
  return { ok: true, document, from: 1, warnings };
}

/** "all-week-2", "all-week-3", …: the first that no schedule of the document has. */
function freeName(base: string, taken: ReadonlySet<string>): string {
  for (let n = 2; ; n++) {
    const candidate = `${base}-${n}`;
    if (!taken.has(candidate)) return candidate;
  }
}
