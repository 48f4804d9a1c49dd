import { beforeAll, describe, expect, test } from "vitest";
import { ROLES, roleRank, type Role } from "#server/auth/roles";
import { DEMO_PASSWORDS, signUpNewOrganisation, TestClient, uniqueEmail } from "../support/client";

// Each guarded operation with the lowest role allowed to do it.
const OPERATIONS: Array<{ name: string; minimum: Role; run: (client: TestClient) => Promise<number> }> = [
  { name: "read the sites", minimum: "trainee", run: async (client) => (await client.get("/o/lanternfield/sites")).status },
  { name: "read the audit log", minimum: "reviewer", run: async (client) => (await client.get("/o/lanternfield/settings/audit")).status },
  {
    name: "add a site",
    minimum: "engineer",
    run: async (client) => (await client.post("/o/lanternfield/sites", { intent: "create", name: `Permission probe ${uniqueEmail("site")}`, customer: "", location: "" })).status,
  },
  {
    name: "invite a member",
    minimum: "admin",
    run: async (client) => (await client.post("/o/lanternfield/settings/members", { intent: "invite", email: uniqueEmail("perm"), role: "trainee" })).status,
  },
  {
    name: "rename the organisation",
    minimum: "owner",
    run: async (client) => (await client.post("/o/lanternfield/settings/organisation", { name: "Lanternfield Managed Networks" })).status,
  },
];

const clients = new Map<Role, TestClient>();

beforeAll(async () => {
  for (const role of ROLES) {
    const client = new TestClient();
    const [email, password] = DEMO_PASSWORDS[role];
    const response = await client.signIn(email, password);
    if (response.status !== 302) throw new Error(`demo ${role} could not sign in: ${response.status}`);
    clients.set(role, client);
  }
});

describe("Role matrix: every role against every guarded operation", () => {
  for (const operation of OPERATIONS) {
    for (const role of ROLES) {
      const allowed = roleRank(role) >= roleRank(operation.minimum);
      test(`${role} ${allowed ? "may" : "may not (403)"} ${operation.name}`, async () => {
        const status = await operation.run(clients.get(role)!);
        if (allowed) expect([200, 302]).toContain(status);
        else expect(status).toBe(403);
      });
    }
  }
});

describe("Other organisations stay invisible", () => {
  test("A member of one organisation gets 404 for another organisation's pages and actions", async () => {
    const { slug } = await signUpNewOrganisation("foreign");
    const owner = clients.get("owner")!;
    for (const path of [`/o/${slug}`, `/o/${slug}/sites`, `/o/${slug}/settings/members`, `/o/${slug}/settings/audit`]) {
      expect((await owner.get(path)).status, path).toBe(404);
    }
    expect((await owner.post(`/o/${slug}/sites`, { intent: "create", name: "Intrusion" })).status).toBe(404);
    expect((await owner.post(`/o/${slug}/settings/members`, { intent: "invite", email: uniqueEmail("intruder"), role: "owner" })).status).toBe(404);
  });

  test("An organisation that does not exist answers the same 404 as one that does", async () => {
    const owner = clients.get("owner")!;
    const missing = await owner.get("/o/no-such-organisation-here/sites");
    expect(missing.status).toBe(404);
    expect((await owner.get("/o/%E2%98%83/sites")).status).toBe(404);
    expect((await owner.get("/o/%E2%98%83%00/sites")).status).toBe(400);
  });

  test("Another organisation's site cannot be edited through this organisation's page", async () => {
    const { client: stranger, slug } = await signUpNewOrganisation("site-owner");
    await stranger.post(`/o/${slug}/sites`, { intent: "create", name: "Private site", customer: "", location: "" });
    const page = await stranger.get(`/o/${slug}/sites`);
    const siteId = page.text.match(/edit=([0-9a-f-]{36})/)?.[1];
    expect(siteId).toBeDefined();
    const engineer = clients.get("engineer")!;
    const response = await engineer.post("/o/lanternfield/sites", { intent: "delete", siteId: siteId! });
    expect(response.status).toBe(404);
    expect((await stranger.get(`/o/${slug}/sites`)).text).toContain("Private site");
  });
});
