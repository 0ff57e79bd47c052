import "server-only";
import { eq } from "drizzle-orm";
import { env } from "@/lib/env";
import {
  blockerText,
  type DeleteAccountInput,
  type DeletionBlocker,
  type DeletionPreview,
} from "@/lib/account/deletion";
import { DomainError, domainErrorOf, invalid, notFound, refused, tooMany } from "@/lib/errors";
import { db, type Executor } from "@/db/connection";
import { users } from "@/db/schema";
import { getCredentialsById } from "@/db/queries/users";
import { issueToken } from "./account-changes";
import { setRoles } from "@/db/queries/clubs";
import * as q from "@/db/queries/account-deletion";
import { budget } from "./budgets";
import { queueNotices } from "./notices";
import { verifyPassword } from "./password";
import { mailThrottled } from "./throttle";
import { kickObjectDeletions } from "./object-deletions";
import { write, type WriteCtx } from "./write";
import { writeService } from "@/db/write-path";
import type { SessionUser } from "./auth";

/**
 * Deleting an account (GDPR article 17), through the one write path: one transaction ends every
 * membership the way leaving a club does, anonymises the comments left on other members' checks,
 * queues the photos for the store's sweep and deletes every row that is the account's or names
 * it; the users row goes last, and with it every session (a cookie for an account that is gone is
 * answered session_revoked, and each phone wipes its copy at its next contact).
 */

/**
 * Wrong passwords at the deletion, per account: 5 in 15 minutes, the size of the sign-in budget.
 * It is reached only from a signed-in session, so it guards against a phone left unlocked, not a
 * spray; a right password resets it, so its owner is held back at most 15 minutes.
 */
const deleteTries = budget({ name: "delete:account", points: 5, seconds: 15 * 60 });

/** How long a mailed deletion link works. */
const LINK_MINUTES = 30;

async function blockersAndClubs(ex: Executor, userId: string, locking: boolean) {
  const blockers: DeletionBlocker[] = [];
  const clubs: { id: string; name: string; solo: boolean }[] = [];
  for (const c of await q.clubsOf(ex, userId)) {
    const head = await q.clubHeadcount(ex, c.id, locking && c.admin);
    if (c.admin && head.admins === 1 && head.members > 1)
      blockers.push({ kind: "last-admin", clubId: c.id, clubName: c.name, members: head.members });
    clubs.push({ id: c.id, name: c.name, solo: head.members === 1 });
  }
  blockers.push(...(await q.openLoans(ex, userId, locking)));
  return { blockers, clubs };
}

export async function deletionPreview(user: SessionUser): Promise<DeletionPreview> {
  const cred = await getCredentialsById(user.id);
  if (!cred) throw notFound("account");
  const { blockers, clubs } = await blockersAndClubs(db(), user.id, false);
  return {
    email: cred.email,
    hasPassword: !!cred.passwordHash,
    ...(await q.accountCounts(db(), user.id)),
    clubs: clubs.filter((c) => !c.solo).map(({ id, name }) => ({ id, name })),
    soloClubs: clubs.filter((c) => c.solo).map(({ id, name }) => ({ id, name })),
    blockers,
  };
}

/**
 * For an account without a password: a single-use link, mailed to its address, stands for it (the
 * mailbox proves the owner, as the sign-in link does). Under the address's mail budget.
 */
export async function requestDeleteLink(user: SessionUser, address: string | null): Promise<void> {
  const cred = await getCredentialsById(user.id);
  if (!cred) throw notFound("account");
  if (cred.passwordHash) throw refused("This account has a password: enter it to delete the account.");
  const spent = await mailThrottled(cred.email, address);
  if (spent)
    throw tooMany(
      `A link was sent a short while ago. Check the inbox, or ask again in ${Math.ceil(spent.retryAfterSeconds / 60)} minutes.`,
      spent.retryAfterSeconds,
    );
  const token = await issueToken(user.id, "delete", LINK_MINUTES);
  await queueNotices([
    {
      toEmail: cred.email,
      toUserId: user.id,
      kind: "delete-link",
      subject: "Confirm deleting your Lashwright account",
      body: `You asked to delete your Lashwright account. To see what will be removed and confirm, open this link on the phone you are signed in on:\n${env().NEXTAUTH_URL}/account?delete=${encodeURIComponent(token)}\n\nIt works once, for ${LINK_MINUTES} minutes. Nothing is deleted until you confirm on that page. If you did not ask for this, ignore this message.`,
    },
  ]);
}

const badLink = () =>
  new DomainError("bad_request", "This link has expired or was already used: ask for a new one", { code: "bad_token" });

export async function deleteAccount(
  user: SessionUser,
  input: DeleteAccountInput,
): Promise<{ photos: number; commentsKept: number }> {
  const cred = await getCredentialsById(user.id);
  if (!cred) throw notFound("account");
  // counted before the password is checked, so a burst sent at once gets no more tries
  const spent = await deleteTries.take(user.id);
  if (!spent.ok)
    throw tooMany(
      `Too many tries. Wait ${Math.ceil(spent.retryAfterSeconds / 60)} minutes and try again.`,
      spent.retryAfterSeconds,
    );
  if (input.password !== undefined) {
    if (!cred.passwordHash)
      throw invalid("This account has no password: ask for a link by e-mail instead", {
        password: "this account has no password",
      });
    let ok: boolean;
    try {
      ok = await verifyPassword(input.password, cred.passwordHash);
    } catch (e) {
      // the hashing queue is full: no password was checked, so the try is given back
      if (domainErrorOf(e)?.kind === "overloaded") await deleteTries.refund(user.id).catch(() => undefined);
      throw e;
    }
    if (!ok)
      throw invalid("That is not this account's password: nothing was deleted", {
        password: "not this account's password",
      });
    await deleteTries.reset(user.id);
  } else if (cred.passwordHash) {
    // a password was set after the link was sent: the password is the proof now
    throw invalid("This account has a password now: enter it instead", { password: "enter the account's password" });
  }

  // a named write service (db/write-path.ts): what it writes is the write path's
  return write(
    user,
    writeService("account deletion", async (w: WriteCtx) => {
      if (input.token !== undefined && !(await q.consumeDeleteToken(w.tx, input.token, user.id))) throw badLink();
      // the account's row, locked: two deletions (two phones) are one after the other, the second finds nothing
      const [me] = await w.tx
        .select({ id: users.id, email: users.email })
        .from(users)
        .where(eq(users.id, user.id))
        .for("update");
      if (!me) throw notFound("account");
      const { blockers, clubs } = await blockersAndClubs(w.tx, user.id, true);
      if (blockers.length)
        throw new DomainError("refused", `Nothing was deleted. ${blockers.map(blockerText).join(" ")}`, {
          code: "deletion_blocked",
        });
      for (const c of clubs) {
        // a club of one goes with its only member; any other keeps its records and loses this member
        if (c.solo) await q.deleteClub(w.tx, c.id);
        else await setRoles(w.tx, c.id, user.id, [], user.id);
      }
      const commentsKept = await q.anonymiseComments(w.tx, user.id);
      const photos = await q.queueObjectDeletions(w.tx, user.id);
      await q.eraseRows(w.tx, user.id, me.email);
      w.later(async () => void kickObjectDeletions());
      return { photos, commentsKept };
    }),
  );
}
