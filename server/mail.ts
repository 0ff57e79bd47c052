import "server-only";
import nodemailer, { type Transporter } from "nodemailer";
import { env } from "@/lib/env";
import { mailHtml } from "@/lib/mail/html";

let transport: Transporter | undefined;

/** The one SMTP transport (a local catcher under npm start and npm test). */
export function mailer(): Transporter {
  transport ??= nodemailer.createTransport(env().SMTP_URL, { from: env().MAIL_FROM });
  return transport;
}

/** Plain text and, made from it, HTML with real links: a mail client shows whichever it prefers. */
export async function sendMail(to: string, subject: string, text: string): Promise<void> {
  await mailer().sendMail({ to, subject, text, html: mailHtml(subject, text), from: env().MAIL_FROM });
}
