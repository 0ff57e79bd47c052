import "server-only";
import { env } from "@/lib/env";
import { listComments, mentorsOfClub, usersByIds } from "@/db/queries/clubs";
import { getEngineRow } from "@/db/queries/garage";
import { queueNotices } from "./notices";

/**
 * Review notices: review requested (to the club's mentors), new comment (to the other party),
 * verdict (to the mechanic). Each respects the recipient's e-mail setting and goes through the queue.
 */
const checkLink = (checkId: string) => `${env().NEXTAUTH_URL}/check?id=${checkId}`;

type Recipient = { id: string; email: string; name: string; noticesByEmail: boolean };
const wanted = (rs: Recipient[], except: string) => rs.filter((r) => r.noticesByEmail && r.id !== except);

export async function noticeReviewRequested(check: { id: string; engineId: string; ownerId: string }, clubId: string, ownerName: string) {
  const engine = await getEngineRow(check.engineId);
  const to = wanted(await mentorsOfClub(clubId), check.ownerId);
  await queueNotices(
    to.map((m) => ({
      toEmail: m.email,
      toUserId: m.id,
      kind: "review-requested",
      subject: `${ownerName} asks for a review: ${engine?.name ?? "a check"}`,
      body: `${ownerName} has shared a valve check with your club and would like a mentor to look it over before the engine is closed up.\n\n${checkLink(check.id)}`,
    })),
  );
}

export async function noticeComment(check: { id: string; ownerId: string }, authorId: string, authorName: string, body: string, mentorIds: string[]) {
  // the other party: a comment by the owner goes to the mentors who have taken part; a mentor's to the owner
  const recipients = authorId === check.ownerId ? await usersByIds(mentorIds) : await usersByIds([check.ownerId]);
  await queueNotices(
    wanted(recipients, authorId).map((r) => ({
      toEmail: r.email,
      toUserId: r.id,
      kind: "comment",
      subject: `New comment from ${authorName}`,
      body: `${authorName} wrote:\n\n${body.slice(0, 1000)}\n\n${checkLink(check.id)}`,
    })),
  );
}

/** After a comment is stored, by the REST route or a sync push: tell the other party. */
export async function noticeNewComment(check: { id: string; ownerId: string }, author: { id: string; name: string }, body: string) {
  const mentorIds = [...new Set((await listComments(check.id)).map((c) => c.authorId).filter((id) => id !== check.ownerId))];
  await noticeComment(check, author.id, author.name, body, mentorIds);
}

const VERDICT_WORDS = { "close-up": "fine to close up", "measure-again": "measure again", "stop-and-ask": "stop and ask" } as const;

export async function noticeVerdict(check: { id: string; ownerId: string }, mentorName: string, verdict: keyof typeof VERDICT_WORDS) {
  const to = wanted(await usersByIds([check.ownerId]), "");
  await queueNotices(
    to.map((r) => ({
      toEmail: r.email,
      toUserId: r.id,
      kind: "verdict",
      subject: `Review verdict: ${VERDICT_WORDS[verdict]}`,
      body: `${mentorName} has reviewed your check: ${VERDICT_WORDS[verdict]}.\n\n${checkLink(check.id)}`,
    })),
  );
}
