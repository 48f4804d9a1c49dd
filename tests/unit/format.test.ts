// The one formatting module (server/engine/format.ts): numbers, counts, plurals and instants
// as every page, export message and finding text shows them.

import fc from "fast-check";
import { describe, expect, test } from "vitest";
import { formatCount, formatDay, formatDuration, formatInstant, formatNumber, formatRelative, plural, pluralWord, SCIENTIFIC_FROM, WORDS_FROM } from "#server/engine/format";

const ACCOUNT = { one: "account", other: "accounts" } as const;

describe("Numbers and counts", () => {
  test("Numbers carry thousands separators, exactly, even beyond 2^53", () => {
    // CLDR "en" decimal pattern #,##0.### (ECMA-402 Intl.NumberFormat).
    expect(formatNumber(3702390768)).toBe("3,702,390,768");
    expect(formatNumber(999)).toBe("999");
    expect(formatNumber(1000)).toBe("1,000");
    expect(formatNumber(0)).toBe("0");
    // RFC 4291 §2: 128-bit addresses, so 2^128 of them; 340282366920938463463374607431768211456 from memory, checked against bigint below.
    const all = formatNumber(2n ** 128n);
    expect(all).toBe("340,282,366,920,938,463,463,374,607,431,768,211,456");
    expect(all.replace(/,/g, "")).toBe((2n ** 128n).toString());
  });

  test("Counts below a million stay exact; larger ones read in words with three significant digits", () => {
    expect(formatCount("0")).toEqual({ text: "0", exact: "0" });
    expect(formatCount("256")).toEqual({ text: "256", exact: "256" }); // RFC 5737: one /24
    expect(formatCount(WORDS_FROM - 1n).text).toBe("999,999");
    expect(formatCount(WORDS_FROM).text).toBe("1.00 million");
    // RFC 4632 §3.1: a /0 holds 2^32 addresses; the exact figure stays for the title.
    expect(formatCount("4294967296")).toEqual({ text: "4.29 billion", exact: "4,294,967,296" });
    expect(formatCount(17_891_328n).text).toBe("17.9 million"); // RFC 1918 §3: the three private blocks together
    expect(formatCount(3702390768).text).toBe("3.70 billion"); // the example: the trailing zero is kept
    expect(formatCount(16_777_216n).text).toBe("16.8 million"); // RFC 1918 §3: 10/8
  });

  test("Rounding never shows 1000 of a word: from 999.5 trillion up a count is a power of two or scientific", () => {
    expect(formatCount(SCIENTIFIC_FROM - 1n).text).toBe("999 trillion");
    expect(formatCount(SCIENTIFIC_FROM).text).toBe("1.00 × 10¹⁵");
    expect(formatCount("999999999999999999").text).toBe("1.00 × 10¹⁸"); // rounding carries into the exponent
  });

  test("IPv6-sized counts are an exact power of two or scientific, never a 39-digit number, with the exact decimal kept", () => {
    const ipv6 = formatCount(2n ** 96n); // RFC 3849: 2001:db8::/32 holds 2^96
    expect(ipv6.text).toBe("2⁹⁶");
    expect(ipv6.exact).toBe("79,228,162,514,264,337,593,543,950,336");
    expect(formatCount((2n ** 128n).toString()).text).toBe("2¹²⁸"); // RFC 4291 §2
    expect(formatCount(2n ** 121n).text).toBe("2¹²¹"); // RFC 4193 §3.1: fc00::/7
    const rest = 2n ** 128n - 2n ** 96n; // all IPv6 outside 2001:db8::/32
    const shown = formatCount(rest);
    expect(shown.text).toBe("3.40 × 10³⁸");
    expect(shown.exact.replace(/,/g, "")).toBe(rest.toString());
  });

  test("A count given as a decimal string, a number or a bigint reads the same", () => {
    for (const value of [0n, 65_535n, 3_702_390_768n, 2n ** 64n + 1n]) {
      expect(formatCount(value.toString())).toEqual(formatCount(value));
      if (value < 2n ** 53n) expect(formatCount(Number(value))).toEqual(formatCount(value));
    }
  });
});

