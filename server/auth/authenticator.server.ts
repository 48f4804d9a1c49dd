import { Authenticator } from "remix-auth";
import { FormStrategy } from "remix-auth-form";
import { z } from "zod";
import { User } from "#models/index.ts";
import { formatDuration } from "../engine/format.ts";
import { Refusal } from "../errors.ts";
import { getDecoyHash, hashPassword, needsRehash, verifyPassword } from "./password.server.ts";
import { PASSWORD_MAX_LENGTH } from "./password-rules.ts";
import { beginPasswordAttempt } from "./throttle.server.ts";

/** A sign-in that did not succeed: the message to show, 400/401, or 429 with Retry-After. */
function signInRefused(message: string, status: 400 | 401 | 429, retryAfterSeconds?: number): Refusal {
  return new Refusal(message, status, { headers: retryAfterSeconds ? { "Retry-After": String(retryAfterSeconds) } : undefined });
}

export const SignInSchema = z.object({
  email: z.string().trim().toLowerCase().min(1, "Enter your e-mail address.").max(254, "That e-mail address is too long.").email("Enter a valid e-mail address."),
  password: z.string().min(1, "Enter your password.").max(PASSWORD_MAX_LENGTH * 4, "That password is too long."),
});

export type SignInContext = { clientAddress: string };

async function verifySignIn(form: FormData, context: SignInContext): Promise<User> {
  const parsed = SignInSchema.safeParse({ email: form.get("email") ?? "", password: form.get("password") ?? "" });
  if (!parsed.success) throw signInRefused(parsed.error.issues[0].message, 400);
  const { email, password } = parsed.data;
  // Counted before the password is evaluated, so parallel guesses cannot outrun the count.
  const attempt = await beginPasswordAttempt(email, context.clientAddress);
  const { verdict } = attempt;
  if (verdict.throttled) {
    const minutes = Math.ceil(verdict.retryAfterSeconds / 60);
    throw signInRefused(
      `Too many failed sign-ins ${verdict.scope === "account" ? "for this account" : "from your address"}. Try again in ${formatDuration(minutes, "minute")}, or reset your password.`,
      429,
      verdict.retryAfterSeconds,
    );
  }
  const user = await User.findOne({ where: { email } });
  const valid = await verifyPassword(user?.passwordHash ?? (await getDecoyHash()), password);
  await attempt.settle(Boolean(user && valid));
  if (!user || !valid) throw signInRefused("The e-mail address or password is not right.", 401);
  if (needsRehash(user.passwordHash)) await user.update({ passwordHash: await hashPassword(password) });
  return user;
}

// remix-auth passes the strategy a copy of the request, so the client address (from the load
// context, which the strategy does not see) travels in a header that we set ourselves,
// overwriting any value a client might send.
const CLIENT_ADDRESS_HEADER = "x-sallyport-verified-client-address";

export const authenticator = new Authenticator<User>();
authenticator.use(
  new FormStrategy(async ({ form, request }) => verifySignIn(form, { clientAddress: request.headers.get(CLIENT_ADDRESS_HEADER) ?? "unknown" })),
  "form",
);

/** Checks the posted e-mail and password (with throttling); throws a Refusal when refused. */
export async function authenticateWithPassword(request: Request, context: SignInContext): Promise<User> {
  const headers = new Headers(request.headers);
  headers.set(CLIENT_ADDRESS_HEADER, context.clientAddress);
  return authenticator.authenticate("form", new Request(request, { headers }));
}
