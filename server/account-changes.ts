import "server-only";
import { transaction, type Tx } from "@/db/connection";
import { retryConflicts } from "@/db/retry";
import { onWritePath } from "@/db/write-path";
import { stopNotices } from "@/db/queries/notices";
import * as q from "@/db/queries/users";
import type { UserRow } from "@/db/schema";

/**
 * The one service that changes an account's own rows (users and their one-time tokens) outside the
 * account's deletion and import: sign-up, links, passwords, settings, sessions. Most callers are
 * signed out (a sign-up, a reset link), so there is no write context to take: each change is one
 * transaction of its own here, retried when it lost a write conflict (db/retry.ts), and a change of
 * several rows (a new password: the hash, the pending links, the sessions) is all or nothing. A
 * named write service (db/write-path.ts): its writes are the write path's.
 */
const change = <T>(fn: (tx: Tx) => Promise<T>) =>
  retryConflicts(() => onWritePath("account changes", () => transaction(fn)));

export const newAccount = (input: { email: string; name: string; passwordHash: string }) =>
  change((tx) => q.createUser(tx, input));

/** A one-time token for a link in an e-mail; answers the raw token (only its hash is stored). */
export const issueToken = (userId: string, purpose: q.TokenPurpose, ttlMinutes: number) =>
  change((tx) => q.createAuthToken(tx, userId, purpose, ttlMinutes));

/** Use a token once (db/queries/users.ts consumeAuthToken says how). */
export const spendToken = (raw: string, purpose: q.TokenPurpose, opts: { onlyFor?: string } = {}) =>
  change((tx) => q.consumeAuthToken(tx, raw, purpose, opts));

export const changeSettings = (
  userId: string,
  patch: Partial<Pick<UserRow, "name" | "displayUnit" | "noticesByEmail">>,
) => change((tx) => q.updateUser(tx, userId, patch));

export const markAddressProved = (userId: string) =>
  change((tx) => q.updateUser(tx, userId, { emailVerifiedAt: new Date() }));

/**
 * A password set (a reset), or removed (null: one chosen before the address was proved), proves the
 * address, voids every link still pending and ends every session, in one transaction.
 */
export const replacePassword = (userId: string, passwordHash: string | null) =>
  change(async (tx) => {
    await q.updateUser(tx, userId, { passwordHash, emailVerifiedAt: new Date() });
    await q.voidAuthTokens(tx, userId);
    await q.bumpSessionGeneration(tx, userId);
  });

/**
 * An unsubscribe link (server/notices.ts): the account's notices turned off, as its settings page
 * would, or, for an address with no account, a stop on the address.
 */
export const stopMail = (email: string) => change((tx) => stopNotices(tx, email));

/** Ends every session of the account; with `from`, only if the generation is still that one. */
export const endSessions = (userId: string, from?: number) => change((tx) => q.bumpSessionGeneration(tx, userId, from));

/** A stronger hash of the same password, only if the checked one is still the account's. */
export const upgradeHash = (userId: string, checked: string, stronger: string) =>
  change((tx) => q.upgradePasswordHash(tx, userId, checked, stronger));
