import "server-only";
import { and, eq, gt, isNull, sql } from "drizzle-orm";
import { createHash, randomBytes } from "node:crypto";
import { db, type Executor, type Tx } from "../connection";
import { authTokens, users, type UserRow } from "../schema";

/** The columns any caller may see of a user: never the password hash. */
export const publicUserColumns = {
  id: users.id,
  email: users.email,
  name: users.name,
  displayUnit: users.displayUnit,
  noticesByEmail: users.noticesByEmail,
} as const;
export type PublicUser = Pick<UserRow, "id" | "email" | "name" | "displayUnit" | "noticesByEmail">;

export async function getPublicUser(id: string): Promise<PublicUser | undefined> {
  const [u] = await db().select(publicUserColumns).from(users).where(eq(users.id, id)).limit(1);
  return u;
}

const credentialColumns = {
  id: users.id,
  email: users.email,
  name: users.name,
  passwordHash: users.passwordHash,
  emailVerifiedAt: users.emailVerifiedAt,
  sessionGeneration: users.sessionGeneration,
};

/** For the sign-in check and account flows only: includes the hash, so it never leaves server/. */
export async function getCredentialsByEmail(email: string) {
  const [u] = await db().select(credentialColumns).from(users).where(eq(users.email, email)).limit(1);
  return u;
}

export async function getCredentialsById(id: string) {
  const [u] = await db().select(credentialColumns).from(users).where(eq(users.id, id)).limit(1);
  return u;
}

/** The public columns and the session generation in one read: every signed-in request makes it. */
export async function getSessionUser(id: string): Promise<(PublicUser & { generation: number }) | undefined> {
  const [u] = await db()
    .select({ ...publicUserColumns, generation: users.sessionGeneration })
    .from(users)
    .where(eq(users.id, id))
    .limit(1);
  return u;
}

export async function getSessionGeneration(id: string): Promise<number | undefined> {
  const [u] = await db().select({ g: users.sessionGeneration }).from(users).where(eq(users.id, id)).limit(1);
  return u?.g;
}

/** Ends every session of the account; with `from`, only if the generation is still that one. */
export async function bumpSessionGeneration(tx: Tx, id: string, from?: number): Promise<void> {
  const where = from === undefined ? eq(users.id, id) : and(eq(users.id, id), eq(users.sessionGeneration, from));
  await tx
    .update(users)
    .set({ sessionGeneration: sql`${users.sessionGeneration} + 1` })
    .where(where);
}

export async function createUser(
  tx: Tx,
  input: { email: string; name: string; passwordHash: string },
): Promise<string> {
  const id = crypto.randomUUID();
  await tx.insert(users).values({ id, ...input });
  return id;
}

export async function updateUser(
  tx: Tx,
  id: string,
  patch: Partial<Pick<UserRow, "name" | "displayUnit" | "noticesByEmail" | "passwordHash" | "emailVerifiedAt">>,
) {
  await tx.update(users).set(patch).where(eq(users.id, id));
}

export type TokenPurpose = "verify" | "reset" | "signin" | "delete";
const hashToken = (raw: string) => createHash("sha256").update(raw).digest("hex");

/** A one-time token for a link in an e-mail; only its hash is stored. */
export async function createAuthToken(
  tx: Tx,
  userId: string,
  purpose: TokenPurpose,
  ttlMinutes: number,
): Promise<string> {
  const raw = randomBytes(32).toString("base64url");
  await tx
    .insert(authTokens)
    .values({ userId, purpose, tokenHash: hashToken(raw), expiresAt: new Date(Date.now() + ttlMinutes * 60_000) });
  return raw;
}

/**
 * Use a token once: the update that marks it used is the check, so two racing uses cannot both win.
 * With `onlyFor`, a token of another user is left unused and answers "other".
 */
export async function consumeAuthToken(
  tx: Tx,
  raw: string,
  purpose: TokenPurpose,
  opts: { onlyFor?: string } = {},
): Promise<string | "other" | null> {
  const tokenHash = hashToken(raw);
  const where = and(
    eq(authTokens.tokenHash, tokenHash),
    eq(authTokens.purpose, purpose),
    isNull(authTokens.usedAt),
    gt(authTokens.expiresAt, new Date()),
  );
  if (opts.onlyFor) {
    const owner = await tokenOwner(tx, raw, purpose);
    if (owner && owner !== opts.onlyFor) return "other";
  }
  const [res] = await tx.update(authTokens).set({ usedAt: new Date() }).where(where);
  if (res.affectedRows !== 1) return null;
  const [row] = await tx
    .select({ userId: authTokens.userId })
    .from(authTokens)
    .where(eq(authTokens.tokenHash, tokenHash))
    .limit(1);
  return row?.userId ?? null;
}

/**
 * Every link of the account not yet used stops working: a link asked for before a new password
 * (or before a password was removed) must not outlive it, or whoever read the old mail keeps a way in
 * (OWASP ASVS 5.0 V6 Authentication: a password change ends pending recovery).
 */
export async function voidAuthTokens(tx: Tx, userId: string): Promise<void> {
  await tx.delete(authTokens).where(and(eq(authTokens.userId, userId), isNull(authTokens.usedAt)));
}

/** Whose a usable token is, without using it (the sign-in link page names the account first). */
export async function tokenOwner(ex: Executor, raw: string, purpose: TokenPurpose): Promise<string | null> {
  const where = and(
    eq(authTokens.tokenHash, hashToken(raw)),
    eq(authTokens.purpose, purpose),
    isNull(authTokens.usedAt),
    gt(authTokens.expiresAt, new Date()),
  );
  const [row] = await ex.select({ userId: authTokens.userId }).from(authTokens).where(where).limit(1);
  return row?.userId ?? null;
}

export { hashToken };

/**
 * Replace a password hash by a stronger one of the same password (at sign-in), only if it is still
 * the hash that was checked: a password changed meanwhile is never overwritten by the old one.
 */
export async function upgradePasswordHash(tx: Tx, id: string, checked: string, stronger: string): Promise<void> {
  await tx
    .update(users)
    .set({ passwordHash: stronger })
    .where(and(eq(users.id, id), eq(users.passwordHash, checked)));
}
