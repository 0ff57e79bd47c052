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

/**
 * Plain text and, made from it, HTML whose only links are the app's own: a mail client shows
 * whichever it prefers. A mail its reader can stop carries RFC 8058 one-click unsubscribe: the
 * List-Unsubscribe address (https in production, from NEXTAUTH_URL) and List-Unsubscribe-Post,
 * which lets the mail provider's own button stop it with one POST (RFC 8058 3.1; the outgoing
 * server must DKIM-sign both headers for providers to trust them, RFC 8058 4).
 */
export async function sendMail(
  to: string,
  subject: string,
  text: string,
  opts: { unsubscribeUrl?: string } = {},
): Promise<void> {
  const headers = opts.unsubscribeUrl
    ? { "List-Unsubscribe": `<${opts.unsubscribeUrl}>`, "List-Unsubscribe-Post": "List-Unsubscribe=One-Click" }
    : undefined;
  await mailer().sendMail({
    to,
    subject,
    text,
    html: mailHtml(subject, text, { linkOrigin: env().NEXTAUTH_URL }),
    from: env().MAIL_FROM,
    headers,
  });
}
