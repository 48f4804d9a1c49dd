import { mkdirSync } from "node:fs";
import path from "node:path";
import type { APIRequest, Page, TestInfo } from "@playwright/test";
import { ROLES, type Role } from "#models/roles";
import { hasAtLeastRole, PAGE_ROLES } from "#server/auth/roles";
import { deviceNavGroups } from "#app/components/device/device-nav";
import { DEVICE_SECTIONS } from "#app/components/device/sections";
import { expect, test } from "./fixtures";
import { claimOnce, makeOncePerRun, sharedFolder } from "./run-once";
import { hydrated, resized, SCHEMES, SIZES, sidewaysOverflow, unclaimedBlockViolationsAt } from "./helpers";
import { createProposal, createTeam, type Team } from "./team";
import { createTrainingPages, type TrainingPages } from "./training-team";
import { recordFieldCheck } from "./observations";

// Every page of the app, as every role of an organisation of the tests' own, at a laptop's
// 1366 px and a phone's 390 px, in light and dark: the shell never scrolls sideways, axe finds
// no serious or critical violation, and (through the shared fixture) nothing logs an error or
// fails to load. Screenshots go to tests/artifacts/sweep/<role>/ (1366 light and 390 dark).
//
// Kept to a few minutes on a 2-core machine: each role's pages are swept in five parts (the
// organisation's pages, the device's, its model's sections, training, and managing training),
// so the run's two workers share 25 tests of a minute or two each and end together, on one
// team made once for the run; each page is loaded once and re-laid out at each size and scheme.
// Every role checks every page it may open at both sizes and both schemes for sideways
// scrolling, its device navigation, its links and its errors. axe, the costly part, runs at every
// size and scheme for every role too, but only on the page's blocks (top bar, navigation, the
// parts of the main content) that no page, role or worker has checked at that size and scheme yet
// in this run (`unclaimedBlockViolationsAt`): what differs by role is which controls the page
// shows, so a role pays only for the blocks its own controls change, and a block only one role
// sees is still checked at all four. The page-level rules run once per page, at 1366 px in light.
// At each size and scheme axe runs as `accessibilityViolationsAt` says: the dark scheme changes
// colours only, so axe's colour rules run there and every rule runs in light; at the phone's size
// axe looks only at what the phone shows differently from the laptop.

const ARTIFACTS = path.resolve("tests/artifacts/sweep");

/** Pages that not every role may open, with the least role each needs (the pages' own table). */
const GATED: Array<{ path: string; role: Role }> = [
  { path: "devices/new", role: PAGE_ROLES.newDevice },
  { path: "devices/import", role: PAGE_ROLES.importModel },
  { path: "settings/audit", role: PAGE_ROLES.auditLog },
  { path: "settings/api-tokens", role: PAGE_ROLES.apiTokens },
];

/** The device navigation's pages, counted from its own groups. */
const DEVICE_PAGE_COUNT = deviceNavGroups("").flatMap((group) => group.tabs).length;

/** The parts a role's sweep is cut into; every page, open or refused, belongs to exactly one. */
const PARTS = ["organisation", "device", "training", "training management", "device model"] as const;
type Part = (typeof PARTS)[number];

