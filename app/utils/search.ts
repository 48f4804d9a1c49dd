// What the app shell's search box does with its text. Pure.

const IPV4_LIKE = /^\d{1,3}(\.\d{1,3}){1,3}(\/\d{0,3})?$/;
// Device and site names never hold a colon (NAME_PATTERN), so hex and colons are an IPv6 address.
const IPV6_LIKE = /^[0-9A-Fa-f:.]*:[0-9A-Fa-f:.]*(\/\d{0,3})?$/;

/**
 * Whether the text is meant as an address or CIDR block — "203.0.113.7", "203.0.113.0/24",
 * "2001:db8::/32" — rather than a device or site name. A malformed one ("203.0.113.0/33",
 * "10.0.0") still counts, so fleet reach can say what is wrong with it.
 */
export function looksLikeSource(text: string): boolean {
  const trimmed = text.trim();
  return IPV4_LIKE.test(trimmed) || IPV6_LIKE.test(trimmed);
}
