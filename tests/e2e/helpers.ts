import { mkdirSync, readFileSync } from "node:fs";
import { createRequire } from "node:module";
import path from "node:path";
import { expect, request, test, type Locator, type Page } from "@playwright/test";
import { makeOncePerRun, sharedFolder } from "./run-once";

const directory = path.resolve("tests/artifacts/screenshots");

/** Saves a full-page screenshot kept as a test artifact (tests/artifacts/screenshots). */
export async function screenshot(page: Page, name: string): Promise<void> {
  const file = path.join(directory, `${name}.png`);
  mkdirSync(path.dirname(file), { recursive: true });
  await page.screenshot({ path: file, fullPage: true });
}

/** Signs in through the form and waits until the app has taken the user in. */
export async function signIn(page: Page, email: string, password: string): Promise<void> {
  await page.goto("/login");
  await page.getByLabel("E-mail").fill(email);
  await page.getByLabel("Password").fill(password);
  await page.getByRole("button", { name: "Sign in" }).click();
  await page.waitForURL((url) => !url.pathname.startsWith("/login"));
}

/**
 * Signs the page's browser in as a demo member without the form, for a test that is not about
 * signing in: the sign-in form's own post is made once per run (by whichever worker asks first)
 * and every test that asks for the member gets that session's cookie. Tests of signing in itself
 * use `signIn`.
 */
export async function useSignedInSession(page: Page, email: string, password: string): Promise<void> {
  const { project } = test.info();
  const baseURL = project.use.baseURL;
  if (!baseURL) throw new Error("no baseURL in playwright.config.ts");
  const folder = sharedFolder(project.outputDir, "sessions");
  const cookies = await makeOncePerRun(folder, email.replace(/[^a-z0-9]+/gi, "-"), async () => {
    // Posts carry the site's own Origin, as a browser's would (the same-origin guard asks for it).
    const client = await request.newContext({ baseURL, extraHTTPHeaders: { Origin: baseURL } });
    const response = await client.post("/login", { form: { email, password }, maxRedirects: 0 });
    if (response.status() !== 302 || response.headers()["location"]?.startsWith("/login")) throw new Error(`signing in ${email}: expected a redirect into the app, got ${response.status()} ${response.headers()["location"] ?? ""}`);
    const { cookies: made } = await client.storageState();
    await client.dispose();
    return made;
  });
  await page.context().addCookies(cookies);
}

/** The one-time message shown after an action. */
export function toast(page: Page) {
  return page.getByTestId("toast");
}

/** Chooses names in a name picker with the keyboard: each typed in full, then Enter. */
export async function chooseNames(scope: Locator, label: string, names: readonly string[]): Promise<void> {
  const input = scope.getByRole("combobox", { name: label });
  await input.focus();
  for (const name of names) {
    await input.pressSequentially(name);
    await input.press("Enter");
    await expect(input).toHaveValue("");
  }
  // Escape closes the list (while it is open, the rest of the page is hidden from assistive technology).
  await input.press("Escape");
  const chosen = scope.getByRole("grid", { name: `Chosen ${label.toLowerCase()}` });
  for (const name of names) await expect(chosen.getByRole("row", { name })).toBeVisible();
}

/** The two sizes every page is checked at: a laptop's and a phone's. */
export const SIZES = [
  { name: "1366", width: 1366, height: 860 },
  { name: "390", width: 390, height: 844 },
] as const;
export type Size = (typeof SIZES)[number];
export const SCHEMES = ["light", "dark"] as const;
export type Scheme = (typeof SCHEMES)[number];
/** axe rules whose verdict depends on colours (and text size), the only things the scheme changes. */
export const COLOUR_RULES = ["color-contrast", "link-in-text-block"];
const WCAG_AA = ["wcag2a", "wcag2aa", "wcag21a", "wcag21aa"];
/** Marks, for one axe run, what the phone shows differently from the laptop's check. */
const PHONE_DIFFERENCES = "data-axe-phone-differs";

/** axe itself, put into a page once per document (not once per check, as @axe-core/playwright does). */
const AXE_SOURCE = readFileSync(createRequire(import.meta.url).resolve("axe-core/axe.min.js"), "utf8");
type AxeWindow = { axe?: typeof import("axe-core") };

/**
 * axe's serious and critical violations on the page as it is laid out now (WCAG 2.1 A and AA
 * rules, or only `rules` when given; on the elements `within` selects, on the whole page but
 * `within.exclude`, or on the whole page), each as "rule: help (first few elements)". Minor and
 * moderate ones are left to review.
 */
