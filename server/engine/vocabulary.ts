// The product's words, each defined once (PRODUCT.md §3–§6): outcomes, layers, severities,
// interface roles, rule actions, days, protocols and service kinds, the built-in catalogue
// and names, element kinds and the name pattern. Pure data and small guards with no imports,
// so the engine, the server and the browser share this one copy. The labels a person reads
// for the codes are here too (end of file), so every screen, every CSV export (beside the
// code) and the CLI use one wording; colours and sentences stay in app/. All are keyed by
// these types (`Record<Outcome, string>`), so a new word fails typecheck until it is worded.

function oneOf<const Words extends readonly string[]>(words: Words, value: unknown): value is Words[number] {
  return typeof value === "string" && words.includes(value);
}

// ---------------------------------------------------------------------------------------------
// Outcomes and layers (PRODUCT.md §3)

/** Outcomes, least to most exposed. Everything above "silent" tells an outsider the device exists. */
export const OUTCOMES = ["silent", "refused", "answered", "login-denied", "login-mfa", "login-password"] as const;
export type Outcome = (typeof OUTCOMES)[number];
export type OutcomeRecord<T> = Record<Outcome, T>;

export function isOutcome(value: unknown): value is Outcome {
  return oneOf(OUTCOMES, value);
}

/** 0 for "silent" up to 5 for "login-password": the engine computes with ranks, not names. */
export function outcomeRank(outcome: Outcome): number {
  return OUTCOMES.indexOf(outcome);
}

export function outcomeRecord<T>(make: (outcome: Outcome, rank: number) => T): OutcomeRecord<T> {
  const out = {} as OutcomeRecord<T>;
  OUTCOMES.forEach((outcome, rank) => {
    out[outcome] = make(outcome, rank);
  });
  return out;
}

// Ranks by name for the engine's hot paths (partitions hold ranks).
export const SILENT = outcomeRank("silent");
export const REFUSED = outcomeRank("refused");
export const ANSWERED = outcomeRank("answered");
export const LOGIN_DENIED = outcomeRank("login-denied");
export const LOGIN_MFA = outcomeRank("login-mfa");
export const LOGIN_PASSWORD = outcomeRank("login-password");

/** Whether the outcome shows an outsider a login (page or banner): "login-denied" and above. */
export function presentsLogin(outcome: Outcome): boolean {
  return outcomeRank(outcome) >= LOGIN_DENIED;
}

/** The layers of a trace, in order; the first that stops decides the outcome. */
export const LAYERS = ["arrival", "inbound-rules", "listener", "service-kind", "login-sources", "second-factor"] as const;
export type Layer = (typeof LAYERS)[number];

export function isLayer(value: unknown): value is Layer {
  return oneOf(LAYERS, value);
}

// ---------------------------------------------------------------------------------------------
// Severities (docs/engine.md "Findings")

/** Least to most severe. `--fail-on X` fails on any finding at X or above. */
export const SEVERITIES = ["info", "low", "medium", "high", "critical"] as const;
export type Severity = (typeof SEVERITIES)[number];
export type SeverityCounts = Record<Severity, number>;

export function isSeverity(value: unknown): value is Severity {
  return oneOf(SEVERITIES, value);
}

/** 0 (info) … 4 (critical); -1 for text that is no severity (a stored row, a URL). */
export function severityRank(severity: string): number {
  return isSeverity(severity) ? SEVERITIES.indexOf(severity) : -1;
}

export function severityAtLeast(severity: Severity, threshold: Severity): boolean {
  return severityRank(severity) >= severityRank(threshold);
}

// ---------------------------------------------------------------------------------------------
// The device model document (PRODUCT.md §4)

/** The version of the device model document this release writes (PRODUCT.md §4). */
export const MODEL_SCHEMA_VERSION = 2;
/** The versions it reads: version 1 is upgraded on read (upgrade.ts). */
export const READABLE_SCHEMA_VERSIONS = [1, 2] as const;
export type SchemaVersion = (typeof READABLE_SCHEMA_VERSIONS)[number];

