import ICAL from "ical.js";
import { DateTime } from "luxon";
import type { Browser, Page } from "@playwright/test";
import type { Role } from "#models/roles";
import { expect, test, type BrowserProblems } from "./fixtures";
import { hydrated, screenshot, seriousAccessibilityViolations, signIn, toast } from "./helpers";
import { createTeam, outboxDirectory, type Team } from "./team";
import { waitForMail } from "../support/outbox";

// Change proposals as a team meets them in the browser (issue 11, "Must show"; semantics in
// docs/decisions/010-change-proposals.md). Every test signs up an organisation of its own with one
// member per role and the invented harbour office's edge device
// (tests/fixtures/models/harbourline-edge.json): the NOC (198.51.100.0/26, RFC 5737) and the
// management LAN are its operator networks, r-noc lets the NOC log in on outside, and r-drop, the
// last rule, drops everything else on every interface — moved above r-noc it locks both out.
//
// Each scenario runs at a laptop's 1366 px in the light scheme and at a phone's 390 px in the dark
// one; at the key steps the page must not scroll sideways and axe must find no serious violation
// (in dark, its colour rules), and a screenshot is kept (tests/artifacts/screenshots/8x-…).

const SIZES = [
  { name: "1366", width: 1366, height: 860, scheme: "light" },
  { name: "390", width: 390, height: 844, scheme: "dark" },
] as const;
type Size = (typeof SIZES)[number];

/** axe rules whose verdict depends on colours, the only thing the dark scheme changes. */
const COLOUR_RULES = ["color-contrast", "link-in-text-block"];

/** A wall-clock time in the zone, as a datetime-local field takes it. */
function wallClock(at: DateTime, zone: string): string {
  return at.setZone(zone).toFormat("yyyy-MM-dd'T'HH:mm");
}

/**
 * A change window around now (an hour ago to three hours on), or tomorrow evening, as
 * wall-clock times in the device's zone, with the instants they stand for.
 */
function windowOf(kind: "now" | "tomorrow", zone: string): { start: string; end: string; startAt: Date; endAt: Date } {
  const now = DateTime.now().setZone(zone).startOf("minute");
  // Tomorrow 18:00–20:00: never in the hour the clocks skip or repeat, which is at night.
  const start = kind === "now" ? now.minus({ hours: 1 }) : now.plus({ days: 1 }).set({ hour: 18, minute: 0 });
  const end = kind === "now" ? now.plus({ hours: 3 }) : start.plus({ hours: 2 });
  return { start: wallClock(start, zone), end: wallClock(end, zone), startAt: start.toJSDate(), endAt: end.toJSDate() };
}

/** A signed-in member's browser at the scenario's size and scheme, watched by the fixture. */
async function memberPage(browser: Browser, browserProblems: BrowserProblems, team: Team, role: Role, size: Size): Promise<Page> {
  const context = await browser.newContext({ storageState: team.members[role].storageState, viewport: size, colorScheme: size.scheme });
  browserProblems.watch(context);
  return context.newPage();
}

/** Opens one of the device's pages from its navigation (folded behind "All pages" on a phone). */
async function openDevicePage(page: Page, name: string): Promise<void> {
  await hydrated(page);
  const navigation = page.getByRole("navigation", { name: "Device" });
  const link = navigation.getByRole("link", { name, exact: true });
  if (!(await link.isVisible())) await navigation.getByRole("button", { name: /All pages/ }).click();
  await link.click();
  await hydrated(page);
}

/**
 * At a key step: the page does not scroll sideways and axe finds no serious or critical
 * violation (WCAG 2.1 A and AA; in the dark scheme only its colour rules, the rest being the
 * same as in light); a full-page screenshot is kept.
 */
async function keyStep(page: Page, size: Size, name: string): Promise<void> {
  await hydrated(page);
  const overflow = await page.evaluate(() => (document.scrollingElement ?? document.documentElement).scrollWidth - window.innerWidth);
  expect(overflow, `${name} at ${size.name} px scrolls sideways`).toBeLessThanOrEqual(0);
  expect(await seriousAccessibilityViolations(page, size.scheme === "dark" ? COLOUR_RULES : undefined), `${name} at ${size.name} px, ${size.scheme}`).toEqual([]);
  await screenshot(page, `${name}-${size.name}-${size.scheme}`);
}

/** The banner over the draft's editor that says it is not live. */
function draftBanner(page: Page) {
  return page.getByRole("note").filter({ hasText: "Draft — not live" });
}

/** The draft's inbound rules, in order, as the draft editor lists them. */
function ruleList(page: Page) {
  return page.getByRole("list", { name: "Inbound rules in order" });
}

