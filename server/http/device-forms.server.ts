// Turns the device editor's form posts into workspace edits. Each builder validates the
// fields with zod (messages per field) and returns the edit to apply to the current document.
import { data } from "react-router";
import { z } from "zod";
import {
  ACCESS_LEVELS,
  accountServiceProblem,
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
  deleteNamed,
  deleteRule,
  duplicateRule,
  insertRule,
  moveRule,
  nextRuleId,
  setOperatorNetworks,
  setRuleEnabled,
  updateRule,
  updateSettings,
  upsertNamed,
  fieldMessagesForIssues,
  type FormTarget,
  type ModelDocument,
  type SharedLibrary,
} from "../workspace/index.ts";
import { namesIn } from "../workspace/name-lists.ts";
import { Refusal } from "../errors.ts";
import { fieldErrorsOf, formFailure, type FieldErrors } from "./form.server.ts";
import { refusalOf, refusedForm } from "./refusals.server.ts";
import { ElementNameSchema, TimeZoneSchema } from "./schemas.ts";

/**
 * An edit to apply, the toast that announces it, and the element its form edits (so the
 * engine's problems can be shown beside that form's fields).
 */
export type EditPlan = { edit: (document: ModelDocument) => ModelDocument; message: string; target: FormTarget; siteId?: string };
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
  siteId: z.string().uuid("Choose a site."),
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

const verb = (original: string | null, name: string, label: string) => (original === null ? `Added ${label} ${name}` : original === name ? `Changed ${label} ${name}` : `Renamed ${label} ${original} to ${name}`);

