import type { Page } from "@playwright/test";
import { expect, test } from "./fixtures";
import { accessibilityViolationsAt, SCHEMES, SIZES, unclaimedBlockViolationsAt } from "./helpers";

// The phone-size axe check looks only at what the phone shows differently from the laptop
// (tests/e2e/helpers.ts): it must still catch a fault only the phone's layout has. A page of the
// test's own (no server): grey #999 on white is 2.8:1, under WCAG 2.1's 4.5:1 for body text
// (WCAG 2.1, success criterion 1.4.3).

const [LAPTOP, PHONE] = SIZES;

async function pageWith(page: Page, style: string, body: string): Promise<void> {
  await page.setViewportSize(LAPTOP);
  await page.emulateMedia({ colorScheme: "light" });
  await page.setContent(`<!doctype html><html lang="en"><head><title>Check</title><style>${style}</style></head><body><main><h1>Check</h1>${body}</main></body></html>`);
}

const contrastFaults = (violations: string[]) => violations.filter((violation) => violation.startsWith("color-contrast"));

test("A low-contrast element shown only on a phone is caught at 390 px, though the laptop's check passed", async ({ page }) => {
  await pageWith(page, "#phone-only { display: none } @media (max-width: 600px) { #phone-only { display: block } }", `<p>Readable text.</p><p id="phone-only" style="color:#999">Faint text.</p>`);
  expect(await accessibilityViolationsAt(page, LAPTOP, "light")).toEqual([]);
  await page.setViewportSize(PHONE);
  const violations = contrastFaults(await accessibilityViolationsAt(page, PHONE, "light"));
  expect(violations).toHaveLength(1);
  expect(violations[0]).toContain("#phone-only");
});

test("Text whose colour changes only at the phone's width is checked again there", async ({ page }) => {
  await pageWith(page, "#shifts { color: #222 } @media (max-width: 600px) { #shifts { color: #999 } }", `<p id="shifts">Text that fades on a phone.</p>`);
  expect(await accessibilityViolationsAt(page, LAPTOP, "light")).toEqual([]);
  await page.setViewportSize(PHONE);
  expect(contrastFaults(await accessibilityViolationsAt(page, PHONE, "light")).join()).toContain("#shifts");
});

test("A fault both sizes show is reported at the laptop's size, and the unchanged page gives the phone nothing new to check", async ({ page }) => {
  await pageWith(page, "", `<p id="faint" style="color:#999">Faint everywhere.</p>`);
  expect(contrastFaults(await accessibilityViolationsAt(page, LAPTOP, "light")).join()).toContain("#faint");
  await page.setViewportSize(PHONE);
  expect(await accessibilityViolationsAt(page, PHONE, "light")).toEqual([]);
});

test("Without a laptop check first, the phone's check covers the whole page", async ({ page }) => {
  await pageWith(page, "", `<p id="faint" style="color:#999">Faint everywhere.</p>`);
  await page.setViewportSize(PHONE);
  expect(contrastFaults(await accessibilityViolationsAt(page, PHONE, "light")).join()).toContain("#faint");
});

// The page sweep checks each block of a page (top bar, navigation, the main content's parts) once
// per size and scheme in the whole run, whichever page and role showed it first
// (`unclaimedBlockViolationsAt`): a control only one role sees must still be checked at every size
// and scheme, and the person's own name must not make the top bar new for every role.

/** A page as one person sees it: a top bar with their name, a shared block, and what `extra` adds to the main content. */
async function rolePage(page: Page, person: string, extra: string): Promise<void> {
  const style = "#only-dark { color: #222 } @media (prefers-color-scheme: dark) { #only-dark { color: #999 } } #phone-only { display: none } @media (max-width: 600px) { #phone-only { display: block } }";
  await page.setViewportSize(LAPTOP);
  await page.emulateMedia({ colorScheme: "light" });
  await page.setContent(`<!doctype html><html lang="en"><head><title>Check</title><style>${style}</style></head><body><header><p id="who" style="color:#999">Signed in as ${person}</p></header><main><h1>Check</h1><div><section id="shared" aria-label="Shared"><p id="known" style="color:#999">Faint for everyone.</p></section>${extra}</div></main></body></html>`);
}

/** Contrast faults at each size and scheme, as the sweep asks for them (page-level rules at 1366 px in light). */
async function blockFaults(page: Page, claim: (key: string) => boolean, person: string): Promise<Record<string, string>> {
  const found: Record<string, string> = {};
  for (const size of SIZES) {
    await page.setViewportSize(size);
    for (const scheme of SCHEMES) {
      await page.emulateMedia({ colorScheme: scheme });
      const pageRules = size.name === "1366" && scheme === "light";
      found[`${size.name} ${scheme}`] = contrastFaults(await unclaimedBlockViolationsAt(page, size, scheme, claim, { ignore: [person], pageRules })).join(" / ");
    }
  }
  return found;
}

test("Block by block across roles, a faint control only one role sees is caught at the size and scheme that shows it, and what another role's page already passed through axe is not checked again", async ({ page }) => {
  const claimed = new Set<string>();
  const claim = (key: string) => !claimed.has(key) && Boolean(claimed.add(key));
  await rolePage(page, "Ada Pierce", "");
  const first = await blockFaults(page, claim, "Ada Pierce");
  // The first role's check finds the faint name and the faint shared text (both schemes: the page has no dark colours).
  for (const variant of ["1366 light", "1366 dark"]) {
    expect(first[variant]).toContain("#who");
    expect(first[variant]).toContain("#known");
  }
  // A second role: another name, the same shared block, and a section only it sees, faint in dark and on a phone.
  await rolePage(page, "Bram Okafor", `<section id="own" aria-label="Own"><p id="only-dark">Remove the device</p><p id="phone-only" style="color:#999">Remove on a phone</p></section>`);
  const second = await blockFaults(page, claim, "Bram Okafor");
  expect(second["1366 light"]).toBe("");
  expect(second["1366 dark"]).toContain("#only-dark");
  expect(second["390 light"]).toContain("#phone-only");
  expect(second["390 dark"]).toContain("#phone-only");
  // Nothing the first role's check covered is checked again: the top bar (the name taken out) and the shared block.
  expect(Object.values(second).join(" ")).not.toMatch(/#who|#known/);
});

test("A control added inside a block another role's page already passed makes that block new: it is checked again", async ({ page }) => {
  const claimed = new Set<string>();
  const claim = (key: string) => !claimed.has(key) && Boolean(claimed.add(key));
  await rolePage(page, "Ada Pierce", "");
  await blockFaults(page, claim, "Ada Pierce");
  await page.setContent((await page.content()).replace(`<section id="shared" aria-label="Shared">`, `<section id="shared" aria-label="Shared"><button id="added" style="color:#aaa">Delete</button>`));
  const again = await blockFaults(page, claim, "Ada Pierce");
  expect(again["1366 light"]).toContain("#added");
  expect(again["1366 light"]).not.toContain("#who");
});