/** Names are unique per kind, 1–63 characters of [A-Za-z0-9._-] (PRODUCT.md §4). */
export const NAME_PATTERN = /^[A-Za-z0-9._-]{1,63}$/;
/** A wall-clock time of a schedule window, "HH:MM" from 00:00 to 23:59. */
export const CLOCK_TIME_PATTERN = /^([01][0-9]|2[0-3]):[0-5][0-9]$/;

/**
 * Interface roles, in the order PRODUCT.md §4 lists them: WAN and LAN as RFC 7084 names a
 * router's interfaces, DMZ as NIST SP 800-41. Version 1's words for them live in upgrade.ts.
 */
export const INTERFACE_ROLES = ["wan", "lan", "dmz", "management", "other"] as const;
export type InterfaceRole = (typeof INTERFACE_ROLES)[number];

/** An inbound rule's action, and the device's default when no rule matches. */
export const RULE_ACTIONS = ["allow", "deny"] as const;
export type RuleAction = (typeof RULE_ACTIONS)[number];

/** What a port with no listener does: "drop" stays silent, "reset" answers and so reveals the device. */
export const UNLISTENED_PORT_ACTIONS = ["drop", "reset"] as const;
export type UnlistenedPortAction = (typeof UNLISTENED_PORT_ACTIONS)[number];

export const SECOND_FACTORS = ["none", "totp"] as const;
export type SecondFactor = (typeof SECOND_FACTORS)[number];

export const ACCESS_LEVELS = ["full", "read-only"] as const;
export type AccessLevel = (typeof ACCESS_LEVELS)[number];

/** Days of a schedule window, Monday first (ISO 8601 weekday order). */
export const DAYS = ["mon", "tue", "wed", "thu", "fri", "sat", "sun"] as const;
export type Day = (typeof DAYS)[number];

export function isDay(value: unknown): value is Day {
  return oneOf(DAYS, value);
}

export const PROTOCOLS = ["tcp", "udp", "icmp"] as const;
export type Protocol = (typeof PROTOCOLS)[number];
/** Custom services have a port; ICMP echo is the built-in "ping" only. */
export const PORT_PROTOCOLS = ["tcp", "udp"] as const satisfies readonly Protocol[];
export type PortProtocol = (typeof PORT_PROTOCOLS)[number];

/** Layer 4 of a trace: "echo" and "other" answer, "login" presents a login. */
export const SERVICE_KINDS = ["login", "other", "echo"] as const;
export type ServiceKind = (typeof SERVICE_KINDS)[number];
/** The kinds a custom service may have ("echo" is ping's alone). */
export const CUSTOM_SERVICE_KINDS = ["login", "other"] as const satisfies readonly ServiceKind[];
export type CustomServiceKind = (typeof CUSTOM_SERVICE_KINDS)[number];

export interface CatalogueService {
  readonly name: string;
  readonly protocol: Protocol;
  /** Port for tcp/udp; null for ICMP echo. */
  readonly port: number | null;
  readonly kind: ServiceKind;
  readonly builtin: boolean;
}

/**
 * The built-in catalogue (IANA service-name and port registry; RFC 792 / RFC 4443 echo), grouped
 * by kind as PRODUCT.md §3 lists it: login ssh, https, http, telnet; other snmp; echo ping. This
 * is also the order of catalogue services in every output.
 */
export const BUILTIN_SERVICES: readonly CatalogueService[] = [
  { name: "ssh", protocol: "tcp", port: 22, kind: "login", builtin: true },
  { name: "https", protocol: "tcp", port: 443, kind: "login", builtin: true },
  { name: "http", protocol: "tcp", port: 80, kind: "login", builtin: true },
  { name: "telnet", protocol: "tcp", port: 23, kind: "login", builtin: true },
  { name: "snmp", protocol: "udp", port: 161, kind: "other", builtin: true },
  { name: "ping", protocol: "icmp", port: null, kind: "echo", builtin: true },
];

/** Built-in address names: all IPv4 and IPv6, all IPv4, all IPv6. */
export const BUILTIN_ADDRESS_NAMES = ["any", "any4", "any6"] as const;
export type BuiltinAddressName = (typeof BUILTIN_ADDRESS_NAMES)[number];

