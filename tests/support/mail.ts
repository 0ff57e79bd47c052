/** The local mail catcher's inbox (maildev's HTTP API), as npm test started it. */
interface Mail {
  id: string;
  subject: string;
  text: string;
  /** absent for a plain-text mail */
  html?: string;
  to: { address: string }[];
  date: string;
}

/** One header of a mail as it was sent (read from its source: the parsed list reshapes List-* headers). */
export async function header(mail: Mail, name: string): Promise<string | undefined> {
  const source = await (await fetch(`${mailApi()}/api/email/${mail.id}/source`)).text();
  const head = source.split(/\r?\n\r?\n/)[0]!.replace(/\r?\n[ \t]+/g, " ");
  const line = head.split(/\r?\n/).find((l) => l.toLowerCase().startsWith(`${name.toLowerCase()}:`));
  return line?.slice(name.length + 1).trim();
}

export function mailApi(): string {
  const url = process.env.LASHWRIGHT_MAIL_API;
  if (!url) throw new Error("LASHWRIGHT_MAIL_API is not set: run through npm test");
  return url;
}

export async function inbox(address: string): Promise<Mail[]> {
  const all = (await (await fetch(`${mailApi()}/api/email`)).json()) as Mail[];
  return all.filter((m) => m.to.some((t) => t.address.toLowerCase() === address.toLowerCase()));
}

/** Wait for a message to an address whose subject matches, and return it. */
export async function waitForMail(address: string, subject: RegExp, ms = 15_000): Promise<Mail> {
  const t0 = Date.now();
  for (;;) {
    const found = (await inbox(address)).filter((m) => subject.test(m.subject)).at(-1);
    if (found) return found;
    if (Date.now() - t0 > ms) throw new Error(`no mail to ${address} matching ${subject}`);
    await new Promise((r) => setTimeout(r, 200));
  }
}

export function linkToken(mail: Mail, path: string): string {
  const m = new RegExp(`${path.replace(/\//g, "\\/")}\\?token=([A-Za-z0-9_%-]+)`).exec(mail.text);
  if (!m) throw new Error(`no ${path} link in: ${mail.text}`);
  return decodeURIComponent(m[1]!);
}
