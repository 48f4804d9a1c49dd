// The engine's validation problems, said in words beside the form field they concern. The
// engine names each problem by its document path (`inboundRules[0].sources[0]: unknown address
// "admin-desk"`), which the CLI, the API and the import page print as they are; a form instead
// shows "No address object or group is named “admin-desk”. Did you mean “admin-desks”?" under
// its Sources field. Pure: the caller passes the document the engine checked, the organisation's
// shared objects and which element the form edits.
import {
  ALL_WEEK_SCHEDULE,
  ANY_INTERFACE,
  ANY_SERVICE,
  BUILTIN_ADDRESS_NAMES,
  BUILTIN_SERVICES,
  isValidTimeZone,
  looksLikeAddressEntry,
  type ValidationIssue,
} from "../engine/index.ts";
import { didYouMean } from "./close-names.ts";
import { effectiveDocument, sharedObjectsUsedBy, type ModelDocument, type SharedLibrary } from "./document.ts";

/** The parts of a document that hold a list of named elements (plus the rules, keyed by id). */
export type ElementCollection = "interfaces" | "addresses" | "addressGroups" | "services" | "serviceGroups" | "schedules" | "inboundRules" | "accounts";

/** What one form edits: an element by its name (a rule by its id) after the edit, the operator networks, or the device settings. */
export type FormTarget = { collection: ElementCollection; name: string } | { collection: "operatorNetworks" } | { collection: "device" };

/** Messages keyed by form field; "form" holds the summary shown above the form. */
export type FieldMessages = Record<string, string>;

type Section = ElementCollection | "operatorNetworks" | "device";

/** Each document field's form field and label, per part of the document. */
const FIELDS: Record<Section, Record<string, { field: string; label: string }>> = {
  interfaces: { name: { field: "name", label: "Name" }, role: { field: "role", label: "Role" }, addresses: { field: "addresses", label: "Addresses" }, listeners: { field: "listeners", label: "Listeners" } },
  addresses: { name: { field: "name", label: "Name" }, entries: { field: "entries", label: "Entries" } },
  addressGroups: { name: { field: "name", label: "Name" }, members: { field: "members", label: "Members" } },
  services: { name: { field: "name", label: "Name" }, protocol: { field: "protocol", label: "Protocol" }, port: { field: "port", label: "Port" }, kind: { field: "kind", label: "Kind" } },
  serviceGroups: { name: { field: "name", label: "Name" }, members: { field: "members", label: "Members" } },
  schedules: { name: { field: "name", label: "Name" }, windows: { field: "windows", label: "Windows" } },
  inboundRules: {
    id: { field: "id", label: "Rule id" },
    interface: { field: "interface", label: "Interface" },
    sources: { field: "sources", label: "Sources" },
    destinations: { field: "destinations", label: "Destinations" },
    services: { field: "services", label: "Services" },
    schedule: { field: "schedule", label: "Schedule" },
    action: { field: "action", label: "Action" },
    enabled: { field: "enabled", label: "Enabled" },
    note: { field: "note", label: "Note" },
  },
  accounts: {
    name: { field: "name", label: "Name" },
    loginSources: { field: "loginSources", label: "Login sources" },
    secondFactor: { field: "secondFactor", label: "Second factor" },
    services: { field: "services", label: "Login services" },
    accessLevel: { field: "accessLevel", label: "Access level" },
    enabled: { field: "enabled", label: "Enabled" },
  },
  operatorNetworks: { "": { field: "operatorNetworks", label: "Operator networks" } },
  device: {
    name: { field: "name", label: "Device name" },
    timezone: { field: "timezone", label: "Time zone" },
    defaultInbound: { field: "defaultInbound", label: "Default inbound action" },
    unlistenedPort: { field: "unlistenedPort", label: "Ports with no listener" },
  },
};

/** A problem about a whole element (no field in its path) belongs beside this field, if any. */
const WHOLE_ELEMENT_FIELD: Partial<Record<Section, string>> = { services: "port" };

const ELEMENT_WORDS: Record<ElementCollection, string> = {
  interfaces: "interface",
  addresses: "address object",
  addressGroups: "address group",
  services: "service",
  serviceGroups: "service group",
  schedules: "schedule",
  inboundRules: "inbound rule",
  accounts: "account",
};

/** `inboundRules[3].sources[0]` → section, element index, field, item index; the rest (e.g. `.start`) is kept. */
export type IssuePath = { section: Section | null; index: number | null; field: string; item: number | null; rest: string };

