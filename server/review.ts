import "server-only";
import { env } from "@/lib/env";
import { VERDICTS, type Verdict } from "@/lib/check/verdicts";
import { mentorsOfClub } from "@/db/queries/clubs";
import { commentersOf } from "@/db/queries/notices";
import { checkTitleRow, getEngineRow } from "@/db/queries/garage";
import { db } from "@/db/connection";
import { noticeEach, noticeTo, shared } from "./notices";

/**
 * Review notices: review requested (to the club's mentors), new comment (to the other party),
 * verdict (to the mechanic). Each respects the recipient's e-mail setting and goes through the queue.
 */
/**
 * Each notice opens the page its reader works on: a mentor the read-only review (the check is not
 * on their phone), the owner the comments and verdict of their own check. The address carries the
 * whole query, so sign-in can bring the reader back to it.
 */
const reviewLink = (checkId: string, part?: "comments" | "verdict") =>
  `${env().NEXTAUTH_URL}/review?id=${checkId}${part ? `#${part}` : ""}`;

/**
 * Which engine and which check a notice is about ("Bench six, check at 23,456 km"), so a mail about a
 * comment, a verdict or a loan says what it concerns before it is opened. Read once per batch.
 */
export function checkTitle(checkId: string | null | undefined): Promise<string | null> {
  if (!checkId) return Promise.resolve(null);
  return shared(`title:${checkId}`, async () => {
    const r = await checkTitleRow(db(), checkId);
    return r ? `${r.name}, check at ${r.odometer.toLocaleString("en")} ${r.unit}` : null;
  });
}

export async function noticeReviewRequested(
  check: { id: string; engineId: string; ownerId: string },
  clubId: string,
  ownerName: string,
) {
  const engine = await getEngineRow(db(), check.engineId);
  await noticeEach(await mentorsOfClub(clubId), check.ownerId, {
    kind: "review-requested",
    aboutCheckId: check.id,
    subject: `${ownerName} asks for a review: ${engine?.name ?? "a check"}`,
    body: `${ownerName} has shared a valve check with your club and would like a mentor to look it over before the engine is closed up.\n\n${reviewLink(check.id)}`,
  });
}

export async function noticeComment(
  check: { id: string; ownerId: string },
  authorId: string,
  authorName: string,
  body: string,
  mentorIds: string[],
) {
  // the other party: a comment by the owner goes to the mentors who have taken part; a mentor's to the owner
  const title = (await checkTitle(check.id)) ?? "a check";
  await noticeTo(authorId === check.ownerId ? mentorIds : [check.ownerId], authorId, {
    kind: "comment",
    aboutCheckId: check.id,
    subject: `New comment from ${authorName} on ${title}`,
    body: `${authorName} wrote about ${title}:\n\n${body.slice(0, 1000)}\n\n${reviewLink(check.id, "comments")}`,
  });
}

/**
 * After a comment is stored, by the REST route or a sync push: tell the other party. Who has taken
 * part is read once per push (not once per comment: 500 comments each re-reading the thread made a
 * push grow with the square of its size), as distinct authors, not every comment.
 */
export async function noticeNewComment(
  check: { id: string; ownerId: string },
  author: { id: string; name: string },
  body: string,
) {
  const mentorIds =
    author.id === check.ownerId
      ? await shared(`commenters:${check.id}`, () => commentersOf(check.id, check.ownerId))
      : [];
  await noticeComment(check, author.id, author.name, body, mentorIds);
}

export async function noticeVerdict(check: { id: string; ownerId: string }, mentorName: string, verdict: Verdict) {
  const words = VERDICTS[verdict].word.toLowerCase();
  const title = (await checkTitle(check.id)) ?? "your check";
  await noticeTo([check.ownerId], "", {
    kind: "verdict",
    aboutCheckId: check.id,
    subject: `Review verdict: ${words} (${title})`,
    body: `${mentorName} has reviewed ${title}: ${words}.\n\n${reviewLink(check.id, "verdict")}`,
  });
}