function pagesOf(team: Team, role: Role): { open: string[]; refused: string[]; partOf: Map<string, Part> } {
  const organisation = `/o/${team.slug}`;
  const device = team.device.path;
  const everyone = ["devices", "sites", "findings", "changes", "training", "settings/members", "settings/shared-objects", "settings/organisation", "reach?from=198.51.100.0/24"].map((page) => `${organisation}/${page}`);
  const devicePages = [
    device,
    `${device}/analysis?from=203.0.113.50&interface=outside&service=https`,
    `${device}/reach?from=203.0.113.50`,
    `${device}/exposure?interface=outside&service=https`,
    `${device}/expectations`,
    `${device}/history`,
    `${device}/proposals`,
    `${device}/field-checks`,
    fieldCheckPath,
    proposalPath,
    `${device}/analysis?from=203.0.113.50&interface=outside&service=https&proposal=${proposalPath.split("/").at(-1) ?? ""}&side=draft`,
    `${proposalPath}/draft/rules`,
    `${proposalPath}/record`,
  ];
  const modelPages = DEVICE_SECTIONS.map((section) => `${device}/model/${section}`);
  // Training (docs/decisions/016): every member reads scenarios and takes lessons; managing them
  // needs the trainer capability, which in this team only the admin and the owner have (always).
  const drills = training.drills;
  const mine = drills.attempts[role];
  const trainingPages = [training.scenario, `${training.scenario}/model/rules`, training.lesson, training.attempts[role], drills.fix, mine.predict, mine.spot, mine.fix, `${mine.fix}/model/rules`, mine.order, `${organisation}/training/mine`, training.assignments[role]];
  const trainerPages = [
    `${organisation}/training/scenarios/new`,
    `${organisation}/training/lessons/new`,
    `${training.lesson}/edit`,
    `${training.lesson}/present`,
    `${organisation}/training/drills/new`,
    `${drills.fix}/edit`,
    `${drills.fix}/answer/model/rules`,
    `${drills.order}/edit`,
    `${organisation}/training/assignments`,
    `${organisation}/training/assignments/new`,
    `${organisation}/training/progress`,
  ].map((path) => ({ path, role: "admin" as const }));
  const newProposal = { path: `${device}/proposals/new`, role: PAGE_ROLES.proposeChange };
  const gatedOrganisation = GATED.map((page) => ({ ...page, path: `${organisation}/${page.path}` }));
  const gated = [...gatedOrganisation, newProposal, ...trainerPages];
  const accountPages = ["/account", "/account/second-factor", "/docs/api"];
  const partOf = new Map<string, Part>();
  const place = (part: Part, urls: string[]) => {
    for (const url of urls) {
      if (partOf.has(url)) throw new Error(`${url} is in two parts of the sweep`);
      partOf.set(url, part);
    }
  };
  place("organisation", [...everyone, ...gatedOrganisation.map((page) => page.path), ...accountPages]);
  place("device", [...devicePages, newProposal.path]);
  place("device model", modelPages);
  place("training", trainingPages);
  place("training management", trainerPages.map((page) => page.path));
  const open = [...everyone, ...trainingPages, ...gated.filter((page) => hasAtLeastRole(role, page.role)).map((page) => page.path), ...accountPages, ...devicePages, ...modelPages];
  const refused = gated.filter((page) => !hasAtLeastRole(role, page.role)).map((page) => page.path);
  const unplaced = [...open, ...refused].filter((url) => !partOf.has(url));
  if (unplaced.length > 0) throw new Error(`pages in no part of the sweep: ${unplaced.join(", ")}`);
  return { open, refused, partOf };
}

/**
 * For every page any role may open, the role that keeps its screenshots (1366 px light, 390 px
 * dark): the roles that may open it, taken in turn along the list of pages.
 */
function pageLeads(team: Team): Map<string, Role> {
  const opens = new Map(ROLES.map((role) => [role, new Set(pagesOf(team, role).open)] as const));
  const everyPage = [...new Set(ROLES.flatMap((role) => [...opens.get(role)!]))];
  return new Map(everyPage.map((url, index) => {
    const openers = ROLES.filter((role) => opens.get(role)!.has(url));
    return [url, openers[index % openers.length]] as const;
  }));
}

