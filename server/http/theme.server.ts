import { createCookie } from "react-router";
import { isCookieSecure } from "../config.server.ts";

export const THEMES = ["system", "light", "dark"] as const;
export type Theme = (typeof THEMES)[number];

// Not secret and not signed: a display preference readable by the server for the first paint.
// Secure whenever the session cookie is (production, or the site served over https: OWASP ASVS 3.4.1).
let cached: ReturnType<typeof createCookie> | undefined;
function themeCookie() {
  cached ??= createCookie("sallyport-theme", { path: "/", sameSite: "lax", httpOnly: true, secure: isCookieSecure(), maxAge: 60 * 60 * 24 * 365 });
  return cached;
}

export async function readTheme(request: Request): Promise<Theme> {
  const value: unknown = await themeCookie().parse(request.headers.get("Cookie"));
  return THEMES.find((theme) => theme === value) ?? "system";
}

export async function serializeTheme(theme: Theme): Promise<string> {
  return themeCookie().serialize(theme);
}