export function parseIssuePath(path: string): IssuePath {
  const match = /^([A-Za-z]+)(?:\[(\d+)\])?(?:\.([A-Za-z]+))?(?:\[(\d+)\])?(.*)$/.exec(path);
  const section = match && Object.hasOwn(FIELDS, match[1]) ? (match[1] as Section) : null;
  if (!match || section === null) return { section: null, index: null, field: "", item: null, rest: path };
  // operatorNetworks[2] is a list of names itself: its index is the item, not an element.
  if (section === "operatorNetworks") return { section, index: null, field: "", item: match[2] === undefined ? null : Number(match[2]), rest: match[5] };
  return { section, index: match[2] === undefined ? null : Number(match[2]), field: match[3] ?? "", item: match[4] === undefined ? null : Number(match[4]), rest: match[5] };
}

/** The valid names of each kind, for "did you mean": the document's, the shared library's and the built-ins. */
type NameBook = {
  addresses: string[];
  services: string[];
  catalogue: string[];
  loginServices: string[];
  interfaces: string[];
  schedules: string[];
};

function nameBook(effective: ModelDocument, library: SharedLibrary): NameBook {
  const catalogue = [...BUILTIN_SERVICES.map((service) => service.name), ...effective.services.map((service) => service.name)];
  return {
    addresses: [
      ...effective.addresses.map((object) => object.name),
      ...effective.addressGroups.map((group) => group.name),
      ...library.addresses.map((object) => object.name),
      ...library.addressGroups.map((group) => group.name),
      ...BUILTIN_ADDRESS_NAMES,
    ],
    services: [...catalogue, ...effective.serviceGroups.map((group) => group.name), ANY_SERVICE],
    catalogue,
    loginServices: [...BUILTIN_SERVICES, ...effective.services].filter((service) => service.kind === "login").map((service) => service.name),
    interfaces: [...effective.interfaces.map((entry) => entry.name), ANY_INTERFACE],
    schedules: [...effective.schedules.map((schedule) => schedule.name), ALL_WEEK_SCHEDULE],
  };
}

const curly = (text: string) => text.replace(/"([^"]*)"/g, "“$1”");

/** First letter up, a full stop at the end, straight quotes made typographic. */
function sentence(text: string): string {
  const trimmed = curly(text.trim());
  const capital = trimmed.charAt(0).toUpperCase() + trimmed.slice(1);
  return /[.?!]$/.test(capital) ? capital : `${capital}.`;
}

/** "No address object …" → "no address object …" inside a summary; names and acronyms keep their case. */
function lowerFirst(text: string): string {
  return /^[A-Z][a-z]/.test(text) ? text.charAt(0).toLowerCase() + text.slice(1) : text;
}

function otherKindOf(name: string, book: NameBook, except: keyof NameBook): string | null {
  const kinds: Array<[keyof NameBook, string]> = [
    ["addresses", "an address object or group"],
    ["services", "a service"],
    ["interfaces", "an interface"],
    ["schedules", "a schedule"],
  ];
  for (const [kind, words] of kinds) if (kind !== except && book[kind].includes(name)) return words;
  return null;
}

/**
 * One engine message in words for a person, with "did you mean" for an unknown name (only
 * names of the kind the field takes). `value` is the field's value where the engine's message
 * does not quote it (a time zone).
 */
