// API tokens' life, through the pages a member and an admin use (the account page, the
// organisation's settings) and the API itself: shown once, only a hash at rest, revoked or
// expired → 401 that never says which, a read token on a write endpoint → 403, a service token
// acting with the role chosen for it, every call in the audit log under the token's name.
// Semantics: docs/decisions/014-rest-api.md.
import { createHash } from "node:crypto";
import { QueryTypes } from "sequelize";
import { afterAll, describe, expect, test } from "vitest";
import { ApiToken, AuditEvent, Membership } from "#models/index";
import { getDatabase } from "#server/db/database.server";
import { ApiClient } from "../support/api";
import { visibleText } from "../support/html";
import { makeTeam, MOLE } from "../support/proposal-team";

const sequelize = getDatabase();
afterAll(() => sequelize.close());

const SECRET = /sallyport_[ps]_[A-Za-z0-9_-]{43}/;

/** The secret a token form answered with (shown in the page once), or a failure naming what came back. */
function secretIn(html: string): string {
  const found = SECRET.exec(html);
  if (!found) throw new Error(`no token in the answer: ${visibleText(html).slice(0, 300)}`);
  return found[0];
}

describe("API tokens", () => {
  test("A member makes a personal token on the account page: shown once, only its SHA-256 at rest; it calls as them until revoked, then 401 like an unknown token", async () => {
    const team = await makeTeam("tokens");
    const engineer = await team.members.engineer.client();
    const made = await engineer.post(`/o/${team.slug}/account`, { intent: "create-token", name: "nightly exposure check", organisation: team.slug, scope: "read", lifetimeDays: "30" });
    expect(made.status).toBe(200);
    const secret = secretIn(made.text);
    expect(made.headers.get("Cache-Control")).toContain("no-store");

    // At rest: the hash (OWASP Password Storage Cheat Sheet: a high-entropy token may be stored as a fast hash) and a short hint, never the secret.
    const rows = await sequelize.query<Record<string, unknown>>(`SELECT * FROM api_tokens WHERE organisation_id = :organisation`, { replacements: { organisation: team.organisationId }, type: QueryTypes.SELECT });
    expect(rows).toHaveLength(1);
    expect(rows[0].token_hash).toBe(createHash("sha256").update(secret).digest("hex"));
    expect(JSON.stringify(rows[0])).not.toContain(secret);
    expect(secret.startsWith(String(rows[0].hint))).toBe(true);
    expect(String(rows[0].hint).length).toBeLessThan(20);

    // Shown once: the account page lists it by name and hint, never the secret again.
    const page = await engineer.get(`/o/${team.slug}/account`);
    expect(visibleText(page.text)).toContain("nightly exposure check");
    expect(page.text).not.toContain(secret);

    const api = new ApiClient(secret);
    const who = await api.get("/token");
    expect(who.status).toBe(200);
    expect(who.json).toMatchObject({ name: "nightly exposure check", kind: "personal", scope: "read", role: "engineer", owner: { email: team.members.engineer.email } });
    const listed = await api.get("/devices");
    expect(listed.status).toBe(200);
    const lastUsed = await ApiToken.findByPk(String(rows[0].id), { rejectOnEmpty: true });
    expect(lastUsed.lastUsedAt).not.toBeNull();
    expect(lastUsed.lastUsedAddress).toBe(api.clientAddress);

    const revoked = await engineer.post(`/o/${team.slug}/account`, { intent: "revoke-token", tokenId: String(rows[0].id) });
    expect(revoked.status).toBe(302);
    const refused = await api.get("/devices");
    expect(refused.status).toBe(401);
    // RFC 6750 §3.1: invalid_token, and the same words as for a token that never existed.
    expect(refused.headers.get("WWW-Authenticate")).toBe('Bearer realm="Sallyport API", error="invalid_token"');
    const unknown = await new ApiClient(`sallyport_p_${"A".repeat(43)}`).get("/devices");
    const malformed = await new ApiClient("not-a-token").get("/devices");
    for (const other of [unknown, malformed]) {
      expect(other.status).toBe(401);
      expect(other.json).toEqual(refused.json);
    }
  });

  test("An expired token, and the token of someone no longer a member, are refused with the same 401", async () => {
    const team = await makeTeam("expiry");
    const trainee = await team.members.trainee.client();
    const secrets: string[] = [];
    for (const name of ["soon expired", "left with them"]) {
      secrets.push(secretIn((await trainee.post(`/o/${team.slug}/account`, { intent: "create-token", name, organisation: team.slug, scope: "read", lifetimeDays: "7" })).text));
    }
    const [expiring, leaving] = secrets.map((secret) => new ApiClient(secret));
    expect((await expiring.get("/token")).status).toBe(200);
    await sequelize.query(`UPDATE api_tokens SET created_at = now() - interval '8 days', expires_at = now() - interval '1 day' WHERE name = 'soon expired' AND organisation_id = :organisation`, { replacements: { organisation: team.organisationId } });
    const expired = await expiring.get("/token");
    expect(expired.status).toBe(401);

    expect((await leaving.get("/token")).status).toBe(200);
    await Membership.destroy({ where: { organisationId: team.organisationId, userId: team.members.trainee.userId } });
    const gone = await leaving.get("/token");
    expect(gone.status).toBe(401);
    expect(gone.json).toEqual({ ...(expired.json as object), instance: "/api/v1/token" });
  });

  test("A read token cannot call a write endpoint (403); the token's role is its owner's, and a service token's is the one an admin chose", async () => {
    const team = await makeTeam("scopes");
    const owner = await team.members.owner.client();
    const engineer = await team.members.engineer.client();
    const siteRow = await sequelize.query<{ id: string }>(`SELECT id FROM sites WHERE organisation_id = :organisation`, { replacements: { organisation: team.organisationId }, type: QueryTypes.SELECT });
    const body = (name: string) => ({ siteId: siteRow[0].id, document: { ...MOLE, device: { ...MOLE.device, name } } });

    const readSecret = secretIn((await engineer.post(`/o/${team.slug}/account`, { intent: "create-token", name: "reader", organisation: team.slug, scope: "read", lifetimeDays: "7" })).text);
    const writeSecret = secretIn((await engineer.post(`/o/${team.slug}/account`, { intent: "create-token", name: "writer", organisation: team.slug, scope: "write", lifetimeDays: "7" })).text);
    const scoped = await new ApiClient(readSecret).post("/devices", body("by-reader"));
    expect(scoped.status).toBe(403);
    expect(scoped.json).toMatchObject({ type: "/docs/api#problem-insufficient-scope", status: 403 });
    const written = await new ApiClient(writeSecret).post("/devices", body("by-writer"));
    expect(written.status).toBe(201);

    // Service tokens: made by an admin or owner in the settings, never by an engineer; acting with the chosen role.
    expect((await engineer.post(`/o/${team.slug}/settings/api-tokens`, { intent: "create-token", name: "bot", role: "engineer", scope: "write", lifetimeDays: "30" })).status).toBe(403);
    const traineeBot = secretIn((await owner.post(`/o/${team.slug}/settings/api-tokens`, { intent: "create-token", name: "read-only bot", role: "trainee", scope: "write", lifetimeDays: "30" })).text);
    const engineerBot = secretIn((await owner.post(`/o/${team.slug}/settings/api-tokens`, { intent: "create-token", name: "deploy bot", role: "engineer", scope: "write", lifetimeDays: "30" })).text);
    expect(traineeBot.startsWith("sallyport_s_")).toBe(true);
    const tooLow = await new ApiClient(traineeBot).post("/devices", body("by-trainee-bot"));
    expect(tooLow.status).toBe(403);
    expect(tooLow.json).toMatchObject({ type: "/docs/api#problem-forbidden" });
    const bot = new ApiClient(engineerBot);
    expect((await bot.get("/token")).json).toMatchObject({ kind: "service", role: "engineer", owner: null });
    const byBot = await bot.post("/devices", body("by-deploy-bot"));
    expect(byBot.status).toBe(201);
    // An owner role is never a service token's.
    const ownerBot = await owner.post(`/o/${team.slug}/settings/api-tokens`, { intent: "create-token", name: "owner bot", role: "owner", scope: "write", lifetimeDays: "30" });
    expect(ownerBot.status).toBe(400);
    expect(visibleText(ownerBot.text)).toContain("Choose the role it acts with");

    // An admin revokes a member's personal token from the settings.
    const writer = await ApiToken.findOne({ where: { organisationId: team.organisationId, name: "writer" }, rejectOnEmpty: true });
    expect((await owner.post(`/o/${team.slug}/settings/api-tokens`, { intent: "revoke-token", tokenId: writer.id })).status).toBe(302);
    expect((await new ApiClient(writeSecret).get("/token")).status).toBe(401);

    // The audit log names the token: the reads compactly, the writes in the service's own entry.
    const entries = await AuditEvent.findAll({ where: { organisationId: team.organisationId }, order: [["id", "ASC"]] });
    const created = entries.filter((entry) => entry.action === "device.created" && entry.apiTokenName);
    expect(created.map((entry) => [entry.apiTokenName, entry.actorEmail])).toEqual([
      ["writer", team.members.engineer.email],
      ["deploy bot", "deploy bot (service token)"],
    ]);
    const calls = entries.filter((entry) => entry.action === "api.called");
    expect(calls.map((entry) => [entry.apiTokenName, entry.changes.endpoint, entry.changes.status])).toEqual([
      ["reader", "POST /devices", 403],
      ["read-only bot", "POST /devices", 403],
      ["deploy bot", "GET /token", 200],
    ]);
    expect(entries.filter((entry) => entry.action === "api-token.created").map((entry) => entry.changes.name)).toEqual(["reader", "writer", "read-only bot", "deploy bot"]);
    expect(entries.some((entry) => entry.action === "api-token.revoked" && entry.changes.name === "writer")).toBe(true);
    const auditPage = await owner.get(`/o/${team.slug}/settings/audit`);
    expect(visibleText(auditPage.text)).toContain("through the API token “deploy bot”");
  });

  test("Bad token forms keep what was typed and say what is wrong; another member's token cannot be revoked", async () => {
    const team = await makeTeam("forms");
    const engineer = await team.members.engineer.client();
    const other = await team.members.reviewer.client();
    // A control character is refused before the form is read, naming the field (server/validation/text.ts).
    const bell = await engineer.post(`/o/${team.slug}/account`, { intent: "create-token", name: "bad\u0007bell", organisation: team.slug, scope: "read", lifetimeDays: "7" });
    expect(bell.status).toBe(400);
    expect(visibleText(bell.text)).toContain("contains a control character");
    const refused = await engineer.post(`/o/${team.slug}/account`, { intent: "create-token", name: "  ", organisation: team.slug, scope: "admin", lifetimeDays: "1000" });
    expect(refused.status).toBe(400);
    const text = visibleText(refused.text);
    expect(text).toContain("Name the token after where it is used");
    expect(text).toContain("Choose read, or read and write.");
    expect(text).toContain("Choose 7, 30, 90, 365 days.");
    const foreign = await engineer.post(`/o/${team.slug}/account`, { intent: "create-token", name: "elsewhere", organisation: "no-such-organisation", scope: "read", lifetimeDays: "7" });
    expect(foreign.status).toBe(400);
    expect(visibleText(foreign.text)).toContain("Choose one of your organisations.");
    // What was typed stays in the form.
    expect(foreign.text).toContain('value="elsewhere"');

    secretIn((await engineer.post(`/o/${team.slug}/account`, { intent: "create-token", name: "mine", organisation: team.slug, scope: "read", lifetimeDays: "7" })).text);
    const twice = await engineer.post(`/o/${team.slug}/account`, { intent: "create-token", name: "Mine", organisation: team.slug, scope: "read", lifetimeDays: "7" });
    expect(twice.status).toBe(409);
    const mine = await ApiToken.findOne({ where: { organisationId: team.organisationId, name: "mine" }, rejectOnEmpty: true });
    expect((await other.post(`/o/${team.slug}/account`, { intent: "revoke-token", tokenId: mine.id })).status).toBe(404);
    expect((await other.post(`/o/${team.slug}/account`, { intent: "revoke-token", tokenId: "not-a-uuid" })).status).toBe(400);
    expect((await ApiToken.findByPk(mine.id, { rejectOnEmpty: true })).revokedAt).toBeNull();
  });

  test("CORS stays off unless configured: an answer to another site's page carries no Access-Control-Allow-Origin", async () => {
    const team = await makeTeam("cors");
    const engineer = await team.members.engineer.client();
    const secret = secretIn((await engineer.post(`/o/${team.slug}/account`, { intent: "create-token", name: "cors", organisation: team.slug, scope: "read", lifetimeDays: "7" })).text);
    const answer = await new ApiClient(secret).get("/token", { Origin: "https://elsewhere.example" });
    expect(answer.status).toBe(200);
    expect(answer.headers.get("Access-Control-Allow-Origin")).toBeNull();
    const preflight = await new ApiClient(null).call("OPTIONS", "/devices", { headers: { Origin: "https://elsewhere.example", "Access-Control-Request-Method": "GET" } });
    expect(preflight.headers.get("Access-Control-Allow-Origin")).toBeNull();
  });
});
