import { z } from "zod";

// Validated once at start-up so a missing or malformed variable fails loudly, not mid-request.
const EnvironmentSchema = z.object({
  NODE_ENV: z.enum(["development", "production", "test"]).default("development"),
  DATABASE_URL: z.string().url({ message: "DATABASE_URL must be a postgres:// URL" }),
  SESSION_SECRET: z.string().min(16, "SESSION_SECRET must be at least 16 characters"),
  /**
   * The key that seals second-factor secrets at rest (docs/decisions/019); comma-separated to
   * rotate (the first seals, every one opens). `npm start` keeps one in .data; without it the key
   * is derived from the first SESSION_SECRET, so rotating that would orphan enrolled secrets.
   */
  SECOND_FACTOR_KEY: z.string().min(16, "SECOND_FACTOR_KEY must be at least 16 characters").optional(),
  /**
   * This site's origin (scheme, host, port): the only base of e-mailed links and the only Origin
   * the same-origin guard accepts (docs/decisions/013). Required in production.
   */
  APP_ORIGIN: z
    .string()
    .url({ message: "APP_ORIGIN must be a URL such as https://sallyport.example.com" })
    .refine((value) => /^https?:$/.test(new URL(value).protocol) && new URL(value).pathname === "/" && !new URL(value).search && !new URL(value).hash, "APP_ORIGIN must be an http(s) origin without a path, such as https://sallyport.example.com")
    .optional(),
  /**
   * "1" says this is a local run (`npm start`, `npm test`, the browser tests): production mode
   * without APP_ORIGIN then serves http://localhost:PORT instead of refusing to start.
   */
  SALLYPORT_LOCAL: z.enum(["0", "1"]).default("0"),
  PORT: z.coerce.number().int().min(0).max(65535).default(3000),
  HOST: z.string().default("127.0.0.1"),
  /**
   * "1" trusts X-Forwarded-For for the client address (behind a reverse proxy). Host and
   * X-Forwarded-Host are never trusted: the app's origin is APP_ORIGIN (docs/decisions/013).
   */
  TRUST_PROXY: z.enum(["0", "1"]).default("0"),
  /** The secret that opens the local outbox (`npm start` generates and prints it); without one the outbox stays shut. */
  OUTBOX_SECRET: z.string().min(16, "OUTBOX_SECRET must be at least 16 characters").optional(),
  /** "1" lets the outbox open while the server listens beyond loopback (HOST not 127.0.0.1, ::1 or localhost). */
  OUTBOX_BEYOND_LOOPBACK: z.enum(["0", "1"]).default("0"),
  /** A session ends after this many minutes without a request (NIST SP 800-63B §4.2.3, AAL2: 30). */
  SESSION_IDLE_MINUTES: z.coerce.number().int().min(1).max(24 * 60).default(30),
  /** …and this many hours after sign-in whatever the activity (NIST SP 800-63B §4.2.3, AAL2: 12). */
  SESSION_ABSOLUTE_HOURS: z.coerce.number().int().min(1).max(24 * 30).default(12),
  /** Overrides the Secure cookie flag (on in production by default). */
  COOKIE_SECURE: z.enum(["0", "1"]).optional(),
  SMTP_HOST: z.string().default("127.0.0.1"),
  SMTP_PORT: z.coerce.number().int().min(1).max(65535).default(2525),
  SMTP_SECURE: z.enum(["0", "1"]).default("0"),
  SMTP_USER: z.string().optional(),
  SMTP_PASSWORD: z.string().optional(),
  MAIL_FROM: z.string().default("Sallyport <no-reply@sallyport.invalid>"),
  /** Set by `npm start`/`npm test` when the local fake SMTP server catches all mail. */
  SALLYPORT_FAKE_SMTP: z.enum(["0", "1"]).default("0"),
  MAIL_OUTBOX_DIR: z.string().optional(),
  /** "1" adds a Server-Timing header with each response's database query count and time. */
  SERVER_TIMING: z.enum(["0", "1"]).default("0"),
  /**
   * Sign-ups one client address may attempt per hour (server/auth/throttle.server.ts). Raise it
   * where many people sign up from one address (a classroom behind one NAT, the browser tests).
   */
  SIGN_UPS_PER_CLIENT: z.coerce.number().int().min(1, "SIGN_UPS_PER_CLIENT must be at least 1").max(10_000).default(30),
  /** Requests one web process works at once; the rest wait their fair turn (server/http/admission.server.ts, docs/decisions/024; 1 since decision 030 — a demo answer then waits for one page, not beside it; 2 from 029, 4 before). */
  ADMISSION_CONCURRENCY: z.coerce.number().int().min(1, "ADMISSION_CONCURRENCY must be at least 1").max(1024).default(1),
  /** "1": every answer says how long it waited for its turn (Server-Timing "turn"), for the load benchmark. */
  ADMISSION_TIMING: z.enum(["0", "1"]).default("0"),
  /**
   * Origins (comma-separated, e.g. "https://ops.example") whose pages may call the REST API from a
   * browser (CORS); empty, the default, leaves CORS off (docs/decisions/014).
   */
  API_CORS_ORIGINS: z
    .string()
    .default("")
    .transform((text) => text.split(",").map((origin) => origin.trim()).filter(Boolean))
    .pipe(z.array(z.url({ protocol: /^https?$/, message: "API_CORS_ORIGINS must list origins like https://ops.example, separated by commas" }).refine((origin) => new URL(origin).origin === origin, "API_CORS_ORIGINS must list bare origins (scheme, host and port, no path)"))),
});

