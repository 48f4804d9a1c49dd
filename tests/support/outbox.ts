import { readdir, readFile } from "node:fs/promises";
import path from "node:path";
import { simpleParser } from "mailparser";

export type CaughtMail = { to: string; subject: string; text: string };

/** Every message the fake SMTP server wrote to the folder, oldest first. */
export async function readCaughtMail(directory: string): Promise<CaughtMail[]> {
  const names = (await readdir(directory).catch(() => [] as string[])).filter((name) => name.endsWith(".eml")).sort();
  return Promise.all(
    names.map(async (name) => {
      const parsed = await simpleParser(await readFile(path.join(directory, name)));
      const to = Array.isArray(parsed.to) ? parsed.to.map((address) => address.text).join(", ") : (parsed.to?.text ?? "");
      return { to, subject: parsed.subject ?? "", text: parsed.text ?? "" };
    }),
  );
}

/** Waits for the newest message to an address, and returns the first link in it matching `pattern`. */
export async function waitForLink(directory: string, to: string, pattern: RegExp, timeoutMs = 10_000): Promise<string> {
  const deadline = Date.now() + timeoutMs;
  while (Date.now() < deadline) {
    const messages = (await readCaughtMail(directory)).filter((message) => message.to.includes(to));
    const newest = messages.at(-1);
    const match = newest?.text.match(pattern);
    if (match) return match[0];
    await new Promise((resolve) => setTimeout(resolve, 100));
  }
  throw new Error(`no e-mail to ${to} with a link matching ${pattern} within ${timeoutMs} ms`);
}

export type CaughtMailWithFiles = CaughtMail & { attachments: Array<{ filename: string; contentType: string; content: string }> };

/** Waits for the newest message to an address whose subject matches, with its attachments as text. */
export async function waitForMail(directory: string, to: string, subject: RegExp, timeoutMs = 10_000): Promise<CaughtMailWithFiles> {
  const deadline = Date.now() + timeoutMs;
  while (Date.now() < deadline) {
    const names = (await readdir(directory).catch(() => [] as string[])).filter((name) => name.endsWith(".eml")).sort().reverse();
    for (const name of names) {
      const parsed = await simpleParser(await readFile(path.join(directory, name)));
      const recipients = Array.isArray(parsed.to) ? parsed.to.map((address) => address.text).join(", ") : (parsed.to?.text ?? "");
      if (!recipients.includes(to) || !subject.test(parsed.subject ?? "")) continue;
      return {
        to: recipients,
        subject: parsed.subject ?? "",
        text: parsed.text ?? "",
        attachments: parsed.attachments.map((file) => ({ filename: file.filename ?? "", contentType: file.contentType, content: file.content.toString("utf8") })),
      };
    }
    await new Promise((resolve) => setTimeout(resolve, 100));
  }
  throw new Error(`no e-mail to ${to} with a subject matching ${subject} within ${timeoutMs} ms`);
}