export async function seriousAccessibilityViolations(page: Page, rules?: string[], within?: string | { exclude: string }): Promise<string[]> {
  // Reading and compiling axe's 550 kB took about half a second a check on this machine.
  if (!(await page.evaluate(() => "axe" in window))) await page.evaluate(AXE_SOURCE);
  const violations = await page.evaluate(
    async ({ rules, within, tags }) => {
      const { axe } = window as unknown as AxeWindow;
      if (!axe) throw new Error("axe is not in the page");
      // A selector: only what it selects. `exclude`: the whole document (page-level rules included) but that.
      const context = !within ? document : typeof within === "string" ? { include: [[within]] } : { include: [["html"]], exclude: [[within.exclude]] };
      const results = await axe.run(context, {
        runOnly: rules ? { type: "rule", values: rules } : { type: "tag", values: tags },
        resultTypes: ["violations"],
      });
      return results.violations.map((violation) => ({ id: violation.id, help: violation.help, impact: violation.impact, targets: violation.nodes.map((node) => node.target.join(" ")) }));
    },
    { rules, within, tags: WCAG_AA },
  );
  return violations
    .filter((violation) => violation.impact === "serious" || violation.impact === "critical")
    .map((violation) => `${violation.id}: ${violation.help} (${violation.targets.slice(0, 3).join("; ")})`);
}

/**
 * axe at one of the two sizes in one scheme, on the page as it is now. At the laptop's size:
 * every rule in light, the colour rules in dark (the scheme changes colours only), and how each
 * visible element looks is remembered. At the phone's size axe looks only at what the phone shows
 * differently — elements the laptop did not show, or shows with other colours, text size,
 * opacity or scrolling — with every rule in light and the colour rules in dark: the DOM is the
 * same, so the rest was checked at the laptop's size (colour contrast, the costly rule, over a whole
 * page took 1–10 s a run here). Page-level rules (landmarks, title, language) run at the laptop's
 * size. Without a laptop check of the scheme on this document first, the phone gets the whole check.
 */
export async function accessibilityViolationsAt(page: Page, size: Size, scheme: Scheme): Promise<string[]> {
  if (size.name === "1366") {
    const violations = await seriousAccessibilityViolations(page, scheme === "dark" ? COLOUR_RULES : undefined);
    await rememberLaptopLooks(page, scheme);
    return violations;
  }
  const marked = await page.evaluate(compareWithLaptop, { scheme, mark: PHONE_DIFFERENCES, within: null });
  if (marked === null) return seriousAccessibilityViolations(page, scheme === "dark" ? COLOUR_RULES : undefined);
  if (marked === 0) return [];
  try {
    return await seriousAccessibilityViolations(page, scheme === "dark" ? COLOUR_RULES : undefined, `[${PHONE_DIFFERENCES}]`);
  } finally {
    await page.evaluate((attribute) => document.querySelectorAll(`[${attribute}]`).forEach((element) => element.removeAttribute(attribute)), PHONE_DIFFERENCES);
  }
}

/**
 * Remembers how each visible element looks at the laptop's size in this scheme, as checked: for a
 * rendering axe already checked elsewhere in the run, so the phone's check stays a difference.
 */
export async function rememberLaptopLooks(page: Page, scheme: Scheme): Promise<void> {
  await page.evaluate(compareWithLaptop, { scheme, mark: null, within: null });
}

/**
 * Runs in the page (serialised by Playwright, so self-contained). Without `mark`: remembers how
 * each visible element looks in this scheme. With it: marks the outermost visible elements the
 * laptop did not see so (only inside what `within` selects, when given), and counts them; null
 * when the laptop saw nothing in this scheme.
 */
function compareWithLaptop({ scheme, mark, within }: { scheme: Scheme; mark: string | null; within: string | null }): number | null {
  const looks = (element: Element) => {
    const style = getComputedStyle(element);
    const scrolls = /auto|scroll/.test(style.overflowX + style.overflowY) && (element.scrollWidth > element.clientWidth || element.scrollHeight > element.clientHeight);
    return [style.color, style.backgroundColor, style.backgroundImage, style.opacity, style.fontSize, style.fontWeight, style.textShadow, style.filter, style.mixBlendMode, style.textDecorationLine, scrolls].join("|");
  };
  const visible = [...document.body.querySelectorAll("*")].filter((element) => element.checkVisibility({ checkOpacity: true, checkVisibilityCSS: true }));
  const store = window as unknown as { laptopLooks?: Partial<Record<Scheme, WeakMap<Element, string>>> };
  if (mark === null) {
    store.laptopLooks = { ...store.laptopLooks, [scheme]: new WeakMap(visible.map((element) => [element, looks(element)])) };
    return visible.length;
  }
  const seen = store.laptopLooks?.[scheme];
  if (!seen) return null;
  let marked = 0;
  for (const element of visible) {
    if (seen.get(element) === looks(element) || element.parentElement?.closest(`[${mark}]`) || (within && !element.closest(within))) continue;
    element.setAttribute(mark, "");
    marked += 1;
  }
  return marked;
}

