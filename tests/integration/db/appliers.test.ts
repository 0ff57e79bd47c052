import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { and, eq, sql } from "drizzle-orm";
import { closeDb, db, transaction } from "@/db/connection";
import { authTokens, checks, comments, engines, memberships, readings, trayItems, users } from "@/db/schema";
import { setRoles, shareCheck } from "@/db/queries/clubs";
import { getPublicUser, type PublicUser } from "@/db/queries/users";
import { issueToken, newAccount, replacePassword, spendToken } from "@/server/account-changes";
import { nextVersion } from "@/db/versions";
import { DomainError } from "@/lib/errors";
import { parseMutation, type MutationArgs, type MutationName } from "@/lib/sync/mutations";
import { apply, applyRun } from "@/server/appliers";
import { acceptInvite, createClub, inviteToClub, removeMember, setMemberRoles } from "@/server/clubs";
import { write } from "@/server/write";
import { IDS, SHIPPED } from "@/tests/fixtures/shipped-outbox";

/**
 * The appliers and the access rules straight against MariaDB, without a build or HTTP: the part of
 * the integration suite `npm run test:fast` runs. Each case goes through `write()` and the one
 * applier table, as the sync push and the REST routes do, on a pool of one connection (a second
 * acquire inside a write would fail here, see connections.test.ts).
 */
beforeAll(() => {
  process.env.DB_POOL_SIZE = "1";
  process.env.DB_ACQUIRE_TIMEOUT_MS = "2000";
});
afterAll(() => closeDb());

const fixture = (name: string) => SHIPPED.find((m) => m.name === name)!;
/** A shipped mutation parsed as the server parses a push, with its ids swapped for fresh ones. */
function mutation<N extends MutationName>(
  name: N,
  ids: Record<string, string>,
  patch: Record<string, unknown> = {},
): MutationArgs<N> {
  let text = JSON.stringify(fixture(name).args);
  for (const [from, to] of Object.entries(ids)) text = text.split(from).join(to);
  const parsed = parseMutation(name, { ...JSON.parse(text), ...patch });
  if (!parsed.ok) throw new Error(`fixture ${name} does not parse: ${parsed.reason}`);
  return parsed.args as MutationArgs<N>;
}
const run = <N extends MutationName>(user: PublicUser, name: N, args: MutationArgs<N>) =>
  write(user, (w) => apply(w, name, args));

async function newUser(label: string): Promise<PublicUser> {
  const id = await newAccount({
    email: `${label}-${crypto.randomUUID()}@example.test`,
    name: label,
    passwordHash: "not-a-hash",
  });
  return (await getPublicUser(id))!;
}
/** An owner with one engine and one check on it, fresh ids each call so cases never share rows. */
async function ownerWithCheck() {
  const owner = await newUser("owner");
  const ids = { [IDS.engine]: crypto.randomUUID(), [IDS.check]: crypto.randomUUID() };
  await run(owner, "engine.put/2", mutation("engine.put/2", ids));
  await run(owner, "check.put/1", mutation("check.put/1", ids, { id: ids[IDS.check], engineId: ids[IDS.engine] }));
  return { owner, engineId: ids[IDS.engine]!, checkId: ids[IDS.check]!, ids };
}
const count = async (
  table: typeof engines | typeof checks | typeof readings | typeof trayItems | typeof comments,
  where: ReturnType<typeof eq>,
) =>
  Number(
    (
      await db()
        .select({ n: sql<number>`COUNT(*)` })
        .from(table)
        .where(where)
    )[0]!.n,
  );
/** How a write ended: applied, or the domain error's kind (anything else is a bug, shown as such). */
const outcome = (p: Promise<unknown>) =>
  p.then(
    () => "applied",
    (e: unknown) => (e instanceof DomainError ? e.kind : `not a domain error: ${String(e)}`),
  );

