import "server-only";
import { phase } from "./timing";
import type { NextAuthOptions } from "next-auth";
import { decode } from "next-auth/jwt";
import Credentials from "next-auth/providers/credentials";
import { env } from "@/lib/env";
import { emailSchema, tokenSchema } from "@/lib/schemas/account";
import { domainErrorOf } from "@/lib/errors";
import { isTransientDbError } from "@/db/errors";
import { dummyHash, hashRefusals, verifyPassword } from "./password";
import {
  getCredentialsByEmail,
  getPublicUser,
  getSessionGeneration,
  getSessionUser,
  type PublicUser,
} from "@/db/queries/users";
import { clientAddress, signInThrottled } from "./throttle";
import { passwordAccepted } from "./sign-in";
import { rememberDevice } from "./device-cookie";
import { proveAddress } from "./account";
import { endSessions, spendToken } from "./account-changes";

export type SessionUser = PublicUser;

/** Sign-in errors the sign-in page knows how to explain (next-auth passes the message through). */
export const SIGN_IN_ERRORS = { throttled: "Throttled", signedInAsOther: "SignedInAsOther", busy: "Busy" } as const;

/**
 * A failure of the moment while a password is checked (no database connection free in a burst of
 * sign-ins, a node between cluster views) is "busy", like a full hashing queue: the sign-in route
 * answers 503 with Retry-After and gives the counted tries back, and the phone tries again. Without
 * this, next-auth turned the thrown error into a refusal whose text was the failed query.
 */
function busyIfMomentary(e: unknown): unknown {
  const d = domainErrorOf(e);
  const seen = hashRefusals.getStore();
  if (!seen || !(d?.kind === "overloaded" || (!d && isTransientDbError(e)))) return e;
  seen.retryAfterSeconds ??= d?.extra.retryAfterSeconds ?? 1;
  return new Error(SIGN_IN_ERRORS.busy);
}

/** next-auth's answer to a cookie minted under an older session generation (thrown, so it clears it). */
const SESSION_REVOKED = "SessionRevoked";

const SESSION_COOKIE = { secure: "__Secure-next-auth.session-token", plain: "next-auth.session-token" } as const;
/**
 * The one session cookie name: behind HTTPS only the __Secure- one, which a browser accepts only
 * over HTTPS from this host, so a cookie planted over plain HTTP or by a sibling host is never read
 * (OWASP ASVS 5.0 V7 Session Management).
 */
export const sessionCookieName = () =>
  env().NEXTAUTH_URL.startsWith("https:") ? SESSION_COOKIE.secure : SESSION_COOKIE.plain;

/**
 * The one auth configuration. Sessions are signed JWTs carrying only the user id and a session
 * generation; roles are looked up per request, so a removed mentor loses access at once, and
 * signing out raises the generation so the old token stops working everywhere.
 */
