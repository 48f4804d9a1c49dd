// Presentation helpers for the reach and exposure map pages: readable address counts and safe
// download names. The computation behind the pages (grids, counts, paging) lives in
// server/analysis/; nothing under server/ imports this file.

// ---------------------------------------------------------------------------------------------
// Numbers

/** A decimal string with thousands separators: "4294967296" → "4,294,967,296". */
export function groupDigits(decimal: string): string {
  return decimal.replace(/\B(?=(\d{3})+(?!\d))/g, ",");
}

const SUPERSCRIPT: Record<string, string> = { "0": "⁰", "1": "¹", "2": "²", "3": "³", "4": "⁴", "5": "⁵", "6": "⁶", "7": "⁷", "8": "⁸", "9": "⁹" };

function superscript(n: number): string {
  return String(n)
    .split("")
    .map((digit) => SUPERSCRIPT[digit] ?? digit)
    .join("");
}

/**
 * A count an engineer can read. IPv4 counts (≤ 2^32) are exact with separators. Larger counts
 * (IPv6, up to 2^128) become "2⁹⁶" when an exact power of two, else "≈ 7.9 × 10²⁸"; counts
 * below 10^15 stay exact. `exact` is the grouped decimal, for a tooltip.
 */
export function formatCount(decimal: string): { text: string; exact: string } {
  const value = BigInt(decimal);
  const exact = groupDigits(value.toString());
  if (value < 1_000_000_000_000_000n) return { text: exact, exact };
  if ((value & (value - 1n)) === 0n) return { text: `2${superscript(value.toString(2).length - 1)}`, exact };
  const digits = value.toString();
  let exponent = digits.length - 1;
  let mantissa = (Number(digits.slice(0, 3)) / 100).toFixed(1);
  if (mantissa === "10.0") {
    mantissa = "1.0";
    exponent += 1;
  }
  return { text: `≈ ${mantissa} × 10${superscript(exponent)}`, exact };
}

// ---------------------------------------------------------------------------------------------
// Downloads

/** A safe download name: letters, digits, dot, dash and underscore only. */
export function downloadName(...parts: string[]): string {
  return parts.join("-").replace(/[^A-Za-z0-9._-]/g, "_");
}