describe("appliers and access rules, against the database", () => {
  it("the owner's engine, check and reading are written; the same reading again changes no row", async () => {
    const { owner, checkId, ids } = await ownerWithCheck();
    const reading = mutation("reading.put/1", ids, { checkId });
    await run(owner, "reading.put/1", reading);
    await run(owner, "reading.put/1", reading);
    expect(await count(readings, eq(readings.checkId, checkId))).toBe(1);
  });

  it("a stranger's writes to someone else's engine or check answer 'no such' (404) and change nothing", async () => {
    const { engineId, checkId, ids } = await ownerWithCheck();
    const stranger = await newUser("stranger");
    const before = await db().select().from(engines).where(eq(engines.id, engineId));
    // renaming the engine, adding a check to it, a reading on its check: each as if it did not exist
    expect(await outcome(run(stranger, "engine.put/2", mutation("engine.put/2", ids, { name: "taken over" })))).toBe(
      "not_found",
    );
    expect(
      await outcome(run(stranger, "check.put/1", mutation("check.put/1", ids, { id: crypto.randomUUID(), engineId }))),
    ).toBe("not_found");
    expect(await outcome(run(stranger, "reading.put/1", mutation("reading.put/1", ids, { checkId })))).toBe(
      "not_found",
    );
    // a delete of someone else's record is answered like a delete of a missing one: nothing happens
    await run(stranger, "engine.delete/1", { id: engineId });
    await run(stranger, "check.delete/1", { id: checkId });
    expect(await db().select().from(engines).where(eq(engines.id, engineId))).toEqual(before);
    expect(await count(checks, eq(checks.id, checkId))).toBe(1);
    expect(await count(readings, eq(readings.checkId, checkId))).toBe(0);
  });

  it("a mentor of a club the check is shared with comments (once, however often sent) but may not change a reading", async () => {
    const { owner, checkId, ids } = await ownerWithCheck();
    const mentor = await newUser("mentor");
    const club = await write(owner, (w) => createClub(w, "Appliers club"));
    await transaction(async (tx) => {
      await setRoles(tx, club.id, mentor.id, ["mentor"], owner.id);
      await shareCheck(tx, await nextVersion(tx, owner.id), checkId, club.id, owner.id);
    });
    const comment = mutation(
      "comment.add/1",
      { ...ids, [IDS.comment]: crypto.randomUUID(), [IDS.commentValve]: crypto.randomUUID() },
      { checkId },
    );
    await run(mentor, "comment.add/1", comment);
    await run(mentor, "comment.add/1", comment);
    expect(await count(comments, and(eq(comments.checkId, checkId), eq(comments.authorId, mentor.id))!)).toBe(1);
    // a mentor reads the check but is not its owner: "forbidden" (403), not "no such"
    expect(await outcome(run(mentor, "reading.put/1", mutation("reading.put/1", ids, { checkId })))).toBe("forbidden");
    expect(await count(readings, eq(readings.checkId, checkId))).toBe(0);
  });

  it("a member of no club the check is shared with cannot comment on it (404, nothing written)", async () => {
    const { checkId, ids } = await ownerWithCheck();
    const outsider = await newUser("outsider");
    const comment = mutation("comment.add/1", { ...ids, [IDS.comment]: crypto.randomUUID() }, { checkId });
    expect(await outcome(run(outsider, "comment.add/1", comment))).toBe("not_found");
    expect(await count(comments, eq(comments.checkId, checkId))).toBe(0);
  });

  it("a refused mutation in a write rolls back what the same write did before it", async () => {
    const { engineId, ids } = await ownerWithCheck();
    const stranger = await newUser("stranger");
    const trayId = crypto.randomUUID();
    const refused = write(stranger, async (w) => {
      await apply(w, "tray.put/1", mutation("tray.put/1", { [IDS.tray]: trayId, [IDS.trayGone]: trayId }));
      await apply(w, "check.put/1", mutation("check.put/1", ids, { id: crypto.randomUUID(), engineId }));
    });
    expect(await outcome(refused)).toBe("not_found");
    expect(await count(trayItems, eq(trayItems.id, trayId))).toBe(0);
  });

  it("an unknown or inherited mutation name is refused, never called", async () => {
    const user = await newUser("caller");
    for (const name of ["constructor", "toString", "engine.put/99"]) {
      expect(await outcome(write(user, (w) => apply(w, name as MutationName, {} as never)))).toBe("invalid");
    }
  });

  it("a run of readings is one call of the table: batched per check, and refused whole when one check is not the caller's", async () => {
    const a = await ownerWithCheck();
    const second = crypto.randomUUID();
    await run(a.owner, "check.put/1", mutation("check.put/1", a.ids, { id: second, engineId: a.engineId }));
    const reading = (checkId: string, valve: string, feelerGo: number) => ({
      ...mutation("reading.put/1", a.ids, { checkId }),
      reading: { ...mutation("reading.put/1", a.ids).reading, valve, feelerGo, feelerNoGo: feelerGo + 0.02 },
    });
    // two checks interleaved; the same valve twice in one check: the later value wins
    await write(a.owner, (w) =>
      applyRun(w, "reading.put/1", [
        reading(a.checkId, "I1.1", 0.13),
        reading(second, "I1.1", 0.14),
        reading(a.checkId, "I1.1", 0.15),
        reading(a.checkId, "E1.1", 0.2),
      ]),
    );
    const rows = await db().select().from(readings).where(eq(readings.ownerId, a.owner.id));
    expect(rows.map((r) => [r.checkId === a.checkId ? "first" : "second", r.valve, r.feelerGo]).sort()).toEqual(
      [
        ["first", "E1.1", 0.2],
        ["first", "I1.1", 0.15],
        ["second", "I1.1", 0.14],
      ].sort(),
    );
    // someone else's check inside the run: the whole write is refused and none of it is kept
    const b = await ownerWithCheck();
    const refused = write(a.owner, (w) =>
      applyRun(w, "reading.put/1", [reading(a.checkId, "I2.1", 0.1), reading(b.checkId, "I2.1", 0.1)]),
    );
    expect(await outcome(refused)).toBe("not_found");
    expect(await count(readings, eq(readings.checkId, b.checkId))).toBe(0);
    expect(await count(readings, and(eq(readings.checkId, a.checkId), eq(readings.valve, "I2.1"))!)).toBe(0);
    expect(await outcome(write(a.owner, (w) => applyRun(w, "constructor" as MutationName, [])))).toBe("invalid");
  });

  it("clubs: an invitation is accepted once, by its addressee, while its sender is an admin; a club keeps an admin", async () => {
    const admin = await newUser("admin");
    const invitee = await newUser("invitee");
    const other = await newUser("other");
    const club = await write(admin, (w) => createClub(w, "Service club"));
    const roles = async (u: PublicUser) =>
      (
        await db()
          .select({ role: memberships.role })
          .from(memberships)
          .where(and(eq(memberships.clubId, club.id), eq(memberships.userId, u.id))!)
      )
        .map((r) => r.role)
        .sort();
    expect(await roles(admin)).toEqual(["admin", "mechanic"]);
    // only an admin invites
    expect(await outcome(write(invitee, (w) => inviteToClub(w, club.id, invitee.email, "mentor")))).toBe("not_found");
    const { invite } = await write(admin, (w) => inviteToClub(w, club.id, invitee.email, "mentor"));
    // someone else holding the link is answered as for a spent one, and joins nothing
    expect(await outcome(write(other, (w) => acceptInvite(w, invite.token)))).toBe("bad_request");
    expect(await roles(other)).toEqual([]);
    expect((await write(invitee, (w) => acceptInvite(w, invite.token))).clubId).toBe(club.id);
    expect(await roles(invitee)).toEqual(["mechanic", "mentor"]);
    expect(await outcome(write(invitee, (w) => acceptInvite(w, invite.token)))).toBe("bad_request");
    // an invitation speaks for an admin: once its sender is not one, it no longer works
    const second = await write(admin, (w) => inviteToClub(w, club.id, other.email, "mechanic"));
    await write(admin, (w) => setMemberRoles(w, club.id, invitee.id, ["admin"]));
    await write(invitee, (w) => setMemberRoles(w, club.id, admin.id, ["mechanic"]));
    expect(await outcome(write(other, (w) => acceptInvite(w, second.invite.token)))).toBe("bad_request");
    // the last admin can neither step down nor leave; a mechanic cannot change roles
    expect(await outcome(write(invitee, (w) => setMemberRoles(w, club.id, invitee.id, ["mentor"])))).toBe("conflict");
    expect(await outcome(write(invitee, (w) => removeMember(w, club.id, invitee.id)))).toBe("conflict");
    expect(await outcome(write(admin, (w) => setMemberRoles(w, club.id, admin.id, ["admin"])))).toBe("forbidden");
    expect(await roles(invitee)).toEqual(["admin"]);
    await write(admin, (w) => removeMember(w, club.id, admin.id));
    expect(await roles(admin)).toEqual([]);
  });

  it("accounts: a new password voids the links still pending and ends every session, together", async () => {
    const u = await newUser("account");
    const generation = async () =>
      (await db().select({ g: users.sessionGeneration }).from(users).where(eq(users.id, u.id)))[0]!.g;
    const before = await generation();
    const signIn = await issueToken(u.id, "signin", 15);
    await replacePassword(u.id, "another-hash");
    expect(await generation()).toBe(before + 1);
    expect(await spendToken(signIn, "signin")).toBeNull();
    expect(await db().select().from(authTokens).where(eq(authTokens.userId, u.id))).toEqual([]);
    const reset = await issueToken(u.id, "reset", 60);
    expect(await spendToken(reset, "reset")).toBe(u.id);
    expect(await spendToken(reset, "reset")).toBeNull();
  });
});
