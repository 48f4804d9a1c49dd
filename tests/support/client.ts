import { randomBytes } from "node:crypto";
import { inject } from "vitest";

/** A distinct documentation address (RFC 3849) per client, so per-address throttling stays per test. */
export function nextClientAddress(): string {
  const groups = Array.from(randomBytes(8)).reduce<string[]>((all, byte, index) => {
    if (index % 2 === 0) all.push(byte.toString(16).padStart(2, "0"));
    else all[all.length - 1] += byte.toString(16).padStart(2, "0");
    return all;
  }, []);
  return `2001:db8:${groups.join(":")}::1`;
}

export type FetchResult = { status: number; headers: Headers; text: string; location: string | null; setCookies: string[] };

/**
 * A small HTTP client with its own cookie jar, posting forms with this site's Origin like a
 * browser would. Redirects are not followed, so tests see each step.
 */
export class TestClient {
  readonly baseUrl: string;
  readonly cookies = new Map<string, string>();
  readonly clientAddress: string;

  /** `baseUrl` names another server than the suite's (a test that starts its own). */
  constructor(clientAddress?: string, baseUrl?: string) {
    this.clientAddress = clientAddress ?? nextClientAddress();
    this.baseUrl = baseUrl ?? inject("baseUrl");
  }

  private cookieHeader(): string {
    return [...this.cookies].map(([name, value]) => `${name}=${value}`).join("; ");
  }

  private remember(response: Response): string[] {
    const setCookies = response.headers.getSetCookie();
    for (const line of setCookies) {
      const [pair, ...attributes] = line.split(";");
      const index = pair.indexOf("=");
      const name = pair.slice(0, index).trim();
      const value = pair.slice(index + 1).trim();
      const expired = attributes.some((attribute) => /^\s*max-age=0\s*$/i.test(attribute)) || value === "";
      if (expired) this.cookies.delete(name);
      else this.cookies.set(name, value);
    }
    return setCookies;
  }

  async request(path: string, init: RequestInit & { origin?: string | null } = {}): Promise<FetchResult> {
    const headers = new Headers(init.headers);
    if (this.cookies.size) headers.set("Cookie", this.cookieHeader());
    headers.set("X-Forwarded-For", this.clientAddress);
    const method = (init.method ?? "GET").toUpperCase();
    if (method !== "GET" && init.origin !== null) headers.set("Origin", init.origin ?? this.baseUrl);
    const response = await fetch(`${this.baseUrl}${path}`, { ...init, headers, redirect: "manual" });
    const setCookies = this.remember(response);
    return { status: response.status, headers: response.headers, text: await response.text(), location: response.headers.get("location"), setCookies };
  }

  get(path: string): Promise<FetchResult> {
    return this.request(path);
  }

  post(path: string, fields: Record<string, string>, init: { origin?: string | null } = {}): Promise<FetchResult> {
    return this.request(path, { method: "POST", body: new URLSearchParams(fields), origin: init.origin });
  }

  async signIn(email: string, password: string): Promise<FetchResult> {
    return this.post("/login", { email, password });
  }
}

export const DEMO_PASSWORDS = {
  owner: ["maren.holt@lanternfield.example", "demo-password-owner"],
  admin: ["tobias.reyes@lanternfield.example", "demo-password-admin"],
  engineer: ["priya.nandakumar@lanternfield.example", "demo-password-engineer"],
  reviewer: ["oskar.lindqvist@lanternfield.example", "demo-password-reviewer"],
  trainee: ["jun.watanabe@lanternfield.example", "demo-password-trainee"],
} as const;

let uniqueCounter = 0;
/** A fresh e-mail address on the reserved .example domain (RFC 2606). */
export function uniqueEmail(label: string): string {
  uniqueCounter += 1;
  return `${label}-${Date.now().toString(36)}-${uniqueCounter}@test.example`;
}

export const GOOD_PASSWORD = "quiet harbour lantern 42";

/** Signs up a new user with their own organisation; returns the client and the organisation slug. */
export async function signUpNewOrganisation(label: string): Promise<{ client: TestClient; email: string; slug: string }> {
  const client = new TestClient();
  const email = uniqueEmail(label);
  const response = await client.post("/signup", { name: `Test ${label}`, email, organisationName: `Test ${label} ${Date.now().toString(36)}`, password: GOOD_PASSWORD });
  if (response.status !== 302 || !response.location?.startsWith("/o/")) throw new Error(`sign-up failed: ${response.status} ${response.text.slice(0, 300)}`);
  return { client, email, slug: response.location.slice(3) };
}

/** Posts a multipart form (an upload) with the client's cookies and Origin; a Blob is sent as the file "model.json". */
export function postMultipart(client: TestClient, path: string, fields: Record<string, string | Blob>): Promise<FetchResult> {
  const form = new FormData();
  for (const [key, value] of Object.entries(fields)) {
    if (typeof value === "string") form.append(key, value);
    else form.append(key, value, "model.json");
  }
  return client.request(path, { method: "POST", body: form });
}
