// Turns the device editor's form posts into workspace edits. Each builder validates the
// fields with zod (messages per field) and returns the edit to apply to the current document.
import { data } from "react-router";
import { z } from "zod";
import {
  ACCESS_LEVELS,
  ANY_INTERFACE,
  CUSTOM_SERVICE_KINDS,
  DAYS,
  INTERFACE_ROLES,
  isBuiltinAddressName,
  isDay,
  looksLikeAddressEntry,
  NAME_PATTERN,
  PORT_PROTOCOLS,
  RULE_ACTIONS,
  SECOND_FACTORS,
  UNLISTENED_PORT_ACTIONS,
  type Day,
} from "../engine/index.ts";
import {
  applyElementEdit,
  describeElementEdit,
  resolveElementEdit,
  fieldMessagesForIssues,
  type ElementEdit,
  type FormTarget,
  type ModelDocument,
  type SharedLibrary,
} from "../workspace/index.ts";
import { namesIn } from "../workspace/name-lists.ts";
import { fieldErrorsOf, formFailure, type FieldErrors } from "./form.server.ts";
import { refusalOf, refusedForm } from "./refusals.server.ts";
import { ElementNameSchema, TimeZoneSchema } from "./schemas.ts";
import { UUID_PATTERN } from "../validation/ids.ts";

/**
 * An edit to apply (data, so a proposal can record it and re-apply it later), the toast that
 * announces it, and the element its form edits (so the engine's problems can be shown beside
 * that form's fields). A new device settings form also names the site (not part of the document).
 */
export type EditPlan = { edit: ElementEdit; message: string; target: FormTarget; siteId?: string };
export type PlanResult = { ok: true; plan: EditPlan } | { ok: false; errors: FieldErrors };

/** Form values with repeated keys (checkbox groups) joined by new lines. */
export function formValuesWithLists(form: FormData): Record<string, string> {
  const values: Record<string, string> = {};
  for (const [key, value] of form.entries()) {
    if (typeof value !== "string") continue;
    values[key] = key in values ? `${values[key]}\n${value}` : value;
  }
  return values;
}

const NAME = ElementNameSchema;

/** Names or entries typed one per line or separated by commas or spaces. */
const LIST = z
  .string()
  .max(20_000, "That list is too long.")
  .default("")
  .transform(namesIn);

/** Names of elements; an address typed where a name belongs is told so (PRODUCT.md §3: rules, groups and operator networks take names). */
const NAME_LIST = LIST.pipe(
  z.array(
    z.string().superRefine((item, context) => {
      if (NAME_PATTERN.test(item) || isBuiltinAddressName(item)) return;
      context.addIssue({
        code: "custom",
        message: looksLikeAddressEntry(item)
          ? `“${item.slice(0, 50)}” is an address, but this list takes the names of address objects and groups: add an address object for it first.`
          : `“${item.slice(0, 50)}” is not a name: names have 1–63 characters, letters, digits, dot, underscore, dash.`,
      });
    }),
  ),
);

const CHECKBOX = z
  .string()
  .optional()
  .transform((value) => value === "on" || value === "true");

const ORIGINAL = z.string().trim().max(63).optional().transform((value) => (value ? value : null));

/**
 * An interface address with the link's prefix length. The document format writes them so
 * (PRODUCT.md §4, "192.0.2.1/24"); the engine reads a bare one as the address alone (/32,
 * /128, docs/engine.md), but a form that asks for the prefix refuses to guess it.
 */
const INTERFACE_ADDRESS = z.string().superRefine((text, context) => {
  if (text.includes("/")) return;
  const example = text.includes(":") ? { link: "/64", alone: "/128" } : { link: "/24", alone: "/32" };
  context.addIssue({ code: "custom", message: `“${text.slice(0, 50)}” has no prefix length: add the link's, e.g. ${text.slice(0, 50)}${example.link} (${example.alone} for the address alone).` });
});

const InterfaceForm = z.object({
  original: ORIGINAL,
  name: NAME,
  role: z.enum(INTERFACE_ROLES, { message: "Choose a role." }),
  addresses: LIST.pipe(z.array(INTERFACE_ADDRESS)),
  listeners: LIST,
});

const AddressForm = z.object({ original: ORIGINAL, name: NAME, entries: LIST.pipe(z.array(z.string()).min(1, "Enter at least one address, CIDR or range.")) });
const GroupForm = z.object({ original: ORIGINAL, name: NAME, members: NAME_LIST.pipe(z.array(z.string()).min(1, "Name at least one member.")) });
const ServiceForm = z.object({
  original: ORIGINAL,
  name: NAME,
  protocol: z.enum(PORT_PROTOCOLS, { message: "Choose tcp or udp." }),
  port: z.coerce.number({ message: "Enter a port number." }).int("Enter a whole number.").min(1, "Ports run from 1 to 65535.").max(65535, "Ports run from 1 to 65535."),
  kind: z.enum(CUSTOM_SERVICE_KINDS, { message: "Choose login or other." }),
});

