import { describe, expect, it } from "vitest";
import { signedInClient } from "../support/api";
import { baseUrl, signedInPhone } from "../support/browser";
import { ENGINE_FOUR, makeUser } from "../support/fixtures";
import { browserPerFile } from "../support/per-file";

/**
 * A phone left signed in after its owner signed out everywhere (issue 24, item 12; OWASP ASVS 5.0
 * V14 Data Protection, V7 Session Management): at its next contact with the server the phone wipes
 * its local copy, so the engines are no longer readable on it with the network cut.
 */
const browser = browserPerFile();

describe("a phone whose session was ended elsewhere", () => {
  it("wipes its copy at its next contact and shows nothing of it offline", async () => {
    const u = await makeUser("revoked-phone");
    const pc = await signedInClient(baseUrl(), u);
    const engineId = crypto.randomUUID();
    expect(
      (
        await pc.post("/api/sync/push", {
          clientId: crypto.randomUUID(),
          mutations: [
            { id: 1, name: "engine.put/1", args: { ...ENGINE_FOUR, id: engineId, name: "Kept-secret four" } },
          ],
        })
      ).status,
    ).toBe(200);

    const { ctx, page } = await signedInPhone(browser, u);
    await page.getByText("Kept-secret four").waitFor();
    // the service worker serves the garage shells offline
    await page.evaluate(async () => {
      await navigator.serviceWorker.ready;
      if (!navigator.serviceWorker.controller)
        await new Promise((r) => navigator.serviceWorker.addEventListener("controllerchange", r, { once: true }));
    });
    const localEngines = () =>
      page.evaluate(
        (name) =>
          new Promise<number>((resolve) => {
            const req = indexedDB.open(name);
            req.onsuccess = () => {
              const db = req.result;
              if (!db.objectStoreNames.contains("engines")) return resolve(0);
              const count = db.transaction("engines").objectStore("engines").count();
              count.onsuccess = () => (resolve(count.result), db.close());
            };
          }),
        `lashwright-${u.id}`,
      );
    expect(await localEngines()).toBe(1);

    // "sign out" on the computer ends every session of the account
    await pc.signOut();
    // the phone's next contact: any page it opens with a signal
    await page.reload();
    await page.getByText(/was ended elsewhere/).waitFor();
    expect(await localEngines()).toBe(0);

    await ctx.setOffline(true);
    await page.reload();
    await page.getByText(/was ended elsewhere/).waitFor();
    expect(await page.getByText("Kept-secret four").count()).toBe(0);
    await ctx.close();
  });
});
