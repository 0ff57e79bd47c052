import "server-only";
import nodemailer, { type Transporter } from "nodemailer";
import { env } from "@/lib/env";

let transport: Transporter | undefined;

/** The one SMTP transport (a local catcher under npm start and npm test). */
export function mailer(): Transporter {
  transport ??= nodemailer.createTransport(env().SMTP_URL, { from: env().MAIL_FROM });
  return transport;
}

export async function sendMail(to: string, subject: string, text: string): Promise<void> {
  await mailer().sendMail({ to, subject, text, from: env().MAIL_FROM });
}