export type Environment = z.infer<typeof EnvironmentSchema>;

let cached: Environment | undefined;

export function getEnvironment(): Environment {
  if (cached) return cached;
  const parsed = EnvironmentSchema.safeParse(process.env);
  if (!parsed.success) {
    const problems = parsed.error.issues.map((issue) => `  ${issue.path.join(".")}: ${issue.message}`);
    throw new Error(`Invalid environment:\n${problems.join("\n")}\nStart the app with \`npm start\`, which sets these.`);
  }
  if (parsed.data.NODE_ENV === "production" && !parsed.data.APP_ORIGIN && parsed.data.SALLYPORT_LOCAL !== "1") {
    throw new Error(
      "Invalid environment:\n  APP_ORIGIN: required in production — the origin people reach Sallyport at, such as https://sallyport.example.com. " +
        "E-mailed links are built from it and state-changing requests must come from it (never from the request's Host).\n" +
        "For a local run, `npm start` sets it (or set SALLYPORT_LOCAL=1 to serve http://localhost:PORT).",
    );
  }
  cached = parsed.data;
  return cached;
}

/** This site's origin, "https://host[:port]" without a trailing slash: APP_ORIGIN, or http://localhost:PORT on a local run. */
export function appOrigin(): string {
  const environment = getEnvironment();
  return environment.APP_ORIGIN ? new URL(environment.APP_ORIGIN).origin : `http://localhost:${environment.PORT}`;
}

/** Whether HOST is a loopback address or name (RFC 1122 §3.2.1.3: 127/8; RFC 4291 §2.5.3: ::1). */
export function listensOnLoopbackOnly(host = getEnvironment().HOST): boolean {
  const bare = host.replace(/^\[|\]$/g, "").toLowerCase();
  return bare === "localhost" || bare === "::1" || /^127\.\d{1,3}\.\d{1,3}\.\d{1,3}$/.test(bare);
}

/** How long a session lasts: idle and absolute, in milliseconds. */
export function sessionLimits(): { idleMs: number; absoluteMs: number } {
  const environment = getEnvironment();
  return { idleMs: environment.SESSION_IDLE_MINUTES * 60_000, absoluteMs: environment.SESSION_ABSOLUTE_HOURS * 3_600_000 };
}

export function isProduction(): boolean {
  return getEnvironment().NODE_ENV === "production";
}

/**
 * Whether the local outbox page exists: the fake SMTP server catches the mail, a secret is set
 * to open it with, and the server listens on loopback only (unless OUTBOX_BEYOND_LOOPBACK=1).
 */
export function isOutboxEnabled(): boolean {
  return outboxEnabledFor(getEnvironment());
}

/** The same, for a given environment (pure, for tests). */
export function outboxEnabledFor(environment: Pick<Environment, "SALLYPORT_FAKE_SMTP" | "MAIL_OUTBOX_DIR" | "OUTBOX_SECRET" | "HOST" | "OUTBOX_BEYOND_LOOPBACK">): boolean {
  if (environment.SALLYPORT_FAKE_SMTP !== "1" || !environment.MAIL_OUTBOX_DIR || !environment.OUTBOX_SECRET) return false;
  return listensOnLoopbackOnly(environment.HOST) || environment.OUTBOX_BEYOND_LOOPBACK === "1";
}

/**
 * Secure cookies (OWASP ASVS 3.4.1) in production or whenever the site is served over https,
 * unless COOKIE_SECURE overrides.
 */
export function isCookieSecure(): boolean {
  const override = getEnvironment().COOKIE_SECURE;
  if (override) return override === "1";
  return isProduction() || appOrigin().startsWith("https:");
}

/** Comma-separated so secrets can be rotated: the first signs, all verify. */
export function getCookieSecrets(): string[] {
  return getEnvironment().SESSION_SECRET.split(",").map((secret) => secret.trim()).filter(Boolean);
}

/** The secrets second-factor keys are derived from: SECOND_FACTOR_KEY's, else the first session secret. */
export function getSecondFactorKeySecrets(): string[] {
  const configured = getEnvironment().SECOND_FACTOR_KEY;
  const secrets = (configured ?? "").split(",").map((secret) => secret.trim()).filter(Boolean);
  return secrets.length > 0 ? secrets : [`session:${getCookieSecrets()[0]}`];
}

export function isServerTimingEnabled(): boolean {
  return getEnvironment().SERVER_TIMING === "1";
}
