import mysql from "mysql2/promise";

export function testDbUrl(): string {
  const url = process.env.LASHWRIGHT_TEST_DB_URL;
  if (!url) throw new Error("LASHWRIGHT_TEST_DB_URL is not set: run integration tests through npm test");
  return url;
}

/** A raw connection for assertions that must not go through the code under test. */
export function rawConnection(): Promise<mysql.Connection> {
  return mysql.createConnection({ uri: testDbUrl(), supportBigNumbers: true });
}