/** Proposes a change from the device's Proposals tab; ends on the new proposal's page. */
async function proposeChange(page: Page, team: Team, details: { title: string; reason: string; ticket: string; window: { start: string; end: string } }): Promise<void> {
  await page.goto(team.device.path);
  await openDevicePage(page, "Proposals");
  await expect(page.getByRole("heading", { name: "No open proposals" })).toBeVisible();
  await page.getByRole("link", { name: "Propose a change" }).click();
  await expect(page.getByRole("heading", { name: "Propose a change" })).toBeVisible();
  await hydrated(page);
  await page.getByLabel("Title").fill(details.title);
  await page.getByLabel("Reason").fill(details.reason);
  await page.getByLabel("Ticket reference (optional)").fill(details.ticket);
  await page.getByLabel("Starts").fill(details.window.start);
  await page.getByLabel("Ends").fill(details.window.end);
  await page.getByRole("button", { name: "Create the proposal" }).click();
  await expect(toast(page)).toContainText("Proposal created on r1.");
  await expect(page.getByRole("heading", { name: details.title, level: 2 })).toBeVisible();
}

/** Saves the draft's rule `id` through its edit form with the given interface and position. */
async function editDraftRule(page: Page, id: string, fields: { interface?: string; position: string }): Promise<void> {
  await page.getByRole("link", { name: `Edit rule ${id}` }).click();
  const form = page.getByRole("form", { name: "Inbound rule" });
  await expect(form.getByLabel("Rule id")).toHaveValue(id);
  if (fields.interface) await form.getByLabel("Interface").selectOption(fields.interface);
  await form.getByLabel("Position").fill(fields.position);
  await form.getByRole("button", { name: "Save rule" }).click();
  await expect(toast(page)).toContainText("in the draft");
  await expect(toast(page)).toContainText("The device is unchanged.");
}

