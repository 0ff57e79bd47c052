import "server-only";
import { and, asc, eq, gt, gte, inArray, lte, or, sql } from "drizzle-orm";
import { db, type Tx } from "../connection";
import { checks, comments, engines, readings, rejectedMutations, syncClients, tombstones, trayItems } from "../schema";
import { checkToApi, engineToApi, readingToApi, trayToApi } from "./garage";
import type { AnyMySqlColumn } from "drizzle-orm/mysql-core";

/**
 * The client row, locked for the push; created on first sight (for this user). Answers whose it is
 * and its last applied id: the push refuses a device of another account (server/access.ts ownDevice).
 */
export async function lockClient(
  tx: Tx,
  clientId: string,
  userId: string,
  known = false,
): Promise<{ userId: string; lastMutationId: number } | undefined> {
  const locked = async () => {
    const [c] = await tx
      .select({ userId: syncClients.userId, lastMutationId: syncClients.lastMutationId })
      .from(syncClients)
      .where(eq(syncClients.id, clientId))
      .for("update");
    return c;
  };
  // a device seen before (the push read its row just now): the locking read alone, one round trip
  if (known) {
    const c = await locked();
    if (c) return c;
  }
  await tx
    .insert(syncClients)
    .values({ id: clientId, userId })
    .onDuplicateKeyUpdate({ set: { id: sql`id` } });
  return locked();
}

/**
 * The device's last applied id, in the push's transaction. This row write (the id always moves up)
 * is what decides two pushes of one device racing on two nodes: the cluster lets one commit and
 * the other retries, rereads the id and skips what the first applied. The lock lockClient takes
 * only orders pushes on one node.
 */
export async function setLastMutation(tx: Tx, clientId: string, id: number) {
  await tx.update(syncClients).set({ lastMutationId: id }).where(eq(syncClients.id, clientId));
}

/** The push's refusals, kept for a push sent again (rejectedAmong): one multi-row statement. */
export async function recordRejected(
  tx: Tx,
  clientId: string,
  refusals: { id: number; name: string; reason: string }[],
) {
  if (refusals.length === 0) return;
  await tx
    .insert(rejectedMutations)
    .values(
      refusals.map((r) => ({ clientId, mutationId: r.id, name: r.name.slice(0, 60), reason: r.reason.slice(0, 500) })),
    )
    .onDuplicateKeyUpdate({ set: { reason: sql`VALUES(${sql.identifier(rejectedMutations.reason.name)})` } });
}

/** The refusals already recorded among these ids: a push sent again after a lost answer gets them again. */
export async function rejectedAmong(tx: Tx, clientId: string, ids: number[]) {
  if (ids.length === 0) return [];
  return tx
    .select({ id: rejectedMutations.mutationId, name: rejectedMutations.name, reason: rejectedMutations.reason })
    .from(rejectedMutations)
    .where(and(eq(rejectedMutations.clientId, clientId), inArray(rejectedMutations.mutationId, ids)))
    .orderBy(rejectedMutations.mutationId);
}

export async function rejectedFor(clientId: string, after: number) {
  return db()
    .select({ id: rejectedMutations.mutationId, name: rejectedMutations.name, reason: rejectedMutations.reason })
    .from(rejectedMutations)
    .where(and(eq(rejectedMutations.clientId, clientId), gt(rejectedMutations.mutationId, after)));
}

export async function clientOwner(clientId: string) {
  const [c] = await db().select().from(syncClients).where(eq(syncClients.id, clientId)).limit(1);
  return c;
}

/**
 * How many rows one pull answers at most (all tables together): about 250 KB of JSON, so a phone
 * on a weak signal gets a whole page in a few seconds and a pull's work is bounded whatever the
 * owner holds. The phone asks for the next page until `more` is false.
 */
export const PULL_PAGE_ROWS = 1000;

/**
 * A place in one owner's stream of changes, ordered by (version, table, id): everything before it
 * has been pulled. `kind` is the table's place in TABLES; END after every table, so
 * { version: V, kind: END } is "every row stamped at or below V" (today's plain cursor "o:V").
 */
export type PullPosition = { version: number; kind: number; id: string };
export const TABLES = ["engines", "checks", "readings", "tray", "comments", "tombstones"] as const;
export const END = TABLES.length;

/**
 * One page of what changed for one owner after a position, read in the caller's (read-only)
 * transaction. The owner's counter is read first and that read fixes the transaction's snapshot,
 * so every row stamped at or below it is visible and nothing above it is returned. On a cluster
 * the first read waits until this node has applied every write committed anywhere before it
 * (wsrep_sync_wait; without Galera it has no effect), so a change made through another node is in
 * the next pull. `after` null, or ahead of the counter (a restored database), is a full pull; a
 * number is { version: n, kind: END }.
 *
 * Why pages leave no gap, even with rows written between them: a row's version only rises (every
 * change stamps the owner's next value, committed with the counter), and a page returns, in its
 * snapshot, every row from its start position to its end position. A row the next pages have not
 * reached is returned when they reach it; a row changed after its place was passed takes a version
 * above that page's counter, so it lies ahead of every later start and is returned again, as it
 * now is. A new row likewise lies ahead. Rows deleted leave a tombstone, which is ordered the same way.
 *
 * Nothing changed: one primary-key read. Otherwise one (owner_id, version) index range per table,
 * read in index order (the primary key id follows version in that index) and cut at the page size,
 * plus the owner's checks for the comments on them.
 */
