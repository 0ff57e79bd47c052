/**
 * Notices to one person gathered into one mail: the subjects joined while they fit, the texts one
 * after another, the rest counted. Pure, for the server's notice queue.
 */
export type NoticeText = { subject: string; body: string };

const SUBJECT_MAX = 150;
const BODIES_MAX = 25;
const RULE = "* * *";

export function digestSubject(subjects: string[]): string {
  const unique = [...new Set(subjects)];
  let out = "";
  for (let i = 0; i < unique.length; i++) {
    const next = out ? `${out}; ${unique[i]}` : unique[i]!;
    const rest = unique.length - i - 1;
    if (next.length + (rest ? ` and ${rest} more`.length : 0) > SUBJECT_MAX && out)
      return `${out} and ${unique.length - i} more`;
    out = next;
  }
  return out;
}

/** One mail from many notices (in the order they were made); more than 25 are counted, not shown. */
export function digest(items: NoticeText[], moreAt: string): NoticeText {
  if (items.length === 1) return items[0]!;
  const shown = items.slice(0, BODIES_MAX);
  const more = items.length - shown.length;
  const body = [
    `${items.length} notices from Lashwright:`,
    ...shown.map((n) => `${n.subject}\n\n${n.body}`),
    ...(more ? [`… and ${more} more: ${moreAt}`] : []),
  ].join(`\n\n${RULE}\n\n`);
  return { subject: digestSubject(items.map((n) => n.subject)), body };
}

/** Several notices of one kind about one thing, made in one go (a push), as one. */
export function merge(items: NoticeText[]): NoticeText {
  if (items.length === 1) return items[0]!;
  const shown = items.slice(0, BODIES_MAX);
  const more = items.length - shown.length;
  return {
    subject: digestSubject(items.map((n) => n.subject)),
    body: [...shown.map((n) => n.body), ...(more ? [`… and ${more} more.`] : [])].join(`\n\n${RULE}\n\n`),
  };
}
