import bcrypt from "bcryptjs";
import mysql from "mysql2/promise";
import { testDbUrl } from "./db";

let cachedHash: string | undefined;
export const FIXTURE_PASSWORD = "feeler-blade-0.25";

/** A verified user made straight in the database (cost-4 hash: fixtures need no real cost). */
export async function makeUser(tag: string) {
  cachedHash ??= await bcrypt.hash(FIXTURE_PASSWORD, 4);
  const id = crypto.randomUUID();
  const email = `${tag}-${id.slice(0, 8)}@test.example`;
  const c = await mysql.createConnection({ uri: testDbUrl() });
  await c.query("INSERT INTO users (id, email, name, password_hash, email_verified_at) VALUES (?, ?, ?, ?, NOW(3))", [
    id,
    email,
    `Test ${tag}`,
    cachedHash,
  ]);
  await c.end();
  return { id, email, password: FIXTURE_PASSWORD };
}

export async function addMembership(clubId: string, userId: string, roles: string[]) {
  const c = await mysql.createConnection({ uri: testDbUrl() });
  for (const role of roles)
    await c.query("INSERT INTO memberships (id, club_id, user_id, role) VALUES (UUID(), ?, ?, ?)", [
      clubId,
      userId,
      role,
    ]);
  await c.end();
}

// the invented four lives with the other plain fixtures (unit tests and the bench import it without a database)
export { ENGINE_FOUR } from "../fixtures/engines";