function artifactName(team: Team, url: string): string {
  return url
    .replace(team.device.path, "device")
    .replace(`/o/${team.slug}/`, "")
    .replace(/^\//, "")
    .replace(/[^a-z0-9]+/gi, "-")
    .replace(/-+$/, "");
}

/**
 * On a device page at 1366 px, every one of the device's pages is linked inside the device
 * navigation's box (none cut off or pushed out of view), and exactly one is marked current.
 */
async function deviceNavigationProblems(page: Page): Promise<string[]> {
  return page.getByRole("navigation", { name: "Device" }).evaluate((nav, expected) => {
    const box = nav.getBoundingClientRect();
    const links = [...nav.querySelectorAll("a")];
    const problems = links.filter((link) => {
      const own = link.getBoundingClientRect();
      return own.width === 0 || own.left < box.left || own.right > box.right || own.right > window.innerWidth;
    }).map((link) => `device page "${link.textContent}" is cut off or out of view`);
    if (links.length !== expected) problems.push(`the device navigation has ${links.length} pages, not ${expected}`);
    const current = links.filter((link) => link.getAttribute("aria-current") === "page");
    if (current.length !== 1) problems.push(`${current.length} device pages are marked current`);
    return problems;
  }, DEVICE_PAGE_COUNT);
}

/** Same-origin link paths on the page, except downloads. */
async function linkPaths(page: Page): Promise<string[]> {
  return page.locator("a[href^='/']:not([download])").evaluateAll((links) => links.map((link) => new URL((link as HTMLAnchorElement).href).pathname));
}

// Traces of ~500 screenshots and axe runs would cost more than the sweep itself.
test.use({ trace: "off" });

// The roles' tests share nothing but the team and the renderings checked, so they run in parallel.
test.describe.configure({ mode: "parallel" });

type SweepData = { team: Team; proposalPath: string; training: TrainingPages; fieldCheckPath: string };
let team: Team;
/** Where the two workers leave the team and mark the renderings axe has checked. */
let shared = "";
/** A proposal of the team's engineer, in review: its page and its draft's editor are swept too. */
let proposalPath = "";
/** A teaching scenario, a lesson on it and each member's attempt at it. */
let training: TrainingPages;
/** A field check the team's engineer recorded on the device: its page is swept too. */
let fieldCheckPath = "";
let ready = false;

/**
 * The run's team, made by whichever worker comes first (one sign-up, not two), read once per
 * worker. Fetched at the start of each test rather than in a beforeAll hook: Playwright cuts a
 * parallel file with such a hook into one block of tests per worker, fixed before the run, while
 * tests without one are handed out one at a time to whichever worker is free, so both end together.
 */
async function sweepData(request: APIRequest, testInfo: TestInfo): Promise<void> {
  if (ready) return;
  const baseURL = testInfo.project.use.baseURL;
  if (!baseURL) throw new Error("no baseURL in playwright.config.ts");
  // Making the team (or waiting for the other worker to make it) has its own five minutes, on top of the test's.
  testInfo.setTimeout(testInfo.timeout + 300_000);
  shared = sharedFolder(testInfo.project.outputDir, "page-sweep");
  const data = await makeOncePerRun<SweepData>(shared, "team", async () => {
    const made = await createTeam(request, baseURL, "sweep");
    const proposal = await createProposal(request, baseURL, made);
    return { team: made, proposalPath: proposal, training: await createTrainingPages(request, baseURL, made), fieldCheckPath: await recordFieldCheck(request, baseURL, made) };
  });
  ({ team, proposalPath, training, fieldCheckPath } = data);
  ready = true;
}

/** "a trainee", "an admin": the role with its article, for the tests' titles. */
const withArticle = (role: Role) => `${role === "admin" || role === "owner" || role === "engineer" ? "an" : "a"} ${role}`;

// One test per role and part (25), the longer parts first, so the last ones handed out are short and the two workers end close together.
for (const part of PARTS) {
  for (const role of ROLES) {
    test(`As ${withArticle(role)}, every ${part} page fits the screen at 1366 and 390 px, light and dark, and passes axe; those it may not open refuse it`, async ({ browser, browserProblems, playwright }, testInfo) => {
      // About 10–20 s on a quiet machine; the bound leaves room for a busy one — at a load
      // average of 16–19 on 2 cores a whole role (all five parts) took up to 6 minutes.
      test.setTimeout(300_000);
      await sweepData(playwright.request, testInfo);
      // Reduced motion: colours switch at once with the scheme, so axe never measures a transition halfway.
      const context = await browser.newContext({ storageState: team.members[role].storageState, viewport: SIZES[0], reducedMotion: "reduce" });
      browserProblems.watch(context);
      const page = await context.newPage();
      const { open: allOpen, refused: allRefused, partOf } = pagesOf(team, role);
      const open = allOpen.filter((url) => partOf.get(url) === part);
      const refused = allRefused.filter((url) => partOf.get(url) === part);
      expect(open.length + refused.length, `pages of the ${part} part for the ${role}`).toBeGreaterThan(0);
      const leads = pageLeads(team);
      const folder = path.join(ARTIFACTS, role);
      mkdirSync(folder, { recursive: true });
      const seen = new Set<string>();
      const findings: string[] = [];
      // The signed-in person's own name, address and role word (top bar, account page): not part of what axe sees as new.
      const personal = [team.members[role].name, team.members[role].email, `(${role})`, `>${role}<`];

      for (const url of open) {
        await page.setViewportSize(SIZES[0]);
        await page.emulateMedia({ colorScheme: "light" });
        const response = await page.goto(url);
        expect(response?.status(), url).toBe(200);
        await hydrated(page);
        if (url.startsWith(team.device.path)) for (const problem of await deviceNavigationProblems(page)) findings.push(`${url} at 1366 px: ${problem}`);
        const lead = leads.get(url) === role;
        for (const size of SIZES) {
          await resized(page, size);
          for (const scheme of SCHEMES) {
            await page.emulateMedia({ colorScheme: scheme });
            const where = `${url} at ${size.name} px, ${scheme}`;
            const overflow = await sidewaysOverflow(page);
            if (overflow > 0) findings.push(`${where}: the page scrolls ${overflow} px sideways`);
            // axe on the blocks no page, role or worker has checked at this size and scheme yet; the page-level rules once per page.
            const pageRules = size.name === "1366" && scheme === "light" && claimOnce(shared, `page rules ${url}`);
            const claim = (key: string) => claimOnce(shared, key);
            // The page's own address too: the top bar's theme form carries it in a hidden field (returnTo), no text.
            const ignore = [...personal, url, url.replaceAll("&", "&amp;")];
            for (const violation of await unclaimedBlockViolationsAt(page, size, scheme, claim, { ignore, pageRules })) findings.push(`${where}: ${violation}`);
            // Two of the four kept, by the page's lead: the laptop in light and the phone in dark show both sizes and both schemes.
            if (lead && (size.name === "1366") === (scheme === "light")) await page.screenshot({ path: path.join(folder, `${artifactName(team, url)}-${size.name}-${scheme}.png`), fullPage: true });
          }
        }
        for (const link of await linkPaths(page)) seen.add(link);
      }

      // A page the role may not open is not linked from any page it may open …
      const refusedPaths = new Set(allRefused.map((url) => new URL(url, "http://x").pathname));
      expect([...seen].filter((link) => refusedPaths.has(link)), "links to pages this role may not open").toEqual([]);
      // … and every other page linked answers (those not swept are asked for directly, once per role in the run).
      const swept = new Set(allOpen.map((url) => new URL(url, "http://x").pathname));
      for (const link of [...seen].filter((candidate) => !swept.has(candidate) && candidate !== "/logout")) {
        if (!claimOnce(shared, `link ${role} ${link}`)) continue;
        const answer = await page.request.get(link);
        if (answer.status() >= 400) findings.push(`link ${link} answers ${answer.status()}`);
      }

      // Opened by address anyway, such a page refuses inside the app's frame, with a way back.
      for (const url of refused) {
        browserProblems.expect(403, new RegExp(`${url.replace(/[/.]/g, "\\$&")}(\\?|$)`));
        const response = await page.goto(url);
        expect(response?.status(), url).toBe(403);
        await expect(page.getByRole("heading", { name: "Not allowed" })).toBeVisible();
        await expect(page.getByRole("navigation", { name: "Main" })).toBeVisible();
        await expect(page.getByRole("link", { name: /^Back to / })).toBeVisible();
        await page.screenshot({ path: path.join(folder, `refused-${artifactName(team, url)}-390-dark.png`) });
      }

      expect(findings).toEqual([]);
      await context.close();
    });
  }
}