function issueInWords(issue: ValidationIssue, book: NameBook, value?: string): string {
  const path = parseIssuePath(issue.path);
  const message = issue.message;
  let match: RegExpExecArray | null;

  if ((match = /^unknown address "(.*)"$/.exec(message))) {
    const name = match[1];
    if (looksLikeAddressEntry(name) && path.field !== "loginSources") {
      return `“${name}” is an address, but this list takes the names of address objects and groups: add an address object for it first.`;
    }
    const other = otherKindOf(name, book, "addresses");
    if (other) return `“${name}” is ${other}; this list takes address objects and groups.`;
    return `No address object or group is named “${name}”.${didYouMean(name, book.addresses)}`;
  }
  if ((match = /^unknown service "(.*)" \(listeners name catalogue services\)$/.exec(message))) {
    return `No service is named “${match[1]}”.${didYouMean(match[1], book.catalogue)}`;
  }
  if ((match = /^unknown service "(.*)" \(accounts name login services only\)$/.exec(message))) {
    return `No login service is named “${match[1]}”.${didYouMean(match[1], book.loginServices)}`;
  }
  if ((match = /^unknown service "(.*)"$/.exec(message))) {
    const other = otherKindOf(match[1], book, "services");
    if (other) return `“${match[1]}” is ${other}; this list takes services and service groups.`;
    return `No service or service group is named “${match[1]}”.${didYouMean(match[1], book.services)}`;
  }
  if ((match = /^unknown interface "(.*)"$/.exec(message))) {
    return `No interface is named “${match[1]}”.${didYouMean(match[1], book.interfaces)}`;
  }
  if ((match = /^unknown schedule "(.*)"$/.exec(message))) {
    return `No schedule is named “${match[1]}”.${didYouMean(match[1], book.schedules)}`;
  }
  if ((match = /^"(.*)" is a service of kind (\w+) \(accounts name login services only\)$/.exec(message))) {
    return `“${match[1]}” is not a login service (its kind is ${match[2]}); an account names login services only.`;
  }
  if ((match = /^"(.*)" is not a service name \(accounts name login services only; an empty list means all of them\)$/.exec(message))) {
    return `“${match[1]}” is not a service name; leave the list empty to allow every login service.`;
  }
  if ((match = /^"(.*)" is a service group \(accounts name login services only\)$/.exec(message))) {
    return `“${match[1]}” is a service group; an account names login services one by one.`;
  }
  if ((match = /^"(.*)" is a built-in (\w+) name$/.exec(message))) {
    return `“${match[1]}” is a built-in ${match[2]} name; choose another name.`;
  }
  if ((match = /^duplicate (\w+) name "(.*)"$/.exec(message))) {
    const what = match[1] === "address" ? "address object or group" : match[1] === "service" ? "service or service group" : match[1];
    return `Another ${what} is already named “${match[2]}”.`;
  }
  if ((match = /^duplicate rule id "(.*)"$/.exec(message))) {
    return `Another inbound rule already has the id “${match[1]}”.`;
  }
  if ((match = /^(\S+) is already the service "(.*)"$/.exec(message))) {
    return `${match[1]} is already the service “${match[2]}”; two services cannot share a protocol and port.`;
  }
  if ((match = /^address (\S+) is already on interface "(.*)"$/.exec(message))) {
    return `${match[1]} is already on interface “${match[2]}”; an address sits on one interface only.`;
  }
  if ((match = /^group cycle (.*)$/.exec(message))) {
    return `Groups would contain each other in a loop: ${match[1].replace(/"/g, "")}.`;
  }
  if (message === "is not a known IANA time zone") return timeZoneProblem(value ?? "") ?? sentence(message);
  if (message === "must be 1-63 characters of A-Z a-z 0-9 . _ -") return "Use 1–63 characters: letters, digits, dot, underscore, dash.";
  if (/^must be HH:MM/.test(message) && path.section === "schedules") {
    return `Window ${(path.item ?? 0) + 1}: times run from 00:00 to 23:59 (HH:MM).`;
  }
  return sentence(message);
}

/**
 * Why a device time zone is refused, with the zone it nearly names, or null when the engine
 * knows it. Shared with the forms that ask for a time zone, so they refuse before the engine does.
 */
export function timeZoneProblem(zone: string): string | null {
  if (isValidTimeZone(zone)) return null;
  return `“${zone.slice(0, 64)}” is not a known IANA time zone (such as Europe/Amsterdam).${didYouMean(zone, knownTimeZones())}`;
}

let timeZones: string[] | null = null;
/** The IANA zones this runtime knows (ECMA-402 `Intl.supportedValuesOf`), read once. */
function knownTimeZones(): string[] {
  timeZones ??= [...Intl.supportedValuesOf("timeZone"), "UTC"];
  return timeZones;
}

/** Where an issue sits: the element it belongs to (index into the effective document) and its words. */
function elementOf(path: IssuePath, document: ModelDocument, effective: ModelDocument): { key: string; label: string } | null {
  if (path.section === null || path.section === "operatorNetworks" || path.section === "device" || path.index === null) return null;
  const section = path.section;
  const items: ReadonlyArray<{ name?: string; id?: string }> = effective[section];
  const item = items[path.index];
  if (!item) return null;
  const key = (section === "inboundRules" ? item.id : item.name) ?? "";
  // Shared objects follow the device's own in the effective document (validateDocument).
  const shared = (section === "addresses" || section === "addressGroups") && path.index >= document[section].length;
  const position = section === "inboundRules" ? ` (position ${path.index + 1})` : "";
  return { key, label: `${shared ? "shared " : ""}${ELEMENT_WORDS[section]} “${key}”${position}` };
}