/** Marks, for one axe run, the page's blocks and those of them this check claimed. */
const BLOCK = "data-axe-block";
const CLAIMED = "data-axe-claimed";
/** Levels of plain `div`s inside `main` that are split into their children (a page's wrapper and its sections' grid). */
const SPLIT_DIVS_BELOW_MAIN = 2;

/** True for the first caller in the run to claim a key (tests/e2e/run-once.ts `claimOnce`, or a set in a test of its own). */
export type Claim = (key: string) => boolean;

/**
 * axe at one size and scheme as `accessibilityViolationsAt` runs it, but only on the page's blocks
 * not yet checked in this run at this size and scheme (by any page, role or worker, as `claim`
 * says). The page is cut into blocks: the top-level parts beside `main` (top bar, navigation),
 * `main`'s children and those of the plain `div`s just below it. A block is the same as another
 * when its HTML (with the `ignore` strings — the signed-in person's name — taken out), its width
 * and how its ancestors look are the same, so what differs by role costs only the blocks that
 * show it (a control only an owner sees makes its own block new again). With `pageRules` (once
 * per page, at 1366 px in light) axe runs over the whole document except the blocks others
 * checked, so the page-level rules (a way to skip to the content, …) and the elements around the
 * blocks are checked too.
 */
export async function unclaimedBlockViolationsAt(page: Page, size: Size, scheme: Scheme, claim: Claim, { ignore, pageRules }: { ignore: string[]; pageRules: boolean }): Promise<string[]> {
  const keys = await page.evaluate(markBlocks, { attribute: BLOCK, ignore, splitDivs: SPLIT_DIVS_BELOW_MAIN });
  const claimed = keys.flatMap((key, index) => (claim(`${size.name} ${scheme}\n${key}`) ? [index] : []));
  await page.evaluate(({ block, mark, claimed }) => claimed.forEach((index) => document.querySelector(`[${block}="${index}"]`)?.setAttribute(mark, "")), { block: BLOCK, mark: CLAIMED, claimed });
  const rules = scheme === "dark" ? COLOUR_RULES : undefined;
  // A re-render between marking and checking (seen twice in a run of 79 tests) drops the marks: then the whole page is checked.
  const marked = async (selector: string) => {
    try {
      return await seriousAccessibilityViolations(page, rules, selector);
    } catch (error) {
      if (error instanceof Error && error.message.includes("No elements found for include")) return seriousAccessibilityViolations(page, rules);
      throw error;
    }
  };
  try {
    if (size.name === "1366") {
      const violations = pageRules && scheme === "light"
        ? await seriousAccessibilityViolations(page, rules, { exclude: `[${BLOCK}]:not([${CLAIMED}])` })
        : claimed.length > 0 ? await marked(`[${CLAIMED}]`) : [];
      await rememberLaptopLooks(page, scheme);
      return violations;
    }
    if (claimed.length === 0) return [];
    const differing = await page.evaluate(compareWithLaptop, { scheme, mark: PHONE_DIFFERENCES, within: `[${CLAIMED}]` });
    if (differing === null) return await marked(`[${CLAIMED}]`);
    if (differing === 0) return [];
    return await marked(`[${PHONE_DIFFERENCES}]`);
  } finally {
    await page.evaluate((attributes) => attributes.forEach((attribute) => document.querySelectorAll(`[${attribute}]`).forEach((element) => element.removeAttribute(attribute))), [BLOCK, CLAIMED, PHONE_DIFFERENCES]);
  }
}

/**
 * Runs in the page (serialised by Playwright, so self-contained): cuts the body into blocks,
 * numbers each in `attribute`, and returns each block's key (SHA-256 of its ancestors' looks, its
 * width and its HTML without the `ignore` strings), in the blocks' order. Keys are read before the
 * numbers are written, so the numbers are not part of them.
 */
