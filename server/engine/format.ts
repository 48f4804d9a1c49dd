// The one place that turns numbers and instants into text a person reads: thousands
// separators, large counts in words, plurals, instants in a device's time zone and relative
// times. Pure and built on ECMA-402 (Intl) alone, so the engine's finding texts, the server's
// e-mails and every page format alike, and a page renders the same text on the server and in
// the browser (no "now" is read here: callers pass it). English only, as the product is.

const LOCALE = "en";

// ---------------------------------------------------------------------------------------------
// Numbers

const grouped = new Intl.NumberFormat(LOCALE, { maximumFractionDigits: 3 });
// Three significant digits read as "3.70 billion": precise enough to compare, short enough to scan.
const inWords = new Intl.NumberFormat(LOCALE, { notation: "compact", compactDisplay: "long", minimumSignificantDigits: 3, maximumSignificantDigits: 3 });
const scientific = new Intl.NumberFormat(LOCALE, { notation: "scientific", minimumSignificantDigits: 3, maximumSignificantDigits: 3 });

/** A number with thousands separators: 3702390768 → "3,702,390,768". Exact for any bigint. */
export function formatNumber(value: number | bigint): string {
  // Below a thousand a whole number needs no separator: its digits are what the format writes,
  // at a fraction of its cost (a fleet page formats a few hundred counts). -0 keeps its sign there.
  if (typeof value === "number" && Number.isInteger(value) && value > -1000 && value < 1000 && !Object.is(value, -0)) return String(value);
  return grouped.format(value);
}

const percent = new Intl.NumberFormat(LOCALE, { style: "percent", maximumFractionDigits: 0 });

/** A share 0–1 as a whole percentage: 0.875 → "88%". */
export function formatPercent(share: number): string {
  return percent.format(share);
}

/** Counts from here up are given in words ("16.8 million"); below, exactly ("999,999"). */
export const WORDS_FROM = 1_000_000n;
/**
 * English compact words end at "trillion" (CLDR), and 999.5 trillion would round to
 * "1000 trillion"; from here up a count is a power of two ("2⁹⁶") or scientific ("3.40 × 10³⁸").
 */
export const SCIENTIFIC_FROM = 999_500_000_000_000n;

const SUPERSCRIPT_DIGITS = ["⁰", "¹", "²", "³", "⁴", "⁵", "⁶", "⁷", "⁸", "⁹"];
const superscript = (digits: string) => digits.replace(/[0-9]/g, (digit) => SUPERSCRIPT_DIGITS[Number(digit)]);

/** A count as people read it (`text`) and exactly (`exact`, for a title or a screen reader). */
export type CountText = { readonly text: string; readonly exact: string };

/**
 * A count of anything, up to 2^128 and beyond (bigint-safe; a decimal string is accepted as
 * stored counts are strings): exact with separators below a million, then in words
 * ("3.70 billion"), then an exact power of two ("2¹²⁸") or scientific ("3.40 × 10³⁸").
 */
export function formatCount(value: number | bigint | string): CountText {
  const count = typeof value === "bigint" ? value : BigInt(value);
  const exact = formatNumber(count);
  const size = count < 0n ? -count : count;
  if (size < WORDS_FROM) return { text: exact, exact };
  if (size < SCIENTIFIC_FROM) return { text: inWords.format(count), exact };
  if ((size & (size - 1n)) === 0n) return { text: `${count < 0n ? "−" : ""}2${superscript(String(size.toString(2).length - 1))}`, exact };
  const parts = scientific.formatToParts(count);
  const mantissa = parts.filter((part) => ["minusSign", "integer", "decimal", "fraction"].includes(part.type)).map((part) => part.value).join("");
  const exponent = parts.find((part) => part.type === "exponentInteger")?.value ?? "0";
  return { text: `${mantissa} × 10${superscript(exponent)}`, exact };
}

// ---------------------------------------------------------------------------------------------
// Plurals

const pluralRules = new Intl.PluralRules(LOCALE);

