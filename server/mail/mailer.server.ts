import nodemailer, { type Transporter } from "nodemailer";
import { getEnvironment } from "../config.server.ts";

export type OutgoingMail = { to: string; subject: string; text: string; html: string };

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

export async function sendMail(mail: OutgoingMail): Promise<void> {
  await getTransporter().sendMail({ from: getEnvironment().MAIL_FROM, ...mail });
}
