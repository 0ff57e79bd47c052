/**
 * The phone's way to the server, shared by the outbox push, the pull and the photo queue. It sorts
 * every failure into what the phone should do about it: no answer at all (Offline: try again when
 * a signal is back), the session is gone (SignedOut: ask to sign in), the server is saturated
 * (ServerBusy: wait as long as it asks, plus jitter), or anything else (ServerError). A bug in the
 * phone's own code after an answer arrived is none of these, so it never shows as "offline".
 */
export type Fetch = (input: string, init: RequestInit) => Promise<Response>;

/** The request got no answer: no signal, the server unreachable, the connection reset. */
export class Offline extends Error {
  constructor(readonly cause?: unknown) {
    super("no connection to the server");
    this.name = "Offline";
  }
}

export class SignedOut extends Error {
  constructor(message = "sign in again to sync") {
    super(message);
    this.name = "SignedOut";
  }
}

/** The code of the server's 401 for a session ended elsewhere (server/http.ts sends it). */
export const SESSION_REVOKED_CODE = "session_revoked";

/**
 * A 401 whose session was ended elsewhere (signed out everywhere, a new password, the account gone),
 * not merely missing or expired: the phone wipes its local copy of that user's data (client.ts).
 */
export class SessionRevoked extends SignedOut {
  constructor() {
    super("this session was ended elsewhere: sign in again");
    this.name = "SessionRevoked";
  }
}

/**
 * 503 or 429: nothing was applied; send the same again after retryAfterMs (or later). 429 is this
 * phone's or account's own budget spent (many changes sent at once), 503 the server saturated.
 */
export class ServerBusy extends Error {
  constructor(
    readonly retryAfterMs: number | null,
    readonly status: 503 | 429 = 503,
  ) {
    super(status === 429 ? "too many changes sent at once" : "the server is busy");
    this.name = "ServerBusy";
  }
}

export class ServerError extends Error {
  constructor(
    readonly status: number,
    message: string,
  ) {
    super(message);
    this.name = "ServerError";
  }
}

/** Retry-After in seconds or as a date, in milliseconds from now; null when absent or unreadable. */
export function retryAfterMs(header: string | null, now = Date.now()): number | null {
  if (!header) return null;
  if (/^\d+$/.test(header.trim())) return Number(header.trim()) * 1000;
  const at = Date.parse(header);
  return Number.isNaN(at) ? null : Math.max(0, at - now);
}

/**
 * How long to wait before the next try after a busy answer: at least what the server asked, growing
 * with each failed try (2 s, 4 s, ... up to a minute), times a random factor from 1 to 2 so phones
 * turned away together do not all come back together.
 */
export function retryDelay(attempt: number, askedMs: number | null, random: () => number = Math.random): number {
  const base = Math.max(askedMs ?? 0, Math.min(60_000, 2_000 * 2 ** Math.max(0, attempt)));
  return Math.round(base * (1 + random()));
}

/**
 * How long the phone waits for one answer, its body included, before it counts the request as
 * unanswered (Offline: kept and sent again later). A garage signal can hold a request open with no
 * byte moving; without a bound the sync would wait on it for ever. Photos get longer (a few MB up a
 * weak signal).
 */
export const REQUEST_TIMEOUT_MS = 60_000;
export const UPLOAD_TIMEOUT_MS = 300_000;

/** Send one request; an answer that is not 2xx becomes one of the errors above. */
export async function send(
  fetcher: Fetch,
  url: string,
  init: RequestInit,
  timeoutMs = REQUEST_TIMEOUT_MS,
): Promise<Response> {
  const bound = AbortSignal.timeout(timeoutMs);
  let res: Response;
  try {
    res = await fetcher(url, {
      credentials: "same-origin",
      ...init,
      signal: init.signal ? AbortSignal.any([init.signal, bound]) : bound,
    });
  } catch (e) {
    throw new Offline(e);
  }
  if (res.ok) return res;
  if (res.status === 401) {
    const body = (await res.json().catch(() => null)) as { error?: { code?: unknown } } | null;
    throw body?.error?.code === SESSION_REVOKED_CODE ? new SessionRevoked() : new SignedOut();
  }
  if (res.status === 503 || res.status === 429)
    throw new ServerBusy(retryAfterMs(res.headers.get("retry-after")), res.status);
  return res;
}

/** POST JSON and read the JSON answer; any answer but 2xx throws. */
export async function postJson<T>(fetcher: Fetch, url: string, body: unknown, what: string): Promise<T> {
  const res = await send(fetcher, url, {
    method: "POST",
    headers: { "content-type": "application/json" },
    body: JSON.stringify(body),
  });
  if (!res.ok) throw new ServerError(res.status, `${what} answered ${res.status}`);
  return (await readJson(res, what)) as T;
}

/**
 * The body of an answer. The connection can be cut after the status line, half-way through the
 * body (a server instance that died mid-answer): that is no answer, so Offline, and what was sent
 * stays in the outbox to be sent again (the push is idempotent by mutation id). A body that arrived
 * whole but is not JSON is the server's fault, not the signal's.
 */
async function readJson(res: Response, what: string): Promise<unknown> {
  let text: string;
  try {
    text = await res.text();
  } catch (e) {
    throw new Offline(e);
  }
  try {
    return JSON.parse(text);
  } catch {
    throw new ServerError(res.status, `${what} answered with a body that is not JSON`);
  }
}
