import { expect } from "vitest";
import type { BrowserContext } from "playwright-core";
import { allSynced, backOnline } from "./browser";

/**
 * The phone (the context's first page) back online: waits `timeout` ms at most until `rows()` reads
 * `count` rows on the server, then until the sync line says all is synced; returns the page and the rows.
 */
export async function syncedOnline<T>(ctx: BrowserContext, rows: () => Promise<T[]>, count: number, timeout: number) {
  const page = ctx.pages()[0]!;
  await backOnline(ctx, page);
  await expect.poll(async () => (await rows()).length, { timeout }).toBe(count);
  await allSynced(page);
  return { page, rows: await rows() };
}
