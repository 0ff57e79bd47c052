import { chromium, type Browser, type BrowserContext, type BrowserContextOptions, type Page } from "playwright-core";

/** Debian's Chromium, with the flags that keep it from calling out of this closed network. */
export const CHROMIUM_ARGS = [
  "--no-sandbox",
  "--disable-gpu",
  "--disable-quic",
  "--no-first-run",
  "--disable-background-networking",
  "--disable-component-update",
  "--disable-sync",
];

const executablePath = () => process.env.CHROMIUM_PATH ?? "/usr/bin/chromium";

export function launch(): Promise<Browser> {
  return chromium.launch({ executablePath: executablePath(), args: CHROMIUM_ARGS });
}

/** A phone held in portrait: 412 x 915 CSS pixels, touch, 2.6x density. */
export const PHONE = {
  viewport: { width: 412, height: 915 },
  deviceScaleFactor: 2.625,
  isMobile: true,
  hasTouch: true,
} as const;

/** Chromium as the phone of PHONE, keeping its storage and service worker in `profile` from one launch to the next. */
export function persistentPhone(profile: string, colorScheme: "dark" | "light" = "dark"): Promise<BrowserContext> {
  return chromium.launchPersistentContext(profile, {
    executablePath: executablePath(),
    args: CHROMIUM_ARGS,
    ...PHONE,
    colorScheme,
  });
}

export function phoneContext(browser: Browser, colorScheme: "dark" | "light" = "dark"): Promise<BrowserContext> {
  return browser.newContext({ ...PHONE, colorScheme });
}

export function baseUrl(): string {
  const url = process.env.LASHWRIGHT_BASE_URL;
  if (!url) throw new Error("LASHWRIGHT_BASE_URL is not set: run browser tests through npm test");
  return url;
}

/** The demo users' password (scripts/lib/demo-users.mjs; invented). */
export const DEMO_PASSWORD = "garage-demo-2026";

/** Sign in on the sign-in page as a phone user would, and wait for the engines list. */
export async function signInAs(page: Page, email: string, password = DEMO_PASSWORD) {
  await page.goto(`${baseUrl()}/sign-in`);
  await page.getByLabel("E-mail").fill(email);
  await page.getByLabel("Password").fill(password);
  await page.getByRole("button", { name: "Sign in", exact: true }).tap();
  await page.waitForURL("**/engines");
}

/**
 * A narrow phone: `width` x `height` CSS pixels (360 x 780 unless given), touch, 2x density, in the
 * given colour scheme; other context options (downloads, say) pass through.
 */
export function narrowPhone(
  browser: Browser,
  { width = 360, height = 780, ...options }: { width?: number; height?: number } & BrowserContextOptions,
): Promise<BrowserContext> {
  return browser.newContext({
    viewport: { width, height },
    deviceScaleFactor: 2,
    isMobile: true,
    hasTouch: true,
    ...options,
  });
}

/**
 * A page signed in as `u` on the sign-in page (the demo password unless given), on the phone of
 * PHONE in a colour scheme (dark unless given), or on a narrow phone (narrowPhone's options).
 */
export async function signedInPhone(
  browser: Browser,
  u: { email: string; password?: string },
  phone: "dark" | "light" | Parameters<typeof narrowPhone>[1] = "dark",
): Promise<{ ctx: BrowserContext; page: Page }> {
  const ctx = typeof phone === "string" ? await phoneContext(browser, phone) : await narrowPhone(browser, phone);
  const page = await ctx.newPage();
  await signInAs(page, u.email, u.password);
  return { ctx, page };
}

/** The signal back: the context online again, and the page told at once (the "online" event a phone fires). */
export async function backOnline(ctx: BrowserContext, page: Page) {
  await ctx.setOffline(false);
  await page.evaluate(() => window.dispatchEvent(new Event("online")));
}

/** Waits (20 s at most) until the page's sync line says every change is on the server. */
export function allSynced(page: Page) {
  return page
    .getByTestId("sync-line")
    .getByText(/All synced/)
    .waitFor({ timeout: 20_000 });
}

/**
 * Record one valve's reading on the measuring screen: pick the valve on the engine diagram, tap its
 * blade, and wait until the diagram shows it measured (the screen then moves on to the next valve).
 */
export async function tapReading(page: Page, valve: string, blade: string) {
  const esc = valve.replace(".", "\\.");
  await page.getByRole("button", { name: new RegExp(`^${esc} `) }).tap();
  await page
    .getByRole("group", { name: `Feeler blades for ${valve}` })
    .getByRole("button", { name: blade, exact: true })
    .tap();
  await page.getByRole("button", { name: new RegExp(`^${esc} (in band|tight|loose|verified)`) }).waitFor();
}
