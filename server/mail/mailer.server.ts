import nodemailer, { type Transporter } from "nodemailer";
import { getEnvironment } from "../config.server.ts";
import { awayFromTurn } from "../http/admission.server.ts";

/** A file sent with a message, e.g. a change window as an iCalendar event (text/calendar, RFC 5545). */
export type MailAttachment = { filename: string; content: string; contentType: string };
export type OutgoingMail = { to: string; subject: string; text: string; html: string; attachments?: MailAttachment[] };

let transporter: Transporter | undefined;

function getTransporter(): Transporter {
  if (transporter) return transporter;
  const environment = getEnvironment();
  const secure = environment.SMTP_SECURE === "1";
  transporter = nodemailer.createTransport({
    host: environment.SMTP_HOST,
    port: environment.SMTP_PORT,
    secure,
    // The local fake server speaks plain SMTP on loopback; a real server gets STARTTLS.
    ignoreTLS: environment.SALLYPORT_FAKE_SMTP === "1",
    auth: environment.SMTP_USER ? { user: environment.SMTP_USER, pass: environment.SMTP_PASSWORD ?? "" } : undefined,
  });
  return transporter;
}

/** Sends one message; the request gives its turn up while the mail server answers. */
export async function sendMail(mail: OutgoingMail): Promise<void> {
  await awayFromTurn(() => getTransporter().sendMail({ from: getEnvironment().MAIL_FROM, ...mail }));
}