/** The edit a posted intent asks for, or the field errors; null for an intent this page does not know. */
export function planDeviceEdit(intent: string | undefined, values: Record<string, string>): PlanResult | null {
  switch (intent) {
    case "save-interface":
      return plan(InterfaceForm, values, ({ original, ...item }) => ({ edit: (document) => upsertNamed(document, "interfaces", original, item), message: verb(original, item.name, "interface"), target: { collection: "interfaces", name: item.name } }));
    case "delete-interface":
      return plan(ElementName, values, ({ name }) => ({ edit: (document) => deleteNamed(document, "interfaces", name), message: `Deleted interface ${name}`, target: { collection: "interfaces", name } }));
    case "save-address":
      return plan(AddressForm, values, ({ original, ...item }) => ({ edit: (document) => upsertNamed(document, "addresses", original, item), message: verb(original, item.name, "address object"), target: { collection: "addresses", name: item.name } }));
    case "delete-address":
      return plan(ElementName, values, ({ name }) => ({ edit: (document) => deleteNamed(document, "addresses", name), message: `Deleted address object ${name}`, target: { collection: "addresses", name } }));
    case "save-address-group":
      return plan(GroupForm, values, ({ original, ...item }) => ({ edit: (document) => upsertNamed(document, "addressGroups", original, item), message: verb(original, item.name, "address group"), target: { collection: "addressGroups", name: item.name } }));
    case "delete-address-group":
      return plan(ElementName, values, ({ name }) => ({ edit: (document) => deleteNamed(document, "addressGroups", name), message: `Deleted address group ${name}`, target: { collection: "addressGroups", name } }));
    case "save-service":
      return plan(ServiceForm, values, ({ original, ...item }) => ({ edit: (document) => upsertNamed(document, "services", original, item), message: verb(original, item.name, "service"), target: { collection: "services", name: item.name } }));
    case "delete-service":
      return plan(ElementName, values, ({ name }) => ({ edit: (document) => deleteNamed(document, "services", name), message: `Deleted service ${name}`, target: { collection: "services", name } }));
    case "save-service-group":
      return plan(GroupForm, values, ({ original, ...item }) => ({ edit: (document) => upsertNamed(document, "serviceGroups", original, item), message: verb(original, item.name, "service group"), target: { collection: "serviceGroups", name: item.name } }));
    case "delete-service-group":
      return plan(ElementName, values, ({ name }) => ({ edit: (document) => deleteNamed(document, "serviceGroups", name), message: `Deleted service group ${name}`, target: { collection: "serviceGroups", name } }));
    case "save-schedule":
      return plan(ScheduleForm, values, ({ original, ...item }) => ({ edit: (document) => upsertNamed(document, "schedules", original, item), message: verb(original, item.name, "schedule"), target: { collection: "schedules", name: item.name } }));
    case "delete-schedule":
      return plan(ElementName, values, ({ name }) => ({ edit: (document) => deleteNamed(document, "schedules", name), message: `Deleted schedule ${name}`, target: { collection: "schedules", name } }));
    case "save-account":
      return plan(AccountForm, values, ({ original, ...item }) => ({
        edit: (document) => {
          // PRODUCT.md §3: login services only. The engine refuses the rest too; checked here so the message sits beside the field.
          const problems = item.services.map((name) => accountServiceProblem(name, document)).filter((problem) => problem !== null);
          if (problems.length > 0) throw new Refusal(`Not saved: ${problems.join("; ")}.`, 400, { field: "services" });
          return upsertNamed(document, "accounts", original, item);
        },
        message: verb(original, item.name, "account"),
        target: { collection: "accounts", name: item.name },
      }));
    case "delete-account":
      return plan(ElementName, values, ({ name }) => ({ edit: (document) => deleteNamed(document, "accounts", name), message: `Deleted account ${name}`, target: { collection: "accounts", name } }));
    case "save-rule":
      return plan(RuleForm, values, ({ original, position, ...fields }) => {
        // An empty id is chosen when the edit runs; the target learns it then.
        const target = { collection: "inboundRules" as const, name: fields.id || (original ?? "") };
        return {
          edit: (document) => {
            const rule = { ...fields, id: fields.id || (original ?? nextRuleId(document)) };
            target.name = rule.id;
            if (original === null) return insertRule(document, rule, position);
            const updated = updateRule(document, original, rule);
            return position === undefined ? updated : moveRule(updated, rule.id, position);
          },
          message: original === null ? `Added inbound rule${fields.id ? ` ${fields.id}` : ""}` : `Changed inbound rule ${original}`,
          target,
        };
      });
    case "move-rule":
      return plan(MoveForm, values, ({ ruleId, to }) => ({ edit: (document) => moveRule(document, ruleId, to), message: `Moved inbound rule ${ruleId} to position ${to}`, target: { collection: "inboundRules", name: ruleId } }));
    case "duplicate-rule":
      return plan(RuleId, values, ({ ruleId }) => ({ edit: (document) => duplicateRule(document, ruleId), message: `Duplicated inbound rule ${ruleId}`, target: { collection: "inboundRules", name: ruleId } }));
    case "enable-rule":
    case "disable-rule":
      return plan(RuleId, values, ({ ruleId }) => ({
        edit: (document) => setRuleEnabled(document, ruleId, intent === "enable-rule"),
        message: `${intent === "enable-rule" ? "Enabled" : "Disabled"} inbound rule ${ruleId}`,
        target: { collection: "inboundRules", name: ruleId },
      }));
    case "delete-rule":
      return plan(RuleId, values, ({ ruleId }) => ({ edit: (document) => deleteRule(document, ruleId), message: `Deleted inbound rule ${ruleId}`, target: { collection: "inboundRules", name: ruleId } }));
    case "save-operator-networks":
      return plan(z.object({ operatorNetworks: NAME_LIST }), values, ({ operatorNetworks }) => ({ edit: (document) => setOperatorNetworks(document, operatorNetworks), message: "Changed operator networks", target: { collection: "operatorNetworks" } }));
    case "save-settings":
      return plan(SettingsForm, values, ({ siteId, ...device }) => ({ edit: (document) => updateSettings(document, device), message: "Changed device settings", target: { collection: "device" }, siteId }));
    default:
      return null;
  }
}

/**
 * The response for a refused device edit. A model that did not validate is said in words
 * beside the fields of the form that made it (document paths stay in the CLI and the API);
 * any other refusal is answered as every form answers it. What the user typed is kept.
 */
export async function refusedDeviceEdit(error: unknown, values: Record<string, string>, attempt: { plan: EditPlan; candidate: ModelDocument | undefined; library: () => Promise<SharedLibrary> }) {
  const refusal = refusalOf(error);
  if (refusal.issues.length === 0 || attempt.candidate === undefined) return refusedForm(refusal, values);
  const errors = fieldMessagesForIssues(refusal.issues, attempt.candidate, await attempt.library(), attempt.plan.target);
  return data(formFailure(errors, values, { issues: refusal.issues }), { status: refusal.status, headers: refusal.headers });
}