const DAY = `(?:${DAYS.join("|")})`;
const WINDOW_LINE = new RegExp(`^(${DAY}(?:[ ,]+${DAY})*)\\s+([0-2][0-9]:[0-5][0-9])\\s*-\\s*([0-2][0-9]:[0-5][0-9])$`, "i");

/** Schedule windows typed one per line: "mon tue wed thu fri 08:00-17:00". */
const WINDOWS = z
  .string()
  .max(5_000)
  .transform((text, context) => {
    const windows: Array<{ days: Day[]; start: string; end: string }> = [];
    for (const [index, raw] of text.split("\n").entries()) {
      const line = raw.trim();
      if (!line) continue;
      const match = WINDOW_LINE.exec(line);
      if (!match) {
        context.addIssue({ code: "custom", message: `Line ${index + 1} ("${line.slice(0, 40)}"): write days then times, e.g. "mon tue wed thu fri 08:00-17:00".` });
        return z.NEVER;
      }
      const days = match[1].toLowerCase().split(/[ ,]+/).filter(isDay);
      windows.push({ days, start: match[2], end: match[3] });
    }
    if (windows.length === 0) {
      context.addIssue({ code: "custom", message: "Enter at least one window." });
      return z.NEVER;
    }
    return windows;
  });

const ScheduleForm = z.object({ original: ORIGINAL, name: NAME, windows: WINDOWS });

const RuleForm = z.object({
  original: ORIGINAL,
  // Empty asks for an automatic id; otherwise an id is a name.
  id: z.string().trim().max(63).refine((id) => id === "" || NAME_PATTERN.test(id), "Use letters, digits, dot, underscore, dash.").default(""),
  position: z.string().trim().optional().transform((value) => (value ? Number(value) : undefined)).pipe(z.number().int("Enter a whole number.").min(1, "Positions start at 1.").optional()),
  interface: NAME.or(z.literal(ANY_INTERFACE)),
  sources: NAME_LIST.pipe(z.array(z.string()).min(1, "Name at least one source (or any).")),
  destinations: NAME_LIST.pipe(z.array(z.string()).min(1, "Name at least one destination (or any).")),
  services: NAME_LIST.pipe(z.array(z.string()).min(1, "Name at least one service (or any).")),
  schedule: NAME,
  action: z.enum(RULE_ACTIONS, { message: "Choose allow or deny." }),
  enabled: CHECKBOX,
  note: z.string().max(500, "Use at most 500 characters.").default(""),
});

const AccountForm = z.object({
  original: ORIGINAL,
  name: NAME,
  loginSources: LIST,
  secondFactor: z.enum(SECOND_FACTORS, { message: "Choose none or TOTP." }),
  services: LIST,
  accessLevel: z.enum(ACCESS_LEVELS, { message: "Choose full or read-only." }),
  enabled: CHECKBOX,
});

const SettingsForm = z.object({
  name: NAME,
  siteId: z.string().regex(UUID_PATTERN, "Choose a site."),
  timezone: TimeZoneSchema,
  defaultInbound: z.enum(RULE_ACTIONS, { message: "Choose allow or deny." }),
  unlistenedPort: z.enum(UNLISTENED_PORT_ACTIONS, { message: "Choose drop or reset." }),
});

const ElementName = z.object({ name: NAME });
const RuleId = z.object({ ruleId: z.string().trim().min(1).max(63) });
const MoveForm = z.object({ ruleId: z.string().trim().min(1).max(63), to: z.coerce.number().int().min(1, "Positions start at 1.") });

function plan<T>(schema: z.ZodType<T>, values: Record<string, string>, build: (parsed: T) => EditPlan): PlanResult {
  const parsed = schema.safeParse(values);
  if (!parsed.success) return { ok: false, errors: fieldErrorsOf(parsed.error) };
  return { ok: true, plan: build(parsed.data) };
}

/** The plan for an edit: its toast says what it does. */
function planned(edit: ElementEdit, target: FormTarget): EditPlan {
  return { edit, message: describeElementEdit(edit), target };
}