export async function changesSince(
  tx: Tx,
  userId: string,
  after: number | PullPosition | null,
  pageRows = PULL_PAGE_ROWS,
) {
  const [[counter]] = (await tx.execute(
    sql`SET STATEMENT wsrep_sync_wait = 1 FOR SELECT version FROM owner_versions WHERE owner_id = ${userId}`,
  )) as unknown as [{ version: number | string }[]];
  const upTo = Number(counter?.version ?? 0);
  const at: PullPosition | null = typeof after === "number" ? { version: after, kind: END, id: "" } : after;
  const from = at !== null && at.version <= upTo ? at : null;
  const none = {
    upTo,
    next: null as PullPosition | null,
    full: false,
    engines: [],
    checks: [],
    readings: [],
    tray: [],
    comments: [],
    tombstones: [],
  };
  if (from && from.version === upTo && from.kind >= END) return none;
  // rows of table `kind` after the position, up to the counter
  const range = (kind: number, t: { version: AnyMySqlColumn; id: AnyMySqlColumn }) => {
    const top = lte(t.version, upTo);
    if (from === null) return top;
    if (kind < from.kind) return and(gt(t.version, from.version), top);
    if (kind > from.kind) return and(gte(t.version, from.version), top);
    return and(gte(t.version, from.version), or(gt(t.version, from.version), gt(t.id, from.id)), top);
  };
  // one more than a page from each table: the page's rows are among them, and any extra says "more"
  const cut = pageRows + 1;
  // one connection: the queries run one after another, in the same snapshot
  const es = await tx
    .select()
    .from(engines)
    .where(and(eq(engines.ownerId, userId), range(0, engines)))
    .orderBy(asc(engines.version), asc(engines.id))
    .limit(cut);
  const cs = await tx
    .select()
    .from(checks)
    .where(and(eq(checks.ownerId, userId), range(1, checks)))
    .orderBy(asc(checks.version), asc(checks.id))
    .limit(cut);
  const rs = await tx
    .select()
    .from(readings)
    .where(and(eq(readings.ownerId, userId), range(2, readings)))
    .orderBy(asc(readings.version), asc(readings.id))
    .limit(cut);
  const ts = await tx
    .select()
    .from(trayItems)
    .where(and(eq(trayItems.ownerId, userId), range(3, trayItems)))
    .orderBy(asc(trayItems.version), asc(trayItems.id))
    .limit(cut);
  const cms = await tx
    .select({
      id: comments.id,
      checkId: comments.checkId,
      authorId: comments.authorId,
      valve: comments.valve,
      body: comments.body,
      createdAt: comments.createdAt,
      version: comments.version,
    })
    .from(comments)
    .innerJoin(checks, eq(checks.id, comments.checkId))
    .where(and(eq(checks.ownerId, userId), range(4, comments)))
    .orderBy(asc(comments.version), asc(comments.id))
    .limit(cut);
  const tomb = await tx
    .select({ rowId: tombstones.id, entity: tombstones.entity, id: tombstones.entityId, version: tombstones.version })
    .from(tombstones)
    .where(and(eq(tombstones.ownerId, userId), range(5, tombstones)))
    .orderBy(asc(tombstones.version), asc(tombstones.id))
    .limit(cut);
  // merged by (version, table); a stable sort keeps each table's own (database) order of ids, the
  // order the next page's `id >` compares in
  type Row = { version: number; kind: number; id: string; i: number };
  const tag = (kind: number, rows: { version: number; id: string }[]) =>
    rows.map((r, i): Row => ({ version: r.version, kind, id: r.id, i }));
  const tombKeys = tomb.map((t) => ({ version: t.version, id: t.rowId }));
  const all = [...tag(0, es), ...tag(1, cs), ...tag(2, rs), ...tag(3, ts), ...tag(4, cms), ...tag(5, tombKeys)].sort(
    (a, b) => a.version - b.version || a.kind - b.kind,
  );
  const page = all.slice(0, pageRows);
  const more = all.length > pageRows;
  const last = page.at(-1);
  const taken = (kind: number) => new Set(page.filter((r) => r.kind === kind).map((r) => r.i));
  const keep = <T>(kind: number, rows: T[]) => {
    const k = taken(kind);
    return rows.filter((_, i) => k.has(i));
  };
  return {
    upTo,
    // where the next page starts; null when this page reached the counter
    next: more && last ? { version: last.version, kind: last.kind, id: last.id } : null,
    full: from === null,
    engines: keep(0, es).map(engineToApi),
    checks: keep(1, cs).map(checkToApi),
    readings: keep(2, rs).map(readingToApi),
    tray: keep(3, ts).map(trayToApi),
    comments: keep(4, cms),
    tombstones: keep(5, tomb).map(({ entity, id, version }) => ({ entity, id, version })),
  };
}
