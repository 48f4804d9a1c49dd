import type { Role } from "../auth/roles.ts";
import { sendMail } from "./mailer.server.ts";

function escapeHtml(value: string): string {
  return value.replace(/[&<>"']/g, (character) => ({ "&": "&amp;", "<": "&lt;", ">": "&gt;", '"': "&quot;", "'": "&#39;" })[character]!);
}

function layout(paragraphs: string[], link: { href: string; label: string }): string {
  const body = paragraphs.map((paragraph) => `<p style="margin:0 0 14px">${escapeHtml(paragraph)}</p>`).join("");
  return `<div style="font-family:system-ui,sans-serif;max-width:520px;color:#14202b">${body}<p><a href="${escapeHtml(link.href)}" style="display:inline-block;padding:10px 16px;background:#0f5c63;color:#fff;border-radius:6px;text-decoration:none">${escapeHtml(link.label)}</a></p><p style="color:#5b6b78;font-size:13px">Or paste this link into your browser: ${escapeHtml(link.href)}</p></div>`;
}

export async function sendPasswordResetMail(input: { to: string; name: string; link: string; minutes: number }): Promise<void> {
  const paragraphs = [
    `Hello ${input.name},`,
    `Someone (hopefully you) asked to reset your Sallyport password. The link works once and expires in ${input.minutes} minutes.`,
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
