import { createCookie } from "react-router";

export const THEMES = ["system", "light", "dark"] as const;
export type Theme = (typeof THEMES)[number];

// Not secret and not signed: a display preference readable by the server for the first paint.
const themeCookie = createCookie("sallyport-theme", { path: "/", sameSite: "lax", httpOnly: true, maxAge: 60 * 60 * 24 * 365 });

export async function readTheme(request: Request): Promise<Theme> {
  const value: unknown = await themeCookie.parse(request.headers.get("Cookie"));
  return THEMES.find((theme) => theme === value) ?? "system";
}

export async function serializeTheme(theme: Theme): Promise<string> {
  return themeCookie.serialize(theme);
}