export function isBuiltinAddressName(value: unknown): value is BuiltinAddressName {
  return oneOf(BUILTIN_ADDRESS_NAMES, value);
}
/** Literal login-source text (an address, CIDR or range) is told apart from a name by its shape. */
export function looksLikeAddressEntry(text: string): boolean {
  return /^[0-9A-Fa-f:./\- ]+$/.test(text) && /[.:]/.test(text);
}

/** In a rule's services: every protocol and port, ICMP echo included. */
export const ANY_SERVICE = "any";
/** In a rule's interface: every interface. */
export const ANY_INTERFACE = "any";
/** The built-in schedule that is active every minute of the week (version 1 called it "always"). */
export const ALL_WEEK_SCHEDULE = "all-week";

// ---------------------------------------------------------------------------------------------
// Elements named by findings and traces

/** The kinds of element a finding names as "kind:name" (glossary words, PRODUCT.md §6). */
export const ELEMENT_KINDS = ["interface", "address", "address-group", "service", "service-group", "schedule", "rule", "account", "operator-network"] as const;
export type ElementKind = (typeof ELEMENT_KINDS)[number];
/** "account:admin", "interface:uplink", "rule:r-7". */
export type ElementRef = `${ElementKind}:${string}`;

export function elementRef(kind: ElementKind, name: string): ElementRef {
  return `${kind}:${name}`;
}

// ---------------------------------------------------------------------------------------------
// Labels: the words shown for the codes on every screen and beside the code in CSV exports.
// The JSON API and the CLI's JSON keep the codes; these are for people.

/** Each outcome as an outsider experiences it. */
export const OUTCOME_LABELS: OutcomeRecord<string> = {
  silent: "No answer",
  refused: "Refused (device revealed)",
  answered: "Answered",
  "login-denied": "Login shown, refused",
  "login-mfa": "Login with second factor",
  "login-password": "Login with password only",
};

/** Each layer of a trace, as the canvas, the step list and the reach table title it. */
export const LAYER_LABELS: Record<Layer, string> = {
  arrival: "Arrival",
  "inbound-rules": "Inbound rules",
  listener: "Listener",
  "service-kind": "Service kind",
  "login-sources": "Login sources",
  "second-factor": "Second factor",
};

// ---------------------------------------------------------------------------------------------
// Field checks (docs/engine.md "Field checks"): what a person saw when they tried a device from a
// vantage point, in the outcome words where one matches, and how each row compares with the model.

/**
 * What a field check may record as observed: an outcome (PRODUCT.md §3) when the tester could
 * tell it — trying to log in tells the three login outcomes apart — or "login" when a login page
 * or banner appeared and nobody tried to log in (it agrees with any login outcome).
 */
export const OBSERVED_ANSWERS = [...OUTCOMES, "login"] as const;
export type ObservedAnswer = (typeof OBSERVED_ANSWERS)[number];

export function isObservedAnswer(value: unknown): value is ObservedAnswer {
  return oneOf(OBSERVED_ANSWERS, value);
}

/** How a row of a field check compares with the model. */
export const FIELD_CHECK_STATUSES = ["agrees", "differs", "invalid"] as const;
export type FieldCheckStatus = (typeof FIELD_CHECK_STATUSES)[number];

/**
 * Why a difference is likely: a later revision predicts what was seen (the model was out of date
 * at the time), an earlier one does (the change may not have reached the device), or none does
 * (the device, or something on the path to it, differs from its recorded configuration).
 */
export const DIFFERENCE_REASONS = ["model-out-of-date", "not-applied", "device-differs"] as const;
export type DifferenceReason = (typeof DIFFERENCE_REASONS)[number];

export const OBSERVED_LABELS: Record<ObservedAnswer, string> = {
  ...OUTCOME_LABELS,
  login: "Login shown (not tried)",
};

export const FIELD_CHECK_STATUS_LABELS: Record<FieldCheckStatus, string> = {
  agrees: "Agrees",
  differs: "Differs",
  invalid: "Not checked",
};

export const DIFFERENCE_REASON_LABELS: Record<DifferenceReason, string> = {
  "model-out-of-date": "Model out of date",
  "not-applied": "Change not on the device",
  "device-differs": "Device differs from its configuration",
};
