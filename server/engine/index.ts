// Public API of the Sallyport exposure engine. Pure: no I/O, no framework, no database.
//
//   const parsed = parseModel(json);            // validate a device model document (version 1 is upgraded)
//   if (!parsed.ok) …parsed.errors (path + message)…
//   const device = compileModel(parsed.model);
//   trace(device, { from: "203.0.113.50", interface: "uplink", service: "https" });
//   reach(device, "203.0.113.50");  exposure(device, at?);  findings(device);
//   diffModels(before, after);

import { CompiledModel } from "./compile.ts";
import type { CompileOptions, ProbeInput } from "./compile.ts";
import { exposureAt, exposureMap, worstOutcomeOn } from "./exposure.ts";
import { OUTCOMES } from "./vocabulary.ts";
import type { Outcome } from "./vocabulary.ts";
import type { ExposureAt, ExposureMap } from "./exposure.ts";
import type { DeviceModel } from "./model.ts";
import { reachFrom } from "./reach.ts";
import type { ReachResult } from "./reach.ts";
import { traceProbe } from "./trace.ts";
import type { TraceResult } from "./trace.ts";

export { accountServiceProblem, MODEL_DOCUMENT_SCHEMA, parseModel } from "./model.ts";
export { isValidTimeZone } from "./schedules.ts";
export type {
  Account,
  DeviceInterface,
  DeviceModel,
  DeviceModelInput,
  InboundRule,
  ParseResult,
  Schedule,
  ValidationIssue,
  VersionOneModel,
  VersionOneModelInput,
} from "./model.ts";
/** Version 1 → 2 on read; parseModel calls it, and the version-1 words live there. */
export { upgradeModel, VERSION_1_ALL_WEEK_SCHEDULE, VERSION_1_ROLES, VERSION_1_UPGRADE_SUMMARY } from "./upgrade.ts";
export type { UpgradeResult, VersionOneRole } from "./upgrade.ts";
export { CompiledModel, ProbeError } from "./compile.ts";
export type { CompileOptions, ProbeInput } from "./compile.ts";
export type { TraceLayer, TraceResult } from "./trace.ts";
export type { ExposureAt, ExposureEntry, ExposureMap, ExposureSlice } from "./exposure.ts";
/** The slices of `exposure(device)` one at a time, each built when asked for (a large map written slice by slice). */
export { exposureSlices } from "./exposure.ts";
export type { ReachResult } from "./reach.ts";
export { findingsOf as findings } from "./findings/index.ts";
export type { Finding, FindingCheck, FindingCode, Witness, WitnessProbe } from "./findings/index.ts";
export { FINDING_CHECKS } from "./findings/index.ts";
export { countBySeverity, emptySeverityCounts, FINDING_CODE_PATTERN, findingKey, parseFindingKey } from "./finding-keys.ts";
export type { FindingIdentity } from "./finding-keys.ts";
// The product's words, defined in vocabulary.ts (the browser may import that module directly).
export {
  ACCESS_LEVELS,
  ALL_WEEK_SCHEDULE,
  ANY_INTERFACE,
  ANY_SERVICE,
  BUILTIN_ADDRESS_NAMES,
  BUILTIN_SERVICES,
  CUSTOM_SERVICE_KINDS,
  DAYS,
  ELEMENT_KINDS,
  elementRef,
  INTERFACE_ROLES,
  isBuiltinAddressName,
  isDay,
  isLayer,
  isOutcome,
  isSeverity,
  isObservedAnswer,
  DIFFERENCE_REASONS,
  FIELD_CHECK_STATUSES,
  OBSERVED_ANSWERS,
  LAYERS,
  MODEL_SCHEMA_VERSION,
  looksLikeAddressEntry,
  NAME_PATTERN,
  OUTCOMES,
  outcomeRank,
  presentsLogin,
  PORT_PROTOCOLS,
  PROTOCOLS,
  READABLE_SCHEMA_VERSIONS,
  RULE_ACTIONS,
  SECOND_FACTORS,
  SERVICE_KINDS,
  SEVERITIES,
  severityAtLeast,
  severityRank,
  UNLISTENED_PORT_ACTIONS,
} from "./vocabulary.ts";
export type {
  AccessLevel,
  BuiltinAddressName,
  CatalogueService,
  CustomServiceKind,
  Day,
  DifferenceReason,
  ElementKind,
  FieldCheckStatus,
  ObservedAnswer,
  ElementRef,
  InterfaceRole,
  Layer,
  Outcome,
  OutcomeRecord,
  PortProtocol,
  Protocol,
  RuleAction,
  SchemaVersion,
  SecondFactor,
  ServiceKind,
  Severity,
  SeverityCounts,
  UnlistenedPortAction,
} from "./vocabulary.ts";
export { diffModels, lockoutGuard } from "./diff.ts";
export type { ModelDiff, DiffChange, DiffOptions, DiffTransition, LockoutEntry } from "./diff.ts";
/** The effect of a change for a reviewer (effect.ts), the rule changes behind it, and expectations. */
export { changeEffect, compareExpectations, DEFAULT_PAGE_SIZE, effectSourcesPage, pageAt, placesWords } from "./effect.ts";
export type {
  Blocking,
  ChangeEffect,
  EffectDirection,
  EffectGroup,
  EffectLockout,
  EffectOptions,
  EffectPlace,
  EffectRules,
  ExpectationChange,
  FindingLine,
  Page,
  WorkFromLoss,
} from "./effect.ts";
export { changedFields, movedRuleIds, ruleChanges, ruleMoves } from "./rule-changes.ts";
export type { RuleChanges, RuleMove } from "./rule-changes.ts";
export {
  ALL_WEEK,
  BoundExpectationSchema,
  checkExpectations,
  ExpectationSchema,
  expectationsFile,
  ExpectationsFileSchema,
  expectationWords,
  EXPECTATIONS_FORMAT,
  EXPECTATIONS_VERSION,
  MAX_EXPECTATIONS,
  NON_PRIVATE_SOURCES,
  parseExpectation,
  parseExpectationsFile,
  ProbeExpectationSchema,
} from "./expectations.ts";
export type {
  BoundExpectation,
  Expectation,
  ExpectationInput,
  ExpectationResult,
  ExpectationStatus,
  ExpectationsFile,
  ExpectationWitness,
  ParsedExpectations,
  ProbeExpectation,
} from "./expectations.ts";
export { formatWeekMinute, instantInSlice, instantOfWeekMinute, instantOfWeekTime, parseWeekTime, WEEK_TIME_PATTERN } from "./week-times.ts";
/** Trace and reach from a block of sources, one group per distinct answer (source-groups.ts), and across a fleet. */
export { isSourceBlock, parseSource, reachGroupRows, reachGroups, serviceMatches, traceGroups } from "./source-groups.ts";
export type { ReachCell, ReachFilter, ReachGroupRow, ReachGroups, SourceGroup, SourceRange, TraceGroups } from "./source-groups.ts";
export { fleetReach } from "./fleet-reach.ts";
export type { FleetMember, FleetReach, FleetReachOptions, FleetReachRow } from "./fleet-reach.ts";
/** Field checks: observations predicted with the revision live at their time (field-checks.ts). */
export {
  checkObservations,
  CLOCK_SKEW_MS,
  DifferenceSchema,
  fieldCheckCounts,
  FieldCheckCountsSchema,
  FieldCheckResultSchema,
  FieldCheckRowSchema,
  MAX_NOTE_LENGTH,
  MAX_OBSERVATIONS,
  ObservationSchema,
  observationAgrees,
} from "./field-checks.ts";
export type { FieldCheckCounts, FieldCheckResult, FieldCheckRow, Observation, ObservationInput, RevisionAtTime } from "./field-checks.ts";

