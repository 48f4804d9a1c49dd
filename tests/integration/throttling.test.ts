import { describe, expect, test } from "vitest";
import { GOOD_PASSWORD, signUpNewOrganisation, TestClient } from "../support/client";

describe("Sign-in throttling", () => {
  // PCI DSS v4.0 8.3.4: lock out after not more than 10 invalid attempts.
  test("After 10 failures for one account the next try is refused with 429, even with the right password", async () => {
    const { email } = await signUpNewOrganisation("throttle");
    const attacker = new TestClient();
    for (let attempt = 1; attempt <= 10; attempt++) {
      const response = await attacker.signIn(email, `wrong guess number ${attempt}`);
      expect(response.status).toBe(401);
    }
    const blocked = await attacker.signIn(email, "yet another wrong guess");
    expect(blocked.status).toBe(429);
    expect(blocked.text).toContain("Too many failed sign-ins for this account");
    expect(Number(blocked.headers.get("Retry-After"))).toBeGreaterThan(0);
    // The throttle is per account, so it holds from another address too, right password or not.
    const owner = new TestClient();
    expect((await owner.signIn(email, GOOD_PASSWORD)).status).toBe(429);
  });

  test("Throttling is stored in the database: a restart would not lift it (the count is read per request)", async () => {
    const { email } = await signUpNewOrganisation("throttle-db");
    const client = new TestClient();
    for (let attempt = 1; attempt <= 10; attempt++) await client.signIn(email, `wrong ${attempt} wrong wrong`);
    // A fresh client (no cookies, other address) still meets the account's failures.
    expect((await new TestClient().signIn(email, GOOD_PASSWORD)).status).toBe(429);
  });

  test("50 failures from one client address block that address for every account", async () => {
    const client = new TestClient();
    for (let attempt = 1; attempt <= 50; attempt++) {
      const response = await client.signIn(`sprayed-${attempt}@test.example`, "some wrong password");
      expect(response.status).toBe(401);
    }
    const blocked = await client.signIn("another-one@test.example", "some wrong password");
    expect(blocked.status).toBe(429);
    expect(blocked.text).toContain("from your address");
  });

  test("A success clears the account's failures", async () => {
    const { email } = await signUpNewOrganisation("throttle-reset");
    const client = new TestClient();
    for (let attempt = 1; attempt <= 9; attempt++) await client.signIn(email, `wrong ${attempt} wrong wrong`);
    expect((await client.signIn(email, GOOD_PASSWORD)).status).toBe(302);
    // Another browser, so the signed-in one's redirect away from the sign-in page does not interfere.
    const other = new TestClient();
    for (let attempt = 1; attempt <= 9; attempt++) expect((await other.signIn(email, `again wrong ${attempt}`)).status).toBe(401);
  });
});