for (const size of SIZES) {
  test(`An engineer drafts a rule move that locks out the NOC, fixes it and submits; the reviewer comes from the e-mail, comments on a rule and approves; the engineer applies it in its window (${size.name} px, ${size.scheme})`, async ({ browser, browserProblems, playwright }, testInfo) => {
    test.setTimeout(240_000);
    // Submitting while the lockout guard blocks is refused on purpose: a 409 on the proposal page.
    browserProblems.expect(409, /\/proposals\/[0-9a-f-]{36}\.data$/);
    const team = await createTeam(playwright.request, testInfo.project.use.baseURL ?? "", `propose-${size.name}`);
    const timezone = "Europe/Berlin";
    const window = windowOf("now", timezone);
    const title = "Close the vendor paths on outside";
    const engineer = await memberPage(browser, browserProblems, team, "engineer", size);

    // The engineer proposes a change from the device's Proposals tab.
    await proposeChange(engineer, team, {
      title,
      reason: "Vendor support moved to the site link; on outside only the NOC should get past the catch-all drop.",
      ticket: "CHG-2207",
      window,
    });
    const proposalUrl = engineer.url();
    await expect(engineer.getByText("Draft", { exact: true }).first()).toBeVisible();
    await expect(engineer.getByText("CHG-2207")).toBeVisible();

    // First try, in the draft's own rules editor: the catch-all drop to the top.
    await engineer.getByRole("navigation", { name: "Edit the draft" }).getByRole("link", { name: "Inbound rules" }).click();
    await expect(draftBanner(engineer)).toContainText("Saves here change only the draft");
    await editDraftRule(engineer, "r-drop", { position: "1" });
    await expect(ruleList(engineer).getByRole("listitem").first()).toHaveAccessibleName("Rule r-drop at position 1");
    // Still a deny: the edit form took the rule's own action, not the add form's "allow".
    await expect(ruleList(engineer).getByRole("listitem").first()).toContainText("deny");

    // The proposal page shows the lockout: both operator networks lose every login path.
    await draftBanner(engineer).getByRole("link", { name: `“${title}”` }).click();
    await expect(engineer).toHaveURL(proposalUrl);
    const nocLocked = engineer.getByText("Operator network “noc” would lose every login path", { exact: false });
    await expect(nocLocked.first()).toBeVisible();
    await expect(engineer.getByText("Operator network “mgmt-lan” would lose every login path", { exact: false }).first()).toBeVisible();
    // The NOC's ranges that had a login (198.51.100.7, the blocklisted scanner, never had one).
    for (const range of ["198.51.100.6/32", "198.51.100.8/29", "2001:db8:99::/48"]) await expect(engineer.getByText(`no login any more from ${range}`, { exact: true }).first()).toBeVisible();
    await expect(engineer.getByText("no login any more from 198.51.100.7/32")).toHaveCount(0);

    // Submitting is refused, in those words; the proposal stays a draft.
    const submitForm = engineer.getByRole("form", { name: "Submit for review" });
    await submitForm.getByRole("button", { name: "Submit for review" }).click();
    await expect(submitForm.getByRole("alert").first()).toContainText("Not submitted: the lockout guard blocks this change.");
    await expect(submitForm).toContainText("Operator network “noc” would lose every login path");
    await keyStep(engineer, size, "80-proposal-lockout");

    // The fix: the drop goes right below the NOC's allow, on outside only — the vendor's rules
    // on outside fall behind it, the management LAN keeps r-mgmt on its own interface.
    await engineer.getByRole("navigation", { name: "Edit the draft" }).getByRole("link", { name: "Inbound rules" }).click();
    await editDraftRule(engineer, "r-drop", { interface: "outside", position: "3" });
    await expect(ruleList(engineer).getByRole("listitem").nth(2)).toHaveAccessibleName("Rule r-drop at position 3");
    await expect(ruleList(engineer).getByRole("listitem").nth(2)).toContainText("on outside");
    await engineer.goto(proposalUrl);
    await hydrated(engineer);
    await expect(engineer.getByText("would lose every login path")).toHaveCount(0);
    await expect(engineer.getByText("No operator network loses its login")).toBeVisible();
    await submitForm.getByRole("button", { name: "Submit for review" }).click();
    await expect(toast(engineer)).toContainText("Submitted for review; the reviewers were e-mailed.");
    await expect(engineer.getByText("In review", { exact: true }).first()).toBeVisible();

    // The reviewer signs in, finds the e-mail in the local outbox and follows its link.
    const reviewerEmail = team.members.reviewer.email;
    await waitForMail(outboxDirectory(), reviewerEmail, new RegExp(`^Review requested: ${title}`));
    const reviewerContext = await browser.newContext({ viewport: size, colorScheme: size.scheme });
    browserProblems.watch(reviewerContext);
    const reviewer = await reviewerContext.newPage();
    await signIn(reviewer, reviewerEmail, team.members.reviewer.password);
    await reviewer.goto("/outbox");
    const mail = reviewer.getByRole("article", { name: `Review requested: ${title} (${team.device.name})` }).filter({ hasText: `To: ${reviewerEmail}` });
    await expect(mail).toContainText("Chen Lindahl asks for a review");
    await mail.getByRole("link", { name: /\/proposals\/[0-9a-f-]{36}$/ }).click();
    await expect(reviewer).toHaveURL(proposalUrl);
    await hydrated(reviewer);

    // A comment on one rule, then the approval.
    const commentForm = reviewer.getByRole("form", { name: "Comment" });
    await commentForm.getByLabel("About").selectOption({ label: "inbound rule r-drop" });
    await commentForm.getByLabel("Comment").fill("r-maint still lets the vendor in on inside at night; fine for now, let's retire it next.");
    await commentForm.getByRole("button", { name: "Add the comment" }).click();
    await expect(toast(reviewer)).toContainText("Comment on rule r-drop added.");
    const comments = reviewer.getByRole("region", { name: "Comments" });
    await expect(comments.getByRole("listitem").filter({ hasText: "on rule r-drop" })).toContainText("retire it next");
    // The form starts empty again, so the comment is not sent twice.
    await expect(commentForm.getByLabel("Comment")).toHaveValue("");
    const approveForm = reviewer.getByRole("form", { name: "Approve" });
    await approveForm.getByLabel("Approval note (optional)").fill("Checked the effect: only the vendor loses outside.");
    await approveForm.getByRole("button", { name: "Approve" }).click();
    await expect(toast(reviewer)).toContainText("Approved: it can be applied in its change window.");
    await expect(reviewer.getByText("Approved", { exact: true }).first()).toBeVisible();
    await expect(reviewer.getByText("1 of 1 needed for this draft version")).toBeVisible();
    await expect(approveForm.getByLabel("Approval note (optional)")).toHaveValue("");
    await keyStep(reviewer, size, "81-proposal-approved");

    // The author receives the window as a calendar event, at the times typed in the device's zone.
    const approved = await waitForMail(outboxDirectory(), team.members.engineer.email, new RegExp(`^Approved: ${title}`));
    const calendar = approved.attachments.find((file) => file.filename.endsWith(".ics"));
    expect(calendar?.contentType).toBe("text/calendar");
    const event = new ICAL.Event(new ICAL.Component(ICAL.parse(calendar?.content ?? "")).getFirstSubcomponent("vevent") ?? undefined);
    // RFC 5545 §3.8.2.4 DTSTART and §3.8.2.2 DTEND: the instants of the wall-clock times typed in Europe/Berlin.
    expect(event.startDate.toJSDate().getTime()).toBe(window.startAt.getTime());
    expect(event.endDate.toJSDate().getTime()).toBe(window.endAt.getTime());

    // The engineer applies it inside the window: one new revision, titled like the proposal.
    await engineer.reload();
    await hydrated(engineer);
    const applyForm = engineer.getByRole("form", { name: "Apply the proposal" });
    await expect(engineer.getByText("Open now: it can be applied.")).toBeVisible();
    await applyForm.getByRole("button", { name: "Apply as a new revision" }).click();
    await expect(toast(engineer)).toContainText("Applied as revision r2.");
    await expect(engineer.getByText("Applied", { exact: true }).first()).toBeVisible();
    await keyStep(engineer, size, "82-proposal-applied");

    // The applied revision, from the proposal's own link, carries the title in History.
    await engineer.getByRole("link", { name: "r2", exact: true }).click();
    await expect(engineer).toHaveURL(new RegExp(`${team.device.path}/history\\?to=2$`));
    const revision = engineer.getByRole("row").filter({ has: engineer.getByRole("cell", { name: "r2", exact: true }) });
    await expect(revision).toContainText(title);
    await expect(revision).toContainText(team.members.engineer.email);
    await reviewerContext.close();
    await engineer.context().close();
  });
}

