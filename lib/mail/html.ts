/**
 * The HTML part of an e-mail, made from its plain text so the two never say different things: the
 * text escaped, blank lines as paragraph breaks, and the app's own addresses as real links (many mail
 * clients do not make a bare address in plain text clickable). Only addresses on `linkOrigin` (the
 * app's own) become links: whatever else the text carries (a comment, a name someone typed) stays
 * text, so a mail from Lashwright never hands a reader a link to somewhere else. Pure, for the mailer.
 */
const ESCAPES: Record<string, string> = { "&": "&amp;", "<": "&lt;", ">": "&gt;", '"': "&quot;", "'": "&#39;" };
const escape = (s: string) => s.replace(/[&<>"']/g, (c) => ESCAPES[c]!);

// an address ends at white space; a full stop or comma right after it belongs to the sentence
const URL_RE = /https?:\/\/[^\s<>"']+[^\s<>"'.,;:!?)]/g;

function sameOrigin(url: string, origin: string): boolean {
  try {
    return new URL(url).origin === origin;
  } catch {
    return false;
  }
}

function linked(line: string, origin: string): string {
  let out = "";
  let at = 0;
  for (const m of line.matchAll(URL_RE)) {
    if (!sameOrigin(m[0], origin)) continue;
    out += escape(line.slice(at, m.index));
    const href = escape(m[0]);
    out += `<a href="${href}" style="color:#8a4b00;font-weight:bold">${href}</a>`;
    at = m.index + m[0].length;
  }
  return out + escape(line.slice(at));
}

export function mailHtml(subject: string, text: string, opts: { linkOrigin: string }): string {
  const origin = new URL(opts.linkOrigin).origin;
  const paragraphs = text
    .trim()
    .split(/\n\s*\n/)
    .map(
      (p) =>
        `<p style="margin:0 0 1em">${p
          .split("\n")
          .map((l) => linked(l, origin))
          .join("<br>")}</p>`,
    )
    .join("\n");
  return `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width"><title>${escape(subject)}</title></head>
<body style="font-family:sans-serif;font-size:16px;line-height:1.5;color:#1d1f22;max-width:36em;margin:0 auto;padding:16px">
${paragraphs}
</body></html>`;
}
