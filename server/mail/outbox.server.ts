import { readFile, readdir } from "node:fs/promises";
import path from "node:path";
import { simpleParser } from "mailparser";

export type OutboxMessage = { id: string; to: string; subject: string; date: string; text: string };

/** Messages caught by the fake SMTP server, newest first. */
export async function listOutboxMessages(directory: string, limit = 50): Promise<OutboxMessage[]> {
  let names: string[];
  try {
    names = (await readdir(directory)).filter((name) => name.endsWith(".eml"));
  } catch {
    return [];
  }
  names.sort().reverse();
  return Promise.all(
    names.slice(0, limit).map(async (name) => {
      const parsed = await simpleParser(await readFile(path.join(directory, name)));
      const to = Array.isArray(parsed.to) ? parsed.to.map((address) => address.text).join(", ") : (parsed.to?.text ?? "");
      return { id: name.replace(/\.eml$/, ""), to, subject: parsed.subject ?? "", date: (parsed.date ?? new Date()).toISOString(), text: parsed.text ?? "" };
    }),
  );
}
