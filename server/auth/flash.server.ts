import { createCookie } from "react-router";
import { getCookieSecrets, isCookieSecure } from "../config.server.ts";

export type FlashMessage = { kind: "success" | "error" | "info"; message: string };

let flashCookie: ReturnType<typeof createCookie> | undefined;
function getFlashCookie() {
  flashCookie ??= createCookie("sallyport-flash", {
    httpOnly: true,
    sameSite: "lax",
    secure: isCookieSecure(),
    path: "/",
    secrets: getCookieSecrets(),
    maxAge: 60,
  });
  return flashCookie;
}

/** Set-Cookie value carrying a one-time message to show after a redirect (a toast). */
export async function serializeFlash(flash: FlashMessage): Promise<string> {
  return getFlashCookie().serialize(flash);
}

/** Reads the one-time message and the header that clears it. */
export async function readFlash(request: Request): Promise<{ flash: FlashMessage | null; clearCookie: string | null }> {
  const value: unknown = await getFlashCookie().parse(request.headers.get("Cookie"));
  if (!value || typeof value !== "object" || !("message" in value)) return { flash: null, clearCookie: null };
  const candidate = value as FlashMessage;
  return { flash: candidate, clearCookie: await getFlashCookie().serialize("", { maxAge: 0 }) };
}
