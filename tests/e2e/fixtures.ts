import { test as base, expect, type BrowserContext, type ConsoleMessage, type Page, type Response } from "@playwright/test";

/**
 * A failed response the test itself causes and checks (a 403 it asserts, a form refused with
 * 400): its status and a pattern of its URL. Anything else fails the test.
 */
export type ExpectedFailure = { status: number; url: RegExp };

export type BrowserProblems = {
  /** Declares a failed response this test expects; its console line ("Failed to load resource") is expected with it. */
  expect(status: number, url: RegExp): void;
  /** Watches another context (a second person's browser) as the default one is watched. */
  watch(context: BrowserContext): void;
  /** The problems so far, for a test that checks them itself at a point of its own. */
  list(): string[];
};

// Chrome's console line for a response with an error status, e.g.
// "Failed to load resource: the server responded with a status of 403 (Forbidden)".
const FAILED_RESOURCE = /^Failed to load resource: the server responded with a status of (\d{3})/;

/**
 * Every spec imports `test` from here: it fails the test on any console error, uncaught page
 * error, request that could not complete, or response with a 4xx/5xx status — in every page of
 * the default context and of contexts handed to `browserProblems.watch` — unless the test
 * declared that failure with `browserProblems.expect(status, url)`. (Common practice, no
 * source: a page that logs errors or loses requests is broken for someone.)
 */
export const test = base.extend<{ browserProblems: BrowserProblems }>({
  browserProblems: [
    async ({ context, javaScriptEnabled }, use) => {
      const problems: string[] = [];
      const expected: ExpectedFailure[] = [];
      const isExpected = (status: number, url: string) => expected.some((failure) => failure.status === status && failure.url.test(url));
      const onConsole = (message: ConsoleMessage) => {
        if (message.type() !== "error") return;
        const failed = FAILED_RESOURCE.exec(message.text());
        if (failed && isExpected(Number(failed[1]), message.location().url)) return;
        problems.push(`console error on ${message.page()?.url() ?? "?"}: ${message.text().split("\n")[0]}`);
      };
      const onResponse = (response: Response) => {
        if (response.status() >= 400 && !isExpected(response.status(), response.url())) problems.push(`${response.status()} ${response.request().method()} ${response.url()}`);
      };
      const attach = (page: Page) => {
        page.on("console", onConsole);
        page.on("pageerror", (error) => problems.push(`page error on ${page.url()}: ${error.message}`));
        page.on("response", onResponse);
        page.on("requestfailed", (request) => {
          const reason = request.failure()?.errorText ?? "";
          // A navigation cancels what the page before it was still loading (a prefetch, say); that is not a failure.
          if (reason === "net::ERR_ABORTED") return;
          // With JavaScript off (a test of the forms without it), Chromium refuses the page's scripts as "csp".
          if (!javaScriptEnabled && reason === "csp" && request.resourceType() === "script") return;
          problems.push(`request failed (${reason}): ${request.method()} ${request.url()}`);
        });
      };
      const watch = (watched: BrowserContext) => {
        watched.pages().forEach(attach);
        watched.on("page", attach);
      };
      watch(context);
      await use({ expect: (status, url) => expected.push({ status, url }), watch, list: () => [...problems] });
      expect(problems, "console errors, page errors and failed requests").toEqual([]);
    },
    { auto: true },
  ],
});

export { expect };
