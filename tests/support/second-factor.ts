import { expect } from "vitest";
import { User } from "#models/index";
import { sealSecret } from "#server/auth/sealed-secret.server";
import { newTotpSecret, totpCode } from "#server/auth/totp";
import { plain } from "./html";
import { GOOD_PASSWORD, TestClient } from "./client";
import { successiveCodes } from "./totp";

export const SECOND_FACTOR_PAGE = "/account/second-factor";
export const RECOVERY_CODE = /\b[a-hjkmnp-z2-9]{5}-[a-hjkmnp-z2-9]{5}\b/g;

/** Six digits that are none of the codes a window around `at` accepts. */
export function wrongCode(secret: string, at = Date.now()): string {
  const near = new Set([-60_000, -30_000, 0, 30_000, 60_000].map((offset) => totpCode(secret, at + offset)));
  for (let candidate = 0; ; candidate += 1) {
    const code = String(candidate).padStart(6, "0");
    if (!near.has(code)) return code;
  }
}

/** Turns the second factor on through the page, as a person would: draw a secret, read it, confirm with a code. */
export async function enrol(client: TestClient) {
  expect((await client.post(SECOND_FACTOR_PAGE, { intent: "start" })).status).toBe(302);
  const page = await client.get(SECOND_FACTOR_PAGE);
  expect(page.status).toBe(200);
  const secret = /data-secret="([A-Z2-7]+)"/.exec(page.text)?.[1];
  expect(secret, "the page shows the secret").toBeDefined();
  expect(page.text).toContain("<svg"); // the QR code, drawn on the server
  const next = successiveCodes(secret!);
  const confirmed = await client.post(SECOND_FACTOR_PAGE, { intent: "confirm", code: next() });
  expect(confirmed.status).toBe(200);
  expect(confirmed.headers.get("cache-control")).toContain("no-store");
  const recoveryCodes = [...new Set(plain(confirmed.text.replace(/<script[\s\S]*?<\/script>/g, "")).match(RECOVERY_CODE) ?? [])];
  expect(recoveryCodes).toHaveLength(10);
  return { secret: secret!, next, recoveryCodes };
}

/**
 * A second factor written straight into the user's row (sealed as the server seals it), for tests
 * about what others do with it; `enrol` is the way a person turns one on. Returns the secret.
 */
export async function giveSecondFactor(userId: string): Promise<string> {
  const secret = newTotpSecret();
  await User.update({ secondFactorSecret: sealSecret(secret, userId), secondFactorEnabledAt: new Date(), secondFactorLastStep: null }, { where: { id: userId } });
  return secret;
}

/** The password step: a session that waits for the code, and where it sends the browser. */
export async function passwordStep(email: string, password = GOOD_PASSWORD, clientAddress?: string): Promise<TestClient> {
  const client = new TestClient(clientAddress);
  const response = await client.signIn(email, password);
  expect(response.status).toBe(302);
  expect(response.location).toBe("/login/code");
  return client;
}

export async function userOf(email: string): Promise<User> {
  return (await User.findOne({ where: { email } }))!;
}