/** Compiles a validated model for fast questions; partitions are computed on demand and cached. */
export function compileModel(model: DeviceModel, options: CompileOptions = {}): CompiledModel {
  return new CompiledModel(model, options);
}

/** Traces one probe through every layer. Throws ProbeError for input errors. */
export function trace(device: CompiledModel, probe: ProbeInput): TraceResult {
  return traceProbe(device, probe);
}

/** Every interface × catalogue service for one source at one instant (default now). */
export function reach(device: CompiledModel, source: string, at?: string | number | Date): ReachResult {
  return reachFrom(device, source, at);
}

/** The exposure map: at one instant, or (without `at`) for every slice of the week. */
export function exposure(device: CompiledModel): ExposureMap;
export function exposure(device: CompiledModel, at: string | number | Date): ExposureAt;
export function exposure(device: CompiledModel, at?: string | number | Date): ExposureAt | ExposureMap {
  if (at === undefined) return exposureMap(device);
  return exposureAt(device, device.instantOf(at, Date.now()));
}

/** The most exposed outcome any source gets on the named interfaces at any time of the week, or null when they have no addresses. */
export function worstOutcome(device: CompiledModel, interfaceNames: Iterable<string>): Outcome | null {
  const wanted = new Set(interfaceNames);
  const indices = device.model.interfaces.flatMap((entry, index) => (wanted.has(entry.name) ? [index] : []));
  const rank = worstOutcomeOn(device, indices);
  return rank < 0 ? null : OUTCOMES[rank];
}
