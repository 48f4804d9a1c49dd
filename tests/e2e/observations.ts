import type { APIRequest } from "@playwright/test";
import type { Team } from "./team";

// Field-check files for the team's device (tests/fixtures/models/harbourline-edge.json): the NOC
// (198.51.100.0/26) logs in with a second factor on outside; everything else is dropped.

/** Three agreements, one difference (a login seen where the model drops) and one bad row; `when` must follow the device's first revision. */
export function harbourlineObservations(when: string): string {
  return [
    "when,from,to,service,observed,note",
    `${when},198.51.100.20,203.0.113.10,https,login,NOC desk: the login page`,
    `${when},198.51.100.20,203.0.113.10,ping,answered,`,
    `${when},203.0.113.50,203.0.113.10,ssh,silent,from a phone hotspot`,
    `${when},203.0.113.50,203.0.113.10,https,login-password,the console let a password in`,
    `${when},203.0.113.50,203.0.113.10,https,maybe,`,
  ].join("\n");
}

/** Records a field check on the team's device as its engineer; returns the check's page. */
export async function recordFieldCheck(request: APIRequest, baseURL: string, team: Team): Promise<string> {
  const engineer = await request.newContext({ baseURL, extraHTTPHeaders: { Origin: baseURL }, storageState: team.members.engineer.storageState });
  const response = await engineer.post(`${team.device.path}/field-checks`, {
    multipart: { observationsText: harbourlineObservations(new Date().toISOString()) },
    maxRedirects: 0,
  });
  const location = response.headers()["location"];
  if (response.status() !== 302 || !location) throw new Error(`field check: expected a redirect, got ${response.status()} ${(await response.text()).slice(0, 300)}`);
  await engineer.dispose();
  return location;
}