async function markBlocks({ attribute, ignore, splitDivs }: { attribute: string; ignore: string[]; splitDivs: number }): Promise<string[]> {
  const ownText = (element: Element) => [...element.childNodes].some((node) => node.nodeType === Node.TEXT_NODE && (node.textContent ?? "").trim() !== "");
  // A plain div adds no role, name or focus of its own, so no rule is about the div itself.
  const plainDiv = (element: Element) => element.tagName === "DIV" && ![...element.attributes].some((item) => item.name === "role" || item.name === "tabindex" || item.name.startsWith("aria-"));
  const blocks: Element[] = [];
  /** `depth`: how many plain divs deep inside main (-1: outside main). */
  const walk = (element: Element, depth: number) => {
    if (["SCRIPT", "STYLE", "TEMPLATE", "LINK", "META", "NOSCRIPT"].includes(element.tagName)) return;
    const isMain = element.tagName === "MAIN";
    const split = element.children.length > 0 && !ownText(element) && (element === document.body || isMain || element.querySelector("main") !== null || (depth >= 0 && depth < splitDivs && plainDiv(element)));
    if (!split) {
      blocks.push(element);
      return;
    }
    for (const child of element.children) walk(child, isMain ? 0 : depth >= 0 ? depth + 1 : -1);
  };
  walk(document.body, -1);
  const looks = (element: Element) => {
    const style = getComputedStyle(element);
    return [element.tagName, style.color, style.backgroundColor, style.backgroundImage, style.opacity, style.fontSize, style.fontWeight, style.filter, style.mixBlendMode].join("|");
  };
  const keys = await Promise.all(blocks.map(async (block) => {
    const ancestors: string[] = [];
    for (let parent = block.parentElement; parent; parent = parent.parentElement) ancestors.push(looks(parent));
    let html = block.outerHTML;
    for (const text of ignore) if (text) html = html.split(text).join("\u2026");
    const key = `${ancestors.join("\n")}\n${Math.round(block.getBoundingClientRect().width)}\n${html}`;
    // crypto.subtle needs a secure context (localhost is one); elsewhere the key is hashed by the caller.
    if (!crypto.subtle) return key;
    const digest = await crypto.subtle.digest("SHA-256", new TextEncoder().encode(key));
    return [...new Uint8Array(digest)].map((byte) => byte.toString(16).padStart(2, "0")).join("");
  }));
  blocks.forEach((block, index) => block.setAttribute(attribute, String(index)));
  return keys;
}

/**
 * The page at both sizes and in both schemes: how far it scrolls sideways (it must not) and axe's
 * serious violations (`accessibilityViolationsAt`), as messages naming the place; a full-page
 * screenshot per size (laptop in light, phone in dark) when `shots` asks for them. Ends in light
 * at the size it started at.
 */
export async function problemsAtEverySize(page: Page, name: string, shots?: "screenshots"): Promise<string[]> {
  const before = page.viewportSize() ?? SIZES[0];
  const problems: string[] = [];
  for (const size of SIZES) {
    await resized(page, size);
    for (const scheme of SCHEMES) {
      await page.emulateMedia({ colorScheme: scheme });
      const where = `${name} at ${size.name} px, ${scheme}`;
      const overflow = await sidewaysOverflow(page);
      if (overflow > 0) problems.push(`${where}: the page scrolls ${overflow} px sideways`);
      for (const violation of await accessibilityViolationsAt(page, size, scheme)) problems.push(`${where}: ${violation}`);
      if (shots && (size.name === "1366") === (scheme === "light")) await screenshot(page, `${name}-${size.name}-${scheme}`);
    }
  }
  await page.setViewportSize(before);
  await page.emulateMedia({ colorScheme: "light" });
  return problems;
}

/**
 * Sets the viewport and waits two frames and a task: what a resize observer changes (a table's
 * box becomes a focusable region once it scrolls, `ScrollArea`) is rendered before anything is checked.
 */
export async function resized(page: Page, size: { width: number; height: number }): Promise<void> {
  await page.setViewportSize(size);
  await page.evaluate(() => new Promise((resolve) => requestAnimationFrame(() => requestAnimationFrame(() => setTimeout(resolve, 0)))));
}

/** How far the document scrolls sideways: 0 when nothing sticks out of the viewport. */
export async function sidewaysOverflow(page: Page): Promise<number> {
  return page.evaluate(() => (document.scrollingElement ?? document.documentElement).scrollWidth - window.innerWidth);
}

/** Waits until the page's scripts have hydrated it (the root layout marks <html>). */
export async function hydrated(page: Page): Promise<void> {
  await page.locator("html[data-hydrated]").waitFor({ state: "attached" });
}

/** Signs up a new organisation with its owner (an invented person; e-mail in the reserved test.example domain); returns its slug. */
export async function signUpNewOrganisation(page: Page, organisation: string, label: string): Promise<string> {
  const stamp = `${label}-${Date.now().toString(36)}`;
  await page.goto("/signup");
  await page.getByLabel("Your name").fill("Ines Quayle");
  await page.getByLabel("Work e-mail").fill(`ines.${stamp}@test.example`);
  await page.getByLabel("Organisation").fill(`${organisation} ${stamp}`);
  await page.getByLabel("Password", { exact: true }).fill("quiet harbour lantern 42");
  await page.getByRole("button", { name: "Create organisation" }).click();
  await page.waitForURL(/\/o\/[a-z0-9-]+\/devices$/);
  return new URL(page.url()).pathname.split("/")[2];
}

/** The local outbox's address with its secret (docs/decisions/013): the page swaps it for a cookie and shows the mail. */
export function outboxPath(): string {
  return `/outbox?key=${encodeURIComponent(process.env.E2E_OUTBOX_SECRET ?? "")}`;
}