describe("Plurals", () => {
  test("English has one form for exactly one and another for everything else", () => {
    // CLDR plural rules, English: one → i = 1 and v = 0; other → everything else (ECMA-402 Intl.PluralRules).
    expect(plural(1, ACCOUNT)).toBe("1 account");
    expect(plural(0, ACCOUNT)).toBe("0 accounts");
    expect(plural(2, ACCOUNT)).toBe("2 accounts");
    expect(plural(1024, ACCOUNT)).toBe("1,024 accounts");
    expect(plural(2n ** 64n, ACCOUNT)).toBe("18,446,744,073,709,551,616 accounts");
    expect(plural(1n, ACCOUNT)).toBe("1 account");
    expect(pluralWord(1.5, ACCOUNT)).toBe("accounts"); // v = 1: a visible fraction is "other"
    expect(pluralWord(1, { one: "answers", other: "answer" })).toBe("answers"); // forms may be any words, verbs too
  });

  test("Lengths of time use the CLDR unit patterns", () => {
    expect(formatDuration(1, "minute")).toBe("1 minute");
    expect(formatDuration(30, "minute")).toBe("30 minutes");
    expect(formatDuration(24, "hour")).toBe("24 hours");
    expect(formatDuration(7, "day")).toBe("7 days");
  });
});

