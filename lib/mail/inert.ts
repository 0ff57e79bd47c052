/**
 * Text someone chose (a club's name, a display name) as it appears in a mail to someone who has not
 * joined: one line, quoted, and unable to become a link in any mail client. Mail clients turn
 * anything that looks like an address into a link on their own (a scheme, or just "name.tld"), so
 * escaping is not enough: every dot that joins two words is written "[.]" and every scheme's colon
 * "[:]" (the usual way to disarm an address in a mail: "evil[.]example", "https[:]//..."), after
 * folding look-alike dots and colons (full-width, ideographic) into the plain ones that IDNA would
 * read as dots. The HTML part escapes it as well (lib/mail/html.ts) and links only the app's own
 * addresses. OWASP ASVS 5.0 V1 Encoding and Sanitization: encode for the place the text lands.
 */
const DOTS = /[.\u3002\uFF0E\uFF61\u2024\uFE52]/g;

export function inert(text: string, max = 80): string {
  let s = text
    .normalize("NFKC")
    // control characters, line breaks included: one line, so it cannot pose as the mail's own text
    .replace(/[\p{Cc}\p{Cf}\u2028\u2029]+/gu, " ")
    .replace(/\s+/g, " ")
    .trim();
  if (s.length > max) s = `${s.slice(0, max - 1)}…`;
  s = s
    // a dot between two characters that are not spaces: a host name or an address
    .replace(new RegExp(`${DOTS.source}(?=\\S)`, "g"), "[.]")
    .replace(/:(?=\/)/g, "[:]");
  return `“${s}”`;
}