/** A noun's forms by plural category (CLDR); English needs "one" and "other". */
export type PluralForms = { readonly one: string; readonly other: string } & Partial<Record<Intl.LDMLPluralRule, string>>;

/** The form of the noun for this count: 1 → "account", 0 and 2 → "accounts". */
export function pluralWord(count: number | bigint, forms: PluralForms): string {
  // Intl.PluralRules takes numbers; beyond 2^53 every English count is "other" anyway.
  const category = pluralRules.select(typeof count === "bigint" ? Number(count) : count);
  return forms[category] ?? forms.other;
}

/** The count with separators and the right form of the noun: "1 account", "1,024 accounts". */
export function plural(count: number | bigint, forms: PluralForms): string {
  return `${formatNumber(count)} ${pluralWord(count, forms)}`;
}

const UNIT_FORMATS = {
  second: new Intl.NumberFormat(LOCALE, { style: "unit", unit: "second", unitDisplay: "long" }),
  minute: new Intl.NumberFormat(LOCALE, { style: "unit", unit: "minute", unitDisplay: "long" }),
  hour: new Intl.NumberFormat(LOCALE, { style: "unit", unit: "hour", unitDisplay: "long" }),
  day: new Intl.NumberFormat(LOCALE, { style: "unit", unit: "day", unitDisplay: "long" }),
};
export type DurationUnit = keyof typeof UNIT_FORMATS;

/** A length of time in words, plural by CLDR: "1 minute", "30 minutes", "24 hours". */
export function formatDuration(amount: number, unit: DurationUnit): string {
  return UNIT_FORMATS[unit].format(amount);
}

// ---------------------------------------------------------------------------------------------
// Instants

/** What the time formatters accept: a Date, epoch milliseconds or an ISO 8601 string. */
export type InstantInput = Date | number | string;

function toDate(at: InstantInput): Date | null {
  const date = at instanceof Date ? at : new Date(at);
  return Number.isNaN(date.getTime()) ? null : date;
}

type DateParts = { weekday: string; day: string; month: string; year: string; hour: string; minute: string };
// Each zone's format with its resolved zone name, kept: resolvedOptions() costs more than the
// formatting itself, and a fleet table formats an instant per row.
const dateFormats = new Map<string, { format: Intl.DateTimeFormat; zone: string }>();

/** The wall-clock parts of an instant in a zone; an unknown zone falls back to UTC. */
function partsIn(date: Date, timeZone: string): { parts: DateParts; zone: string } {
  let known = dateFormats.get(timeZone);
  if (!known) {
    try {
      const format = new Intl.DateTimeFormat(LOCALE, { timeZone, weekday: "short", day: "numeric", month: "short", year: "numeric", hour: "2-digit", minute: "2-digit", hourCycle: "h23" });
      known = { format, zone: format.resolvedOptions().timeZone };
    } catch {
      return partsIn(date, "UTC");
    }
    dateFormats.set(timeZone, known);
  }
  const parts: DateParts = { weekday: "", day: "", month: "", year: "", hour: "", minute: "" };
  for (const part of known.format.formatToParts(date)) if (part.type in parts) parts[part.type as keyof DateParts] = part.value;
  return { parts, zone: known.zone };
}

// The pieces are put together here rather than by the locale's pattern, so the text does not
// depend on which CLDR version the server or the browser carries.
const dayText = (parts: DateParts) => `${parts.weekday} ${parts.day} ${parts.month} ${parts.year}`;
const clockText = (parts: DateParts) => `${parts.hour}:${parts.minute}`;
const isUtc = (zone: string) => zone === "UTC" || zone === "Etc/UTC";

/**
 * An instant in words in the given IANA zone, with UTC beside it when the zone is another:
 * "Wed 2 Dec 2026, 10:00 Europe/Berlin (09:00 UTC)"; "Wed 2 Dec 2026, 09:00 UTC". When the UTC
 * day differs, it is named: "Thu 3 Dec 2026, 00:30 Europe/Berlin (Wed 2 Dec, 23:30 UTC)".
 */
