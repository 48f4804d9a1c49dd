import { afterAll, describe, expect, test } from "vitest";
import { createDatabase } from "#server/db/database.server";
import { User } from "#models/index";
import { signUpNewOrganisation } from "../support/client";

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
    await expect(sequelize.query("UPDATE audit_events SET action = 'tampered'")).rejects.toThrow(/append-only/);
    await expect(sequelize.query("DELETE FROM audit_events")).rejects.toThrow(/append-only/);
  });
});
