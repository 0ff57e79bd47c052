import net from "node:net";

/**
 * Each Client talks from an address of its own, as each phone would: Linux answers the whole of
 * 127.0.0.0/8 on the loopback, so a Client binds its sockets to a random 127.x.y.z and the server's
 * limits per network address (the socket's address) see one caller per Client, not one for the
 * whole suite. Pass `from` to make several Clients one address (a flood from one place).
 * Node's fetch is undici, whose Agent class is not exported: it is taken from the global dispatcher
 * fetch installs on first use, and given a connector that binds the local address.
 */
type Dispatcher = { close(): Promise<void> };
type Connector = (
  opts: { hostname: string; port: string },
  cb: (err: Error | null, socket: net.Socket | null) => void,
) => void;
let Agent: (new (o: { connect: Connector }) => Dispatcher) | undefined;
const agents = new Map<string, Dispatcher>();

async function dispatcherFrom(localAddress: string): Promise<Dispatcher> {
  if (!Agent) {
    await fetch("data:,");
    Agent = (
      (globalThis as Record<symbol, unknown>)[Symbol.for("undici.globalDispatcher.1")] as { constructor: typeof Agent }
    ).constructor;
  }
  let a = agents.get(localAddress);
  if (!a) {
    a = new Agent!({
      connect: (opts, cb) => {
        const s = net.connect({ host: opts.hostname, port: Number(opts.port), localAddress });
        const fail = (e: Error) => cb(e, null);
        s.once("error", fail);
        s.once("connect", () => (s.off("error", fail), s.setNoDelay(true), cb(null, s)));
      },
    });
    agents.set(localAddress, a);
  }
  return a;
}

const byte = (lo: number, hi: number) => lo + Math.floor(Math.random() * (hi - lo + 1));
/** A random loopback address for a Client of a loopback server over plain HTTP, else null. */
export function loopbackAddress(base: string): string | null {
  const u = new URL(base);
  if (u.protocol !== "http:" || !["127.0.0.1", "localhost"].includes(u.hostname)) return null;
  return `127.${byte(1, 254)}.${byte(0, 255)}.${byte(1, 254)}`;
}

/** Status and parsed body (or the text, when it is not JSON). */
async function answer(res: Response) {
  const text = await res.text();
  let json: unknown = null;
  try {
    json = text ? JSON.parse(text) : null;
  } catch {
    json = text;
  }
  return { status: res.status, json: json as Record<string, any> }; // eslint-disable-line @typescript-eslint/no-explicit-any
}

/**
 * No request of a test waits for ever: a server that stops answering fails the test with a timeout
 * naming the request, within the level's test timeout, rather than hanging the whole run.
 */
const REQUEST_BOUND_MS = 120_000;

type Provider = "password" | "email-link";

/** A tiny HTTP client with a cookie jar, signing in through next-auth like a browser does. */
export class Client {
  private cookies = new Map<string, string>();
  constructor(
    readonly base: string,
    /** the local address this Client's requests come from (null: the system's choice) */
    readonly from: string | null = loopbackAddress(base),
  ) {}

  private async via() {
    return this.from ? { dispatcher: await dispatcherFrom(this.from) } : {};
  }

  private remember(res: Response) {
    for (const c of res.headers.getSetCookie()) {
      const [pair] = c.split(";");
      const i = pair!.indexOf("=");
      const name = pair!.slice(0, i);
      const value = pair!.slice(i + 1);
      if (value === "" || /Max-Age=0|expires=Thu, 01 Jan 1970/i.test(c)) this.cookies.delete(name);
      else this.cookies.set(name, value);
    }
  }

  cookieHeader() {
    return [...this.cookies].map(([k, v]) => `${k}=${v}`).join("; ");
  }

  cookieNames() {
    return [...this.cookies.keys()];
  }

  /** Sent on every request, as a browser sends it from the app's own pages (a test may override it). */
  private origin() {
    return { cookie: this.cookieHeader(), origin: this.base };
  }

  async raw(method: string, path: string, init: { body?: BodyInit; headers?: Record<string, string> } = {}) {
    const res = await fetch(this.base + path, {
      method,
      redirect: "manual",
      headers: { ...this.origin(), ...(init.headers ?? {}) },
      body: init.body,
      duplex: "half",
      signal: AbortSignal.timeout(REQUEST_BOUND_MS),
      ...(await this.via()),
    } as unknown as RequestInit);
    this.remember(res);
    return res;
  }

  async call(method: string, path: string, body?: unknown) {
    return answer(
      await this.raw(
        method,
        path,
        body === undefined ? {} : { body: JSON.stringify(body), headers: { "content-type": "application/json" } },
      ),
    );
  }

  /** A multipart form, as the phone sends photos. */
  async form(method: string, path: string, form: FormData) {
    const res = await fetch(this.base + path, {
      method,
      redirect: "manual",
      headers: this.origin(),
      body: form,
      signal: AbortSignal.timeout(REQUEST_BOUND_MS),
      ...(await this.via()),
    } as RequestInit);
    this.remember(res);
    return answer(res);
  }

  get = (p: string) => this.call("GET", p);
  post = (p: string, b?: unknown) => this.call("POST", p, b ?? {});
  put = (p: string, b?: unknown) => this.call("PUT", p, b ?? {});
  patch = (p: string, b?: unknown) => this.call("PATCH", p, b ?? {});
  del = (p: string) => this.call("DELETE", p);

  /** next-auth's CSRF token, as the sign-in page fetches it (its cookie kept in the jar). */
  async csrfToken(): Promise<string> {
    return (await this.call("GET", "/api/auth/csrf")).json.csrfToken as string;
  }

  /** The sign-in form posted to a next-auth credentials provider with this CSRF token: the raw answer. */
  postSignIn(
    provider: Provider,
    fields: Record<string, string>,
    csrfToken: string,
    headers: Record<string, string> = {},
  ) {
    const form = new URLSearchParams({ ...fields, csrfToken, json: "true" });
    return this.raw("POST", `/api/auth/callback/${provider}`, {
      body: form.toString(),
      headers: { "content-type": "application/x-www-form-urlencoded", ...headers },
    });
  }

  /** A sign-in as the browser sends it (a CSRF token, then the form): the raw answer, for its status and headers. */
  async signInAnswer(provider: Provider, fields: Record<string, string>, headers: Record<string, string> = {}) {
    return this.postSignIn(provider, fields, await this.csrfToken(), headers);
  }

  /** Sign in with a next-auth credentials provider; returns the error code, or null on success. */
  async signIn(
    provider: Provider,
    fields: Record<string, string>,
    headers: Record<string, string> = {},
  ): Promise<string | null> {
    const res = await this.signInAnswer(provider, fields, headers);
    const body = (await res.json().catch(() => ({}))) as { url?: string };
    const error = body.url ? new URL(body.url).searchParams.get("error") : "no-url";
    return error;
  }

  async signOut() {
    const csrf = await this.call("GET", "/api/auth/csrf");
    const form = new URLSearchParams({ csrfToken: csrf.json.csrfToken as string, json: "true" });
    await this.raw("POST", "/api/auth/signout", {
      body: form.toString(),
      headers: { "content-type": "application/x-www-form-urlencoded" },
    });
  }
}

/** A client already signed in with a password, failing the test when sign-in does not work. */
export async function signedInClient(base: string, u: { email: string; password: string }): Promise<Client> {
  const c = new Client(base);
  const error = await c.signIn("password", { email: u.email, password: u.password });
  if (error !== null) throw new Error(`sign-in failed for ${u.email}: ${error}`);
  return c;
}
