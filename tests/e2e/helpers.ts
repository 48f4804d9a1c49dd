import { mkdirSync } from "node:fs";
import path from "node:path";
import { expect, type Locator, type Page } from "@playwright/test";

const directory = path.resolve("tests/artifacts/screenshots");

/** Saves a full-page screenshot kept as a test artifact (tests/artifacts/screenshots). */
export async function screenshot(page: Page, name: string): Promise<void> {
  mkdirSync(directory, { recursive: true });
  await page.screenshot({ path: path.join(directory, `${name}.png`), fullPage: true });
}

/** Signs in through the form and waits until the app has taken the user in. */
export async function signIn(page: Page, email: string, password: string): Promise<void> {
  await page.goto("/login");
  await page.getByLabel("E-mail").fill(email);
  await page.getByLabel("Password").fill(password);
  await page.getByRole("button", { name: "Sign in" }).click();
  await page.waitForURL((url) => !url.pathname.startsWith("/login"));
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
