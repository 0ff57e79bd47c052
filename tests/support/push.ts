import { expect } from "vitest";
import type { Client } from "./api";

/** Records as a phone's outbox sends them, pushed in one request: every one must be applied. */
export async function pushAccepted(api: Client, mutations: { name: string; args: unknown }[]) {
  const res = await api.post("/api/sync/push", {
    clientId: crypto.randomUUID(),
    mutations: mutations.map((m, i) => ({ id: i + 1, ...m })),
  });
  expect(res.status).toBe(200);
  expect(res.json.rejected ?? []).toEqual([]);
}