export function formatInstant(at: InstantInput, timeZone = "UTC"): string {
  const date = toDate(at);
  if (!date) return String(at);
  // The same instants come back on every page (revisions, checks, proposals): each is worded once
  // per zone. The text depends on nothing else, so a remembered one is the one worded now. It
  // shows minutes, and since 1972 every zone's offset is a whole number of minutes (the last
  // offset with seconds, Liberia's, ended on 7 Jan 1972: IANA tz, africa file; checked over every
  // zone this runtime knows in tests/unit/format.test.ts), so a trace's "now" is worded once a minute.
  const milliseconds = date.getTime();
  const key = `${timeZone}\n${milliseconds >= WHOLE_MINUTE_OFFSETS_FROM ? Math.floor(milliseconds / 60_000) * 60_000 : milliseconds}`;
  const remembered = instantTexts.get(key);
  if (remembered !== undefined) return remembered;
  const text = instantText(date, timeZone);
  if (instantTexts.size >= REMEMBERED_INSTANTS) instantTexts.delete(instantTexts.keys().next().value as string);
  instantTexts.set(key, text);
  return text;
}

/** Instants worded lately, by zone and epoch milliseconds; the oldest is forgotten first. */
const instantTexts = new Map<string, string>();
const REMEMBERED_INSTANTS = 4096;
const WHOLE_MINUTE_OFFSETS_FROM = Date.UTC(1972, 1, 1);

function instantText(date: Date, timeZone: string): string {
  const local = partsIn(date, timeZone);
  const text = `${dayText(local.parts)}, ${clockText(local.parts)} ${isUtc(local.zone) ? "UTC" : local.zone}`;
  if (isUtc(local.zone)) return text;
  const utc = partsIn(date, "UTC").parts;
  const sameDay = utc.day === local.parts.day && utc.month === local.parts.month && utc.year === local.parts.year;
  return `${text} (${sameDay ? "" : `${utc.weekday} ${utc.day} ${utc.month}, `}${clockText(utc)} UTC)`;
}

/** The wall-clock day and time in the zone, for a column that names the zone once: "Wed 2 Dec 2026, 10:00". */
export function formatClock(at: InstantInput, timeZone = "UTC"): string {
  const date = toDate(at);
  if (!date) return String(at);
  const { parts } = partsIn(date, timeZone);
  return `${dayText(parts)}, ${clockText(parts)}`;
}

/** The day of an instant in the given zone: "Wed 2 Dec 2026". */
export function formatDay(at: InstantInput, timeZone = "UTC"): string {
  const date = toDate(at);
  return date ? dayText(partsIn(date, timeZone).parts) : String(at);
}

const relative = new Intl.RelativeTimeFormat(LOCALE, { numeric: "auto" });
const SECOND = 1000;
const MINUTE = 60 * SECOND;
const HOUR = 60 * MINUTE;
const DAY = 24 * HOUR;

/**
 * How long ago or ahead an instant is from `now` (passed in, so a page renders the same text
 * on the server and in the browser): "now", "5 minutes ago", "yesterday", "in 3 days".
 * Rounded to the largest unit that fits (common practice, no source).
 */
export function formatRelative(at: InstantInput, now: InstantInput): string {
  const date = toDate(at);
  const reference = toDate(now);
  if (!date || !reference) return String(at);
  const ms = date.getTime() - reference.getTime();
  const size = Math.abs(ms);
  if (size < 45 * SECOND) return relative.format(0, "second");
  if (size < 45 * MINUTE) return relative.format(Math.round(ms / MINUTE), "minute");
  if (size < 22 * HOUR) return relative.format(Math.round(ms / HOUR), "hour");
  if (size < 26 * DAY) return relative.format(Math.round(ms / DAY), "day");
  if (size < 320 * DAY) return relative.format(Math.round(ms / (30.44 * DAY)), "month");
  return relative.format(Math.round(ms / (365.25 * DAY)), "year");
}
