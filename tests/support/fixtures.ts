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

export const ENGINE_FOUR = {
  name: "Test four",
  cylinders: 4,
  intakePerCylinder: 2,
  exhaustPerCylinder: 2,
  firingOrder: [1, 3, 4, 2],
  intake: { min: 0.1, max: 0.2 },
  exhaust: { min: 0.2, max: 0.3 },
  shims: { min: 2.5, max: 3.3, step: 0.05 },
};
