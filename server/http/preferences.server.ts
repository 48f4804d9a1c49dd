import { createCookie } from "react-router";
import { isCookieSecure } from "../config.server.ts";

/** How the inbound rules are listed: a card per rule, or one table line per rule for long lists. */
export const RULE_VIEWS = ["detailed", "compact"] as const;
export type RuleView = (typeof RULE_VIEWS)[number];

// Like the theme: a display preference, not secret and not signed, read by the server so the
// first paint already has it (no flash, no hydration mismatch).
// Secure whenever the session cookie is (production, or the site served over https: OWASP ASVS 3.4.1).
let cached: ReturnType<typeof createCookie> | undefined;
function ruleViewCookie() {
  cached ??= createCookie("sallyport-rule-view", { path: "/", sameSite: "lax", httpOnly: true, secure: isCookieSecure(), maxAge: 60 * 60 * 24 * 365 });
  return cached;
}

export async function readRuleView(request: Request): Promise<RuleView> {
  const value: unknown = await ruleViewCookie().parse(request.headers.get("Cookie"));
  return RULE_VIEWS.find((view) => view === value) ?? "detailed";
}

export async function serializeRuleView(view: RuleView): Promise<string> {
  return ruleViewCookie().serialize(view);
}
