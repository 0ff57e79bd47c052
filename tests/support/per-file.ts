import { afterAll, beforeAll } from "vitest";
import type { Browser } from "playwright-core";
import { launch } from "./browser";
import { startApp, type App } from "./server";

/**
 * What a whole test file shares: made in the file's beforeAll, ended in its afterAll (so a file's
 * own later beforeAll can already use it, and its own afterAll runs before the end), and used as
 * the thing itself: each use reaches the one made. A use before it is made throws.
 */
function perFile<T extends object>(what: string, make: () => Promise<T>, end: (made: T) => Promise<unknown>): T {
  let made: T | undefined;
  beforeAll(async () => {
    made = await make();
  });
  afterAll(async () => {
    if (made) await end(made);
  });
  return new Proxy({} as T, {
    get(_, key) {
      if (!made) throw new Error(`${what} is used before the test file's beforeAll made it`);
      const value: unknown = Reflect.get(made, key, made);
      return typeof value === "function" ? (value as (...a: unknown[]) => unknown).bind(made) : value;
    },
  });
}

/** The production build served for this test file (startApp, with `env` added to its variables). */
export function appPerFile(env: Record<string, string> = {}): App {
  return perFile(
    "the app",
    () => startApp(env),
    (app) => app.stop(),
  );
}

/** Chromium for this test file. */
export function browserPerFile(): Browser {
  return perFile("the browser", launch, (browser) => browser.close());
}