describe("Instants", () => {
  test("An instant reads in the device's zone, with UTC beside it", () => {
    // Europe/Berlin is UTC+1 in winter and UTC+2 in summer (IANA tz database; EU Directive 2000/84/EC).
    expect(formatInstant("2026-12-02T09:00:00Z", "Europe/Berlin")).toBe("Wed 2 Dec 2026, 10:00 Europe/Berlin (09:00 UTC)");
    expect(formatInstant("2026-07-01T08:00:00Z", "Europe/Berlin")).toBe("Wed 1 Jul 2026, 10:00 Europe/Berlin (08:00 UTC)");
    // UTC alone when the zone is UTC (the device default, PRODUCT.md §3).
    expect(formatInstant("2026-12-02T09:00:00Z")).toBe("Wed 2 Dec 2026, 09:00 UTC");
    expect(formatInstant("2026-12-02T09:00:00Z", "UTC")).toBe("Wed 2 Dec 2026, 09:00 UTC");
  });

  test("When the UTC day differs from the local day, the UTC day is named", () => {
    expect(formatInstant("2026-12-02T23:30:00Z", "Europe/Berlin")).toBe("Thu 3 Dec 2026, 00:30 Europe/Berlin (Wed 2 Dec, 23:30 UTC)");
    // US Eastern daylight time is UTC−4 (Energy Policy Act of 2005 §110; IANA America/New_York).
    expect(formatInstant("2026-07-01T03:00:00Z", "America/New_York")).toBe("Tue 30 Jun 2026, 23:00 America/New_York (Wed 1 Jul, 03:00 UTC)");
  });

  test("Daylight-saving changes are honoured per instant", () => {
    // EU Directive 2000/84/EC Art. 2: summer time begins at 01:00 UTC on the last Sunday in March (29 March 2026).
    expect(formatInstant("2026-03-29T00:59:00Z", "Europe/Berlin")).toBe("Sun 29 Mar 2026, 01:59 Europe/Berlin (00:59 UTC)");
    expect(formatInstant("2026-03-29T01:00:00Z", "Europe/Berlin")).toBe("Sun 29 Mar 2026, 03:00 Europe/Berlin (01:00 UTC)");
  });

  test("A Date, epoch milliseconds and an ISO string give the same text; bad input is shown as it came", () => {
    const iso = "2026-12-02T09:00:00.000Z";
    expect(formatInstant(new Date(iso), "Asia/Tokyo")).toBe(formatInstant(iso, "Asia/Tokyo"));
    expect(formatInstant(Date.parse(iso), "Asia/Tokyo")).toBe("Wed 2 Dec 2026, 18:00 Asia/Tokyo (09:00 UTC)"); // Japan: UTC+9, no DST (IANA tz)
    expect(formatInstant("not a time", "UTC")).toBe("not a time");
    expect(formatInstant(iso, "Not/AZone")).toBe("Wed 2 Dec 2026, 09:00 UTC"); // an unknown zone falls back to UTC
    expect(formatDay(iso, "Pacific/Auckland")).toBe("Wed 2 Dec 2026"); // NZDT UTC+13: 22:00 the same day
    expect(formatDay("2026-12-02T12:00:00Z", "Pacific/Auckland")).toBe("Thu 3 Dec 2026");
  });

  test("Remembered texts are the texts worded now: per zone, and still right after many other instants", () => {
    // A plain formatter with the same options, made here: what each text must equal whether or not it was remembered.
    const fresh = (at: number, timeZone: string) => {
      const parts = Object.fromEntries(new Intl.DateTimeFormat("en", { timeZone, weekday: "short", day: "numeric", month: "short", year: "numeric", hour: "2-digit", minute: "2-digit", hourCycle: "h23" }).formatToParts(at).map((part) => [part.type, part.value]));
      return `${parts.weekday} ${parts.day} ${parts.month} ${parts.year}, ${parts.hour}:${parts.minute}`;
    };
    const zones = ["UTC", "Europe/Berlin", "Asia/Tokyo", "America/New_York"];
    fc.assert(
      fc.property(fc.integer({ min: Date.UTC(2000, 0, 1), max: Date.UTC(2040, 0, 1) }), fc.constantFrom(...zones), (at, timeZone) => {
        const first = formatInstant(at, timeZone);
        expect(first.startsWith(fresh(at, timeZone))).toBe(true);
        expect(formatInstant(new Date(at).toISOString(), timeZone)).toBe(first);
      }),
      { seed: 20261203, numRuns: 300 },
    );
    const at = Date.UTC(2026, 11, 2, 9);
    expect(formatInstant(at, "Asia/Tokyo")).toBe("Wed 2 Dec 2026, 18:00 Asia/Tokyo (09:00 UTC)");
    expect(formatInstant(at, "UTC")).toBe("Wed 2 Dec 2026, 09:00 UTC"); // the zone is part of what is remembered
    for (let minute = 1; minute <= 5000; minute++) formatInstant(at + minute * 60_000, "UTC"); // more than are kept
    expect(formatInstant(at, "Asia/Tokyo")).toBe("Wed 2 Dec 2026, 18:00 Asia/Tokyo (09:00 UTC)");
  });

  test("Since 1972 an instant's text is its minute's in every zone this runtime knows, so one worded text serves the whole minute", () => {
    // IANA tz (africa file): Liberia's offset of −0:44:30 was the last with seconds, until 7 Jan 1972.
    const zones = Intl.supportedValuesOf("timeZone");
    fc.assert(
      fc.property(fc.integer({ min: Date.UTC(1972, 1, 1), max: Date.UTC(2040, 0, 1) }), fc.constantFrom(...zones), (at, timeZone) => {
        const minute = Math.floor(at / 60_000) * 60_000;
        const format = new Intl.DateTimeFormat("en", { timeZone, day: "numeric", month: "short", year: "numeric", hour: "2-digit", minute: "2-digit", hourCycle: "h23" });
        expect(format.format(at)).toBe(format.format(minute));
        expect(formatInstant(at, timeZone)).toBe(formatInstant(minute + 59_999, timeZone));
      }),
      { seed: 20261203, numRuns: 3000 },
    );
    // Before then a zone with seconds in its offset can turn its minute within a UTC minute: each instant is worded on its own.
    // Monrovia kept −0:44:30 until 1972: on 1 Jun 1971, 12:00:20 and 12:00:40 UTC are 11:15:50 and 11:16:10 there.
    expect(formatInstant(Date.UTC(1971, 5, 1, 12, 0, 20), "Africa/Monrovia")).toBe("Tue 1 Jun 1971, 11:15 Africa/Monrovia (12:00 UTC)");
    expect(formatInstant(Date.UTC(1971, 5, 1, 12, 0, 40), "Africa/Monrovia")).toBe("Tue 1 Jun 1971, 11:16 Africa/Monrovia (12:00 UTC)");
  });

  test("Whole numbers below a thousand are their digits; the format's answer everywhere (ECMA-402 Intl.NumberFormat)", () => {
    const grouped = new Intl.NumberFormat("en", { maximumFractionDigits: 3 });
    fc.assert(fc.property(fc.oneof(fc.integer({ min: -5000, max: 5000 }), fc.double({ min: -5000, max: 5000, noNaN: true }), fc.constant(-0)), (value) => {
      expect(formatNumber(value)).toBe(grouped.format(value));
    }), { seed: 20261203, numRuns: 2000 });
  });

  test("Relative times count from the given now, in the largest unit that fits", () => {
    const now = "2026-12-02T09:00:00Z";
    // ECMA-402 Intl.RelativeTimeFormat with numeric "auto": CLDR's "now", "yesterday", "tomorrow".
    expect(formatRelative("2026-12-02T08:59:30Z", now)).toBe("now");
    expect(formatRelative("2026-12-02T08:55:00Z", now)).toBe("5 minutes ago");
    expect(formatRelative("2026-12-02T09:01:00Z", now)).toBe("in 1 minute");
    expect(formatRelative("2026-12-02T06:00:00Z", now)).toBe("3 hours ago");
    expect(formatRelative("2026-12-01T09:00:00Z", now)).toBe("yesterday");
    expect(formatRelative("2026-12-05T09:00:00Z", now)).toBe("in 3 days");
    expect(formatRelative("2026-09-02T09:00:00Z", now)).toBe("3 months ago");
    expect(formatRelative("2024-12-02T09:00:00Z", now)).toBe("2 years ago");
  });
});
