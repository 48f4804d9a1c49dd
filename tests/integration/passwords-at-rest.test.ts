import { afterAll, describe, expect, test } from "vitest";
import { createDatabase } from "#server/db/database.server";
import { User } from "#models/index";
import { signUpNewOrganisation } from "../support/client";
import { ownerConnection } from "../support/database";

const sequelize = createDatabase(process.env.DATABASE_URL!);
afterAll(() => sequelize.close());

describe("Passwords at rest", () => {
  // OWASP Password Storage Cheat Sheet: argon2id, m = 19456 KiB, t = 2, p = 1.
  test("A new user's password is stored as an argon2id hash with the OWASP parameters", async () => {
    const { email } = await signUpNewOrganisation("hash");
    const user = await User.findOne({ where: { email } });
    expect(user?.passwordHash).toMatch(/^\$argon2id\$v=19\$m=19456,t=2,p=1\$/);
    expect(user?.passwordHash).not.toContain("quiet harbour");
  });

  test("The audit log refuses updates and deletes", async () => {
    // The runtime role may not even try (docs/decisions/013)…
    await expect(sequelize.query("UPDATE audit_events SET action = 'tampered'")).rejects.toThrow(/permission denied/);
    await expect(sequelize.query("DELETE FROM audit_events")).rejects.toThrow(/permission denied/);
    // …and the owner role, which may, meets the table's trigger.
    const owner = ownerConnection();
    try {
      await expect(owner.query("UPDATE audit_events SET action = 'tampered'")).rejects.toThrow(/append-only/);
      await expect(owner.query("DELETE FROM audit_events")).rejects.toThrow(/append-only/);
    } finally {
      await owner.close();
    }
  });
});
