import { z } from "zod";

// Validated once at start-up so a missing or malformed variable fails loudly, not mid-request.
const EnvironmentSchema = z.object({
  NODE_ENV: z.enum(["development", "production", "test"]).default("development"),
  DATABASE_URL: z.string().url({ message: "DATABASE_URL must be a postgres:// URL" }),
  SESSION_SECRET: z.string().min(16, "SESSION_SECRET must be at least 16 characters"),
  /** Base URL used in e-mailed links; defaults to the origin of the request that sent them. */
  APP_ORIGIN: z.string().url().optional(),
  /** "1" trusts X-Forwarded-For for the client address (behind a reverse proxy). */
  TRUST_PROXY: z.enum(["0", "1"]).default("0"),
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
  cached = parsed.data;
  return cached;
}

export function isProduction(): boolean {
  return getEnvironment().NODE_ENV === "production";
}

export function isOutboxEnabled(): boolean {
  const environment = getEnvironment();
  return environment.SALLYPORT_FAKE_SMTP === "1" && Boolean(environment.MAIL_OUTBOX_DIR);
}

/** Secure cookies in production unless COOKIE_SECURE overrides (OWASP ASVS 3.4.1). */
export function isCookieSecure(): boolean {
  const override = getEnvironment().COOKIE_SECURE;
  return override ? override === "1" : isProduction();
}

/** Comma-separated so secrets can be rotated: the first signs, all verify. */
export function getCookieSecrets(): string[] {
  return getEnvironment().SESSION_SECRET.split(",").map((secret) => secret.trim()).filter(Boolean);
}

export function isServerTimingEnabled(): boolean {
  return getEnvironment().SERVER_TIMING === "1";
}