/** The edit a posted intent asks for, or the field errors; null for an intent this page does not know. */
export function planDeviceEdit(intent: string | undefined, values: Record<string, string>): PlanResult | null {
  switch (intent) {
    case "save-interface":
      return plan(InterfaceForm, values, ({ original, ...item }) => planned({ kind: "upsert", collection: "interfaces", original, item }, { collection: "interfaces", name: item.name }));
    case "delete-interface":
      return plan(ElementName, values, ({ name }) => planned({ kind: "delete", collection: "interfaces", name }, { collection: "interfaces", name }));
    case "save-address":
      return plan(AddressForm, values, ({ original, ...item }) => planned({ kind: "upsert", collection: "addresses", original, item }, { collection: "addresses", name: item.name }));
    case "delete-address":
      return plan(ElementName, values, ({ name }) => planned({ kind: "delete", collection: "addresses", name }, { collection: "addresses", name }));
    case "save-address-group":
      return plan(GroupForm, values, ({ original, ...item }) => planned({ kind: "upsert", collection: "addressGroups", original, item }, { collection: "addressGroups", name: item.name }));
    case "delete-address-group":
      return plan(ElementName, values, ({ name }) => planned({ kind: "delete", collection: "addressGroups", name }, { collection: "addressGroups", name }));
    case "save-service":
      return plan(ServiceForm, values, ({ original, ...item }) => planned({ kind: "upsert", collection: "services", original, item }, { collection: "services", name: item.name }));
    case "delete-service":
      return plan(ElementName, values, ({ name }) => planned({ kind: "delete", collection: "services", name }, { collection: "services", name }));
    case "save-service-group":
      return plan(GroupForm, values, ({ original, ...item }) => planned({ kind: "upsert", collection: "serviceGroups", original, item }, { collection: "serviceGroups", name: item.name }));
    case "delete-service-group":
      return plan(ElementName, values, ({ name }) => planned({ kind: "delete", collection: "serviceGroups", name }, { collection: "serviceGroups", name }));
    case "save-schedule":
      return plan(ScheduleForm, values, ({ original, ...item }) => planned({ kind: "upsert", collection: "schedules", original, item }, { collection: "schedules", name: item.name }));
    case "delete-schedule":
      return plan(ElementName, values, ({ name }) => planned({ kind: "delete", collection: "schedules", name }, { collection: "schedules", name }));
    case "save-account":
      // PRODUCT.md §3: login services only; applyElementEdit refuses the rest beside the services field.
      return plan(AccountForm, values, ({ original, ...item }) => planned({ kind: "upsert", collection: "accounts", original, item }, { collection: "accounts", name: item.name }));
    case "delete-account":
      return plan(ElementName, values, ({ name }) => planned({ kind: "delete", collection: "accounts", name }, { collection: "accounts", name }));
    case "save-rule":
      return plan(RuleForm, values, ({ original, position, ...fields }) => {
        // An empty id on a new rule is chosen when the edit is applied; the target learns it then (PlannedAttempt).
        if (original === null) return planned({ kind: "rule.insert", rule: fields, position }, { collection: "inboundRules", name: fields.id });
        const rule = { ...fields, id: fields.id || original };
        return planned({ kind: "rule.update", ruleId: original, rule, position }, { collection: "inboundRules", name: rule.id });
      });
    case "move-rule":
      return plan(MoveForm, values, ({ ruleId, to }) => planned({ kind: "rule.move", ruleId, to }, { collection: "inboundRules", name: ruleId }));
    case "duplicate-rule":
      return plan(RuleId, values, ({ ruleId }) => planned({ kind: "rule.duplicate", ruleId }, { collection: "inboundRules", name: ruleId }));
    case "enable-rule":
    case "disable-rule":
      return plan(RuleId, values, ({ ruleId }) => planned({ kind: "rule.enable", ruleId, enabled: intent === "enable-rule" }, { collection: "inboundRules", name: ruleId }));
    case "delete-rule":
      return plan(RuleId, values, ({ ruleId }) => planned({ kind: "rule.delete", ruleId }, { collection: "inboundRules", name: ruleId }));
    case "save-operator-networks":
      return plan(z.object({ operatorNetworks: NAME_LIST }), values, ({ operatorNetworks }) => planned({ kind: "operator-networks", names: operatorNetworks }, { collection: "operatorNetworks" }));
    case "save-settings":
      return plan(SettingsForm, values, ({ siteId, ...device }) => ({ ...planned({ kind: "settings", device }, { collection: "device" }), siteId }));
    default:
      return null;
  }
}

/**
 * One try of a plan on a document: the edit with its choices made (a new rule's id), the
 * document the engine is about to check and the element the form edited, kept so the engine's
 * problems can be put beside that form's fields.
 */
export class PlannedAttempt {
  candidate: ModelDocument | undefined;
  resolved: ElementEdit;
  target: FormTarget;

  constructor(readonly plan: EditPlan) {
    this.resolved = plan.edit;
    this.target = plan.target;
  }

  /** The edited document (what saveEdit and a draft edit call with the document they hold). */
  readonly apply = (document: ModelDocument): ModelDocument => {
    this.resolved = resolveElementEdit(document, this.plan.edit);
    if (this.resolved.kind === "rule.insert") this.target = { collection: "inboundRules", name: this.resolved.rule.id };
    this.candidate = applyElementEdit(document, this.resolved);
    return this.candidate;
  };
}

/**
 * The response for a refused device edit. A model that did not validate is said in words
 * beside the fields of the form that made it (document paths stay in the CLI and the API);
 * any other refusal is answered as every form answers it. What the user typed is kept.
 */
export async function refusedDeviceEdit(error: unknown, values: Record<string, string>, attempt: PlannedAttempt, library: () => Promise<SharedLibrary>) {
  const refusal = refusalOf(error);
  if (refusal.issues.length === 0 || attempt.candidate === undefined) return refusedForm(refusal, values);
  const errors = fieldMessagesForIssues(refusal.issues, attempt.candidate, await library(), attempt.target);
  return data(formFailure(errors, values, { issues: refusal.issues }), { status: refusal.status, headers: refusal.headers });
}
