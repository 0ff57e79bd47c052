import mysql, { type RowDataPacket } from "mysql2/promise";

export function testDbUrl(): string {
  const url = process.env.LASHWRIGHT_TEST_DB_URL;
  if (!url) throw new Error("LASHWRIGHT_TEST_DB_URL is not set: run integration tests through npm test");
  return url;
}

/** A raw connection for assertions that must not go through the code under test. */
export function rawConnection(): Promise<mysql.Connection> {
  return mysql.createConnection({ uri: testDbUrl(), supportBigNumbers: true });
}

/** The rows a query returns, read on a raw connection of its own. */
export async function queryRows<T>(sql: string, args: unknown[] = []): Promise<T[]> {
  const db = await rawConnection();
  try {
    const [rows] = await db.query(sql, args);
    return rows as T[];
  } finally {
    await db.end();
  }
}

/**
 * The `n` of a counting query (`SELECT COUNT(*) AS n ...`), read on `on` when given, else on a raw
 * connection of its own.
 */
export async function countOf(sql: string, args: unknown[] = [], on?: mysql.Connection): Promise<number> {
  const db = on ?? (await rawConnection());
  try {
    const [rows] = await db.query<RowDataPacket[]>(sql, args);
    return Number(rows[0]!.n);
  } finally {
    if (!on) await db.end();
  }
}

/** The club the demo mentor (scripts/lib/demo-users.mjs) mentors. */
export async function demoMentorClubId(): Promise<string> {
  const db = await rawConnection();
  const [rows] = await db.query<RowDataPacket[]>(
    "SELECT m.club_id AS clubId FROM memberships m JOIN users u ON u.id = m.user_id WHERE u.email = ? AND m.role = 'mentor' LIMIT 1",
    ["teodor@kestrel-hollow.example"],
  );
  await db.end();
  return rows[0]!.clubId as string;
}

/**
 * How far the server's readings of one check are from what the phone wrote (`valve#round` to the
 * blade that went): readings missing or different, plus readings the phone never wrote.
 */
export async function readingsDiffering(db: mysql.Connection, checkId: string, written: Map<string, number>) {
  const [rows] = await db.query<RowDataPacket[]>("SELECT valve, round, feeler_go FROM readings WHERE check_id = ?", [
    checkId,
  ]);
  const server = new Map(rows.map((r) => [`${r.valve}#${r.round}`, Number(r.feeler_go)]));
  return (
    [...written].filter(([k, v]) => server.get(k) !== v).length +
    [...server.keys()].filter((k) => !written.has(k)).length
  );
}

/**
 * History rows of these checks' readings (countOf, on `on` when given): a reading written once has
 * none, so where each is written once a row is a change applied twice.
 */
export function historyRows(checkIds: string[], on?: mysql.Connection) {
  return countOf(
    "SELECT COUNT(*) AS n FROM reading_history h JOIN readings r ON r.id = h.reading_id WHERE r.check_id IN (?)",
    [checkIds],
    on,
  );
}
