import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { signedInClient, type Client } from "../support/api";
import { startInstances } from "../support/cluster";
import { countOf, rawConnection } from "../support/db";
import { addMembership, makeUser } from "../support/fixtures";
import type { App } from "../support/server";

/**
 * Races between two app instances on two database nodes. A lock taken on one Galera node does not
 * stop a writer on another, so each of these must be decided by a row write the cluster certifies
 * (the loser's commit fails with a deadlock error, it is retried, and the retry sees the winner).
 * Each race is run several times, both requests sent at once, so that they really overlap.
 */
const ROUNDS = 8;
let apps: App[] = [];
beforeAll(async () => {
  apps = await startInstances();
});
afterAll(async () => {
  await Promise.all(apps.map((a) => a.stop()));
});

async function count(sql: string, args: unknown[]) {
  const db = await rawConnection();
  await db.query("SET SESSION wsrep_sync_wait = 1");
  const n = await countOf(sql, args, db);
  await db.end();
  return n;
}

describe("races across two instances on two nodes", () => {
  it(
    "two members ask for the last shim at once, one through each instance: exactly one gets it",
    { timeout: 180_000 },
    async () => {
      const [lender, first, second] = await Promise.all(["race-lender", "race-a", "race-b"].map(makeUser));
      const l = await signedInClient(apps[0]!.url, lender!);
      const clubId = (await l.post("/api/clubs", { name: "Race Club" })).json.club.id as string;
      await addMembership(clubId, first!.id, ["mechanic"]);
      await addMembership(clubId, second!.id, ["mechanic"]);
      const askers: Client[] = [
        await signedInClient(apps[0]!.url, first!),
        await signedInClient(apps[1]!.url, second!),
      ];
      expect((await l.post("/api/tray", { size: 2.6, count: ROUNDS })).status).toBe(201);
      const outcomes: number[][] = [];
      for (let round = 0; round < ROUNDS; round++) {
        const offer = await l.post(`/api/clubs/${clubId}/pool`, { size: 2.6, count: 1, note: `round ${round}` });
        expect(offer.status).toBe(201);
        const offerId = offer.json.offer.id as string;
        const answers = await Promise.all(askers.map((c) => c.post("/api/borrows", { offerId, count: 1 })));
        outcomes.push(answers.map((a) => a.status));
        expect(answers.map((a) => a.status).sort()).toEqual([201, 409]);
        expect(await count("SELECT COUNT(*) AS n FROM borrow_requests WHERE offer_id = ?", [offerId])).toBe(1);
      }
      console.log(
        `[cluster] last shim, ${ROUNDS} races (instance 1, instance 2): ${outcomes.map((o) => o.join("/")).join(" ")}`,
      );
    },
  );

  it(
    "two admins take each other's admin role at once, one through each instance: the club keeps one admin",
    { timeout: 180_000 },
    async () => {
      const outcomes: number[][] = [];
      for (let round = 0; round < ROUNDS; round++) {
        const [a, b] = await Promise.all(["race-admin-a", "race-admin-b"].map(makeUser));
        const ca = await signedInClient(apps[0]!.url, a!);
        const clubId = (await ca.post("/api/clubs", { name: `Admin Race ${round}` })).json.club.id as string;
        await addMembership(clubId, b!.id, ["mechanic", "admin"]);
        const cb = await signedInClient(apps[1]!.url, b!);
        const answers = await Promise.all([
          ca.put(`/api/clubs/${clubId}/members/${b!.id}`, { roles: ["mechanic"] }),
          cb.put(`/api/clubs/${clubId}/members/${a!.id}`, { roles: ["mechanic"] }),
        ]);
        const statuses = answers.map((x) => x.status);
        outcomes.push(statuses);
        expect(statuses.filter((s) => s >= 500)).toEqual([]);
        expect(statuses.filter((s) => s === 200)).toHaveLength(1);
        expect(
          await count("SELECT COUNT(*) AS n FROM memberships WHERE club_id = ? AND role = 'admin'", [clubId]),
        ).toBe(1);
      }
      console.log(
        `[cluster] admin removal, ${ROUNDS} races (instance 1, instance 2): ${outcomes.map((o) => o.join("/")).join(" ")}`,
      );
    },
  );
});
