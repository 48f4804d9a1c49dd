import type { Page } from "@playwright/test";
import { expect, test } from "./fixtures";
import { PIER_GW, QUAY_EDGE } from "../support/shared-objects";
import { hydrated, screenshot, seriousAccessibilityViolations, toast } from "./helpers";

// Changing a shared address object in the browser: the review shows each device that uses it and
// how its exposure changes, at 1366 px and 390 px, light and dark; confirming gives each device
// a new revision. The organisation is made for the test (sign-up, a site, two imported devices:
// quay-edge uses ops-desk directly, pier-gw through the shared group all-operators).

/** A form post from the page's own origin, as the browser's forms send it; redirects are not followed. */
async function post(page: Page, path: string, form: Record<string, string>): Promise<{ status: number; location: string }> {
  const origin = new URL(page.url()).origin;
  const response = await page.request.post(path, { form, headers: { Origin: origin }, maxRedirects: 0 });
  return { status: response.status(), location: response.headers().location ?? "" };
}

/** Signs up a new owner with an organisation holding ops-desk, a group of it, and two devices that use them. */
async function organisationWithDevices(page: Page): Promise<string> {
  await page.goto("/login");
  const stamp = Date.now().toString(36);
  const signedUp = await post(page, "/signup", { name: "Ada Quay", email: `ada-${stamp}@test.example`, organisationName: `Quayside ${stamp}`, password: "quiet harbour lantern 42" });
  expect(signedUp.status).toBe(302);
  const slug = signedUp.location.replace(/^\/o\//, "");
  expect((await post(page, `/o/${slug}/sites`, { intent: "create", name: "Harbour office", customer: "", location: "" })).status).toBe(302);
  const sites = await (await page.request.get(`/o/${slug}/sites`)).text();
  const siteId = /edit=([0-9a-f-]{36})/.exec(sites)?.[1] ?? "";
  for (const [kind, name, items] of [
    ["address", "ops-desk", "198.51.100.0/28"],
    ["group", "all-operators", "ops-desk"],
  ]) {
    expect((await post(page, `/o/${slug}/settings/shared-objects`, { intent: "save", original: "", kind, name, items, description: "" })).status).toBe(302);
  }
  for (const document of [QUAY_EDGE, PIER_GW]) {
    expect((await post(page, `/o/${slug}/devices/import`, { intent: "import", target: `site:${siteId}`, fileName: "model.json", documentText: JSON.stringify(document) })).status).toBe(302);
  }
  return slug;
}

/**
 * The page's own content fits the viewport: nothing in it is wider than the screen (a table
 * may scroll inside its card). The shell around it (navigation, settings tabs) is checked by
 * the layout's own tests.
 */
async function expectContentFits(page: Page) {
  for (const testId of ["shared-objects-page", "shared-change-review"]) {
    const fits = await page.getByTestId(testId).evaluate((root) => {
      const viewport = document.documentElement.clientWidth;
      // What sticks out, for the failure message (inside a scrolling table it may).
      const wide = [...root.querySelectorAll("*")]
        .filter((element) => element.getBoundingClientRect().right > viewport + 1 && !element.closest(".overflow-x-auto"))
        .map((element) => `${element.tagName.toLowerCase()}.${element.className.toString().slice(0, 40)}`);
      return { overflow: root.scrollWidth - root.clientWidth, right: Math.round(root.getBoundingClientRect().right), viewport, wide };
    });
    expect(fits.overflow, `${testId}: ${fits.wide.join(", ")}`).toBeLessThanOrEqual(0);
    expect(fits.right, testId).toBeLessThanOrEqual(fits.viewport);
  }
}

async function expectNoSeriousViolations(page: Page) {
  expect(await seriousAccessibilityViolations(page, undefined, '[data-testid="shared-change-review"]')).toEqual([]);
}

test("An owner changes a shared address object, reviews each device's exposure change, and confirms new revisions", async ({ page }) => {
  const slug = await organisationWithDevices(page);
  await page.goto(`/o/${slug}/settings/shared-objects?edit=ops-desk`);
  await hydrated(page);
  await page.getByLabel("Entries or members").fill("198.51.100.16/28");
  await page.getByRole("button", { name: "Save", exact: true }).click();

  const review = page.getByTestId("shared-change-review");
  await expect(review.getByRole("heading", { name: "Review before saving: 2 devices change" })).toBeFocused();
  const pier = review.getByRole("group", { name: "pier-gw" });
  const quay = review.getByRole("group", { name: "quay-edge" });
  // pier-gw uses ops-desk through all-operators: its account's login moves to the new /28 (16 addresses, RFC 4632 §3.1).
  await expect(pier.getByTestId("more-exposed")).toHaveText("More exposed: 16 sources");
  await expect(pier.getByTestId("less-exposed")).toHaveText("Less exposed: 16 sources");
  await expect(pier.getByTestId("exposure-change")).toHaveCount(2);
  // quay-edge: the same sources move on https and ssh, so one row each way.
  await expect(quay.getByTestId("exposure-change")).toHaveCount(2);
  await expect(quay.getByRole("link", { name: "Trace 198.51.100.16" }).first()).toBeVisible();
  await expectNoSeriousViolations(page);
  await screenshot(page, "60-shared-review-1366-light");

  // The same review in dark mode, and on a phone: nothing in it is wider than the screen.
  await page.evaluate(() => document.documentElement.setAttribute("data-theme", "dark"));
  await expectNoSeriousViolations(page);
  await screenshot(page, "61-shared-review-1366-dark");
  await page.setViewportSize({ width: 390, height: 844 });
  await expectContentFits(page);
  await screenshot(page, "62-shared-review-390-dark");
  await page.evaluate(() => document.documentElement.removeAttribute("data-theme"));
  await expectContentFits(page);
  await screenshot(page, "63-shared-review-390-light");

  // A row's trace link opens the trace page with that probe.
  const traceHref = await pier.getByTestId("change-witness").first().getAttribute("href");
  expect(traceHref).toMatch(/\/analysis\?from=198\.51\.100\.(0|16)&interface=outside&service=https&to=192\.0\.2\.20&at=/);

  await page.setViewportSize({ width: 1366, height: 860 });
  await review.getByRole("button", { name: "Save and create 2 new revisions" }).click();
  await expect(toast(page)).toContainText("Shared address object ops-desk saved. New revisions: pier-gw r2, quay-edge r2.");
  await expect(page.getByTestId("shared-change-review")).toHaveCount(0);
  await expect(page.getByRole("cell", { name: "198.51.100.16/28" })).toBeVisible();

  // The device's history names the change.
  await page.goto(`/o/${slug}/devices`);
  await page.getByRole("link", { name: "pier-gw", exact: true }).click();
  await page.getByRole("navigation", { name: "Device" }).getByRole("link", { name: "History" }).click();
  await expect(page.getByRole("cell", { name: "Shared address object ops-desk: 198.51.100.0/28 → 198.51.100.16/28" })).toBeVisible();
});

test("Cancelling the review saves nothing", async ({ page }) => {
  const slug = await organisationWithDevices(page);
  await page.goto(`/o/${slug}/settings/shared-objects?edit=ops-desk`);
  // Typed once the page is live: a fill racing hydration can land beside the server-rendered text.
  await hydrated(page);
  await page.getByLabel("Entries or members").fill("198.51.100.32/28");
  await page.getByRole("button", { name: "Save", exact: true }).click();
  await expect(page.getByRole("heading", { name: "Review before saving: 2 devices change" })).toBeVisible();
  await page.getByRole("link", { name: "Cancel" }).click();
  await expect(page.getByTestId("shared-change-review")).toHaveCount(0);
  await expect(page.getByRole("cell", { name: "198.51.100.0/28" })).toBeVisible();
  await expect(page.getByLabel("Entries or members")).toHaveValue("198.51.100.0/28");
});