function isTarget(target: FormTarget, path: IssuePath, element: { key: string } | null): boolean {
  if (target.collection === "operatorNetworks" || target.collection === "device") return path.section === target.collection;
  return path.section === target.collection && element?.key === target.name;
}

/**
 * A problem reported on another element that is about the edited one: the later of two
 * elements carries a clash ("tcp/8443 is already the service "web-alt"", an address already on
 * another interface, a group loop through it). The form shows it beside its own field, naming
 * the other element.
 */
function clashWithTarget(issue: ValidationIssue, path: IssuePath, target: FormTarget, element: { key: string } | null): { field: string; words: string } | null {
  if (target.collection === "operatorNetworks" || target.collection === "device" || element === null) return null;
  let match: RegExpExecArray | null;
  if (target.collection === "services" && path.section === "services" && (match = /^(\S+) is already the service "(.*)"$/.exec(issue.message)) && match[2] === target.name) {
    return { field: "port", words: `${match[1]} is already the service “${element.key}”; two services cannot share a protocol and port.` };
  }
  if (target.collection === "interfaces" && path.section === "interfaces" && (match = /^address (\S+) is already on interface "(.*)"$/.exec(issue.message)) && match[2] === target.name) {
    return { field: "addresses", words: `${match[1]} is already on interface “${element.key}”; an address sits on one interface only.` };
  }
  if (path.section === target.collection && (match = /^group cycle (.*)$/.exec(issue.message)) && match[1].includes(`"${target.name}"`)) {
    return { field: "members", words: `Groups would contain each other in a loop: ${match[1].replace(/"/g, "")}.` };
  }
  return null;
}

/** The value an issue's message leaves out, where the words need it. */
function valueAt(path: IssuePath, effective: ModelDocument): string | undefined {
  if (path.section === "device" && path.field === "timezone") return effective.device.timezone;
  return undefined;
}

/**
 * The form's messages for a model that did not validate: each problem of the edited element
 * beside its field, the others (rare: a shared object, another element) in the summary with
 * the element named. The summary lists every problem with its field's label, so a message whose
 * field is out of view is still read. No document path appears in either.
 */
export function fieldMessagesForIssues(issues: readonly ValidationIssue[], document: ModelDocument, library: SharedLibrary, target: FormTarget): FieldMessages {
  const effective = effectiveDocument(document, sharedObjectsUsedBy(document, library));
  const book = nameBook(effective, library);
  const fields = new Map<string, { label: string; words: string[] }>();
  const elsewhere: string[] = [];
  const add = (field: string, label: string, words: string) => {
    const entry = fields.get(field) ?? { label, words: [] };
    if (!entry.words.includes(words)) entry.words.push(words);
    fields.set(field, entry);
  };
  for (const issue of issues) {
    const path = parseIssuePath(issue.path);
    const element = elementOf(path, document, effective);
    const words = issueInWords(issue, book, valueAt(path, effective));
    const clash = clashWithTarget(issue, path, target, element);
    if (clash) {
      add(clash.field, FIELDS[target.collection][clash.field]?.label ?? clash.field, clash.words);
      continue;
    }
    const section = path.section;
    const known = section !== null && Object.hasOwn(FIELDS[section], path.field) ? FIELDS[section][path.field] : undefined;
    if (section !== null && isTarget(target, path, element)) {
      const field = known?.field ?? WHOLE_ELEMENT_FIELD[section];
      if (field) add(field, FIELDS[section][field]?.label ?? known?.label ?? field, words);
      else elsewhere.push(words);
      continue;
    }
    const where = element?.label ?? (section === "operatorNetworks" ? "operator networks" : section === "device" ? "device settings" : "the model");
    elsewhere.push(`${where.charAt(0).toUpperCase()}${where.slice(1)}${known ? `, ${known.label.toLowerCase()}` : ""}: ${lowerFirst(words)}`);
  }
  const messages: FieldMessages = {};
  const summary: string[] = [];
  for (const [field, entry] of fields) {
    messages[field] = entry.words.join(" ");
    summary.push(`${entry.label}: ${lowerFirst(messages[field])}`);
  }
  summary.push(...elsewhere);
  messages.form = `Not saved. ${summary.join(" ")}`;
  return messages;
}