export const authOptions: NextAuthOptions = {
  secret:
    env().NEXTAUTH_SECRET ??
    (env().NODE_ENV === "production" ? undefined : "lashwright-development-secret-not-for-production"),
  session: { strategy: "jwt", maxAge: 30 * 24 * 60 * 60 },
  pages: { signIn: "/sign-in", error: "/sign-in" },
  providers: [
    Credentials({
      id: "password",
      name: "E-mail and password",
      credentials: { email: { type: "email" }, password: { type: "password" } },
      async authorize(credentials, req) {
        const email = emailSchema.safeParse(credentials?.email);
        const password = typeof credentials?.password === "string" ? credentials.password : "";
        if (!email.success || password.length === 0 || password.length > 256) return null;
        // counted before the password is checked, so a burst sent at once gets no more tries
        const address = clientAddress(req?.headers as Record<string, string> | undefined);
        try {
          if (await signInThrottled(email.data, address)) throw new Error(SIGN_IN_ERRORS.throttled);
          const u = await getCredentialsByEmail(email.data);
          const ok = await verifyPassword(password, u?.passwordHash ?? (await dummy()));
          // An address not yet confirmed answers like a wrong password: a sign-up followed by a sign-in
          // with the same password must not tell a new address from one that has an account (OWASP ASVS
          // 5.0 V6 Authentication: no account enumeration). The sign-in page's one message covers both.
          if (!u || !ok || !u.emailVerifiedAt) return null;
          await passwordAccepted(u, password, address);
          return { id: u.id, email: u.email, name: u.name, generation: u.sessionGeneration };
        } catch (e) {
          throw busyIfMomentary(e);
        }
      },
    }),
    Credentials({
      id: "email-link",
      name: "E-mail link",
      credentials: { token: { type: "text" } },
      async authorize(credentials, req) {
        const token = tokenSchema.safeParse(credentials?.token);
        if (!token.success) return null;
        // A link must not swap the account under someone signed in here: a link for the attacker's
        // own account sent to a victim would otherwise log the victim's phone into it (login CSRF).
        const cookie = (req?.headers as Record<string, string> | undefined)?.cookie ?? "";
        const signedIn = await userFromSessionToken(readCookie(cookie, sessionCookieName()));
        const userId = await spendToken(token.data, "signin", { onlyFor: signedIn?.id });
        if (userId === "other") throw new Error(SIGN_IN_ERRORS.signedInAsOther);
        if (!userId) return null;
        // following a link from the inbox proves the address (and drops a password set before that)
        await proveAddress(userId);
        const u = await getPublicUser(userId);
        const generation = await getSessionGeneration(userId);
        if (!u || generation === undefined) return null;
        await rememberDevice(u.email);
        return { id: u.id, email: u.email, name: u.name, generation };
      },
    }),
  ],
  callbacks: {
    async jwt({ token, user }) {
      if (user) {
        token.uid = user.id;
        token.gen = (user as { generation?: number }).generation ?? 0;
        return token;
      }
      // next-auth's own readings of the cookie (its session answer, an update) check the generation
      // as currentUser() does: a revoked cookie shows no name (OWASP ASVS 5.0 V7 Session Management)
      if (typeof token.uid !== "string" || (await getSessionGeneration(token.uid)) !== token.gen)
        throw new Error(SESSION_REVOKED);
      return token;
    },
    async session({ session, token }) {
      if (session.user) (session.user as { id?: string }).id = token.uid as string;
      return session;
    },
  },
  events: {
    async signOut({ token }) {
      // only a session still current ends the others: a revoked cookie (a lost phone after a new
      // password) must not sign its owner out everywhere whenever it likes
      if (typeof token?.uid === "string" && typeof token.gen === "number") await endSessions(token.uid, token.gen);
    },
  },
};

/**
 * A session cookie read against the database: a user; nobody (no cookie, not ours, expired); or
 * revoked: signed by us but minted under an older session generation (a sign-out everywhere, a new
 * password) or for an account that is gone. A phone told "revoked" wipes its local copy.
 */
export type SessionCheck = { user: SessionUser; revoked: false } | { user: null; revoked: boolean };

/** The request's session, checked against the database on every call. */
export async function currentSession(): Promise<SessionCheck> {
  const { cookies } = await import("next/headers");
  const jar = await cookies();
  return sessionFromToken(jar.get(sessionCookieName())?.value);
}

/** The signed-in user, checked against the database on every call (deleted or signed out: null). */
export async function currentUser(): Promise<SessionUser | null> {
  return (await currentSession()).user;
}

function readCookie(header: string, name: string): string | undefined {
  for (const part of header.split(";")) {
    const i = part.indexOf("=");
    if (i > 0 && part.slice(0, i).trim() === name) return part.slice(i + 1).trim();
  }
  return undefined;
}

async function userFromSessionToken(raw: string | undefined): Promise<SessionUser | null> {
  return (await sessionFromToken(raw)).user;
}

async function sessionFromToken(raw: string | undefined): Promise<SessionCheck> {
  const secret = authOptions.secret;
  if (!raw || !secret) return { user: null, revoked: false };
  const t = await decode({ token: raw, secret }).catch(() => null);
  phase("session token");
  if (typeof t?.uid !== "string" || typeof t.gen !== "number") return { user: null, revoked: false };
  const u = await getSessionUser(t.uid);
  phase("session user");
  if (!u || u.generation !== t.gen) return { user: null, revoked: true };
  const { generation: _generation, ...user } = u;
  void _generation;
  return { user, revoked: false };
}

/** A real hash to compare against when the account does not exist, so timing tells nothing. */
function dummy(): Promise<string> {
  return dummyHash();
}
