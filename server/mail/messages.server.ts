import type { Role } from "../auth/roles.ts";
import { formatDuration, formatInstant } from "../engine/format.ts";
import { sendMail, type OutgoingMail } from "./mailer.server.ts";

function escapeHtml(value: string): string {
  return value.replace(/[&<>"']/g, (character) => ({ "&": "&amp;", "<": "&lt;", ">": "&gt;", '"': "&quot;", "'": "&#39;" })[character]!);
}

function layout(paragraphs: string[], link?: { href: string; label: string }): string {
  const body = paragraphs.map((paragraph) => `<p style="margin:0 0 14px">${escapeHtml(paragraph)}</p>`).join("");
  const button = link
    ? `<p><a href="${escapeHtml(link.href)}" style="display:inline-block;padding:10px 16px;background:#0f5c63;color:#fff;border-radius:6px;text-decoration:none">${escapeHtml(link.label)}</a></p><p style="color:#5b6b78;font-size:13px">Or paste this link into your browser: ${escapeHtml(link.href)}</p>`
    : "";
  return `<div style="font-family:system-ui,sans-serif;max-width:520px;color:#14202b">${body}${button}</div>`;
}

export async function sendPasswordResetMail(input: { to: string; name: string; link: string; minutes: number }): Promise<void> {
  const paragraphs = [
    `Hello ${input.name},`,
    `Someone (hopefully you) asked to reset your Sallyport password. The link works once and expires in ${formatDuration(input.minutes, "minute")}.`,
    "If you did not ask for this, ignore this message; your password stays as it is.",
  ];
  await sendMail({
    to: input.to,
    subject: "Reset your Sallyport password",
    text: `${paragraphs.join("\n\n")}\n\nReset your password: ${input.link}\n`,
    html: layout(paragraphs, { href: input.link, label: "Choose a new password" }),
  });
}

export async function sendInvitationMail(input: { to: string; organisationName: string; inviterName: string; role: Role; link: string }): Promise<void> {
  const paragraphs = [
    `${input.inviterName} invited you to join ${input.organisationName} on Sallyport as ${input.role}.`,
    "The link is valid for 7 days and works once.",
  ];
  await sendMail({
    to: input.to,
    subject: `Join ${input.organisationName} on Sallyport`,
    text: `${paragraphs.join("\n\n")}\n\nAccept the invitation: ${input.link}\n`,
    html: layout(paragraphs, { href: input.link, label: "Accept the invitation" }),
  });
}

export async function sendEmailChangeMail(input: { to: string; name: string; link: string; lifetime: string }): Promise<void> {
  const paragraphs = [
    `Hello ${input.name},`,
    `Someone (hopefully you) asked to use this address to sign in to Sallyport. Nothing changes until you follow the link; it works once and expires in ${input.lifetime}.`,
    "If you did not ask for this, ignore this message.",
  ];
  await sendMail({
    to: input.to,
    subject: "Confirm your new Sallyport e-mail address",
    text: `${paragraphs.join("\n\n")}\n\nConfirm this address: ${input.link}\n`,
    html: layout(paragraphs, { href: input.link, label: "Confirm this address" }),
  });
}

/** Sent to the old address once the change is made, so a change nobody asked for is noticed. */
export async function sendEmailChangedNotice(input: { to: string; name: string; newEmail: string }): Promise<void> {
  const paragraphs = [
    `Hello ${input.name},`,
    `Your Sallyport account now signs in with ${input.newEmail} instead of this address.`,
    "If you did not make this change, ask your organisation's administrator for help at once.",
  ];
  await sendMail({ to: input.to, subject: "Your Sallyport e-mail address was changed", text: `${paragraphs.join("\n\n")}\n`, html: layout(paragraphs) });
}

/** Sent to a member whose second factor an admin or owner reset (docs/decisions/019), so a reset nobody asked for is noticed. */
export async function sendSecondFactorResetMail(input: { to: string; name: string; organisationName: string; adminName: string; required: boolean; link: string }): Promise<void> {
  const paragraphs = [
    `Hello ${input.name},`,
    `${input.adminName}, an administrator of ${input.organisationName} on Sallyport, reset your second factor: the authenticator app no longer gives codes for this account, your recovery codes no longer work, and you were signed out everywhere.`,
    input.required
      ? `${input.organisationName} requires a second factor: after your password, Sallyport asks you to set up a new one before anything else.`
      : "You sign in with your password alone until you set up a new second factor, which we recommend doing at once.",
    "If you did not ask for this, tell your organisation's administrator and change your password.",
  ];
  await sendMail({
    to: input.to,
    subject: "Your Sallyport second factor was reset",
    text: `${paragraphs.join("\n\n")}\n\nSet up a new second factor: ${input.link}\n`,
    html: layout(paragraphs, { href: input.link, label: "Set up a new second factor" }),
  });
}

/**
 * A message about a change proposal (submitted, commented on, approved, applied …): the
 * paragraphs, a button to the proposal, and, with an approval, its change window as an
 * iCalendar event (RFC 5545) to put in a calendar. Composed here, sent by the caller.
 */
export function proposalMail(input: { to: string; subject: string; paragraphs: string[]; link: string; calendar?: string }): OutgoingMail {
  return {
    to: input.to,
    subject: input.subject,
    text: `${input.paragraphs.join("\n\n")}\n\nOpen the proposal: ${input.link}\n`,
    html: layout(input.paragraphs, { href: input.link, label: "Open the proposal" }),
    ...(input.calendar ? { attachments: [{ filename: "change-window.ics", content: input.calendar, contentType: "text/calendar; charset=utf-8; method=PUBLISH" }] } : {}),
  };
}

/** A lesson or drill assigned by a trainer (docs/decisions/016): what, by when, the trainer's note, and the link. */
export async function sendAssignmentMail(input: { to: string; name: string; organisationName: string; trainerName: string; title: string; kind: "lesson" | "drill"; dueAt: Date; note: string; link: string }): Promise<void> {
  const paragraphs = [
    `Hello ${input.name},`,
    `${input.trainerName} assigned you the ${input.kind} “${input.title}” in ${input.organisationName} on Sallyport, due ${formatInstant(input.dueAt)}.`,
    ...(input.note ? [`Their note: ${input.note}`] : []),
    "Answers after the due date are still accepted; they are marked late.",
  ];
  await sendMail({
    to: input.to,
    subject: `Training assigned: ${input.title}`,
    text: `${paragraphs.join("\n\n")}\n\nOpen the assignment: ${input.link}\n`,
    html: layout(paragraphs, { href: input.link, label: "Open the assignment" }),
  });
}
