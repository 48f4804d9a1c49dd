import type { Page } from "@playwright/test";
import { expect, test } from "./fixtures";
import { accessibilityViolationsAt, SIZES } from "./helpers";

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
