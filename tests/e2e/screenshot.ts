import { mkdirSync } from "node:fs";
import path from "node:path";
import type { Page } from "@playwright/test";

const directory = path.resolve("tests/artifacts/screenshots");

/** Saves a full-page screenshot kept as a test artifact (tests/artifacts/screenshots). */
export async function screenshot(page: Page, name: string): Promise<void> {
  mkdirSync(directory, { recursive: true });
  await page.screenshot({ path: path.join(directory, `${name}.png`), fullPage: true });
}
