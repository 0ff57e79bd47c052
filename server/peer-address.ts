import "server-only";
import { AsyncLocalStorage } from "node:async_hooks";
import http from "node:http";
import { isIPv4, isIPv6 } from "node:net";

/**
 * The network address of the socket a request came in on, as the server saw it. Next's route
 * handlers get no socket: `next start` copies the socket's address into X-Forwarded-For only when
 * the caller sent none (node_modules/next/dist/server/base-server.js, `??=`), so that header is the
 * caller's own words. Instead, the server's 'request' event is run inside an AsyncLocalStorage that
 * holds the socket's address; everything Next does for that request (and the route handler at its
 * end) runs in that context. Nothing a client sends can set it.
 *
 * installed by instrumentation.ts register(), which Next awaits before it hands any request to a
 * handler; a request that arrived while the server was still starting has no address (null).
 */
type Peer = { address: string | undefined };

// on globalThis: instrumentation and the route handlers are bundled into different chunks
const KEY = Symbol.for("lashwright.peer-address");
type Holder = { storage: AsyncLocalStorage<Peer>; installed: boolean };
const holder = ((globalThis as Record<symbol, Holder | undefined>)[KEY] ??= {
  storage: new AsyncLocalStorage<Peer>(),
  installed: false,
});

export function installPeerAddress(): void {
  if (holder.installed) return;
  holder.installed = true;
  const emit = http.Server.prototype.emit;
  http.Server.prototype.emit = function (this: http.Server, event: string | symbol, ...args: unknown[]): boolean {
    if (event !== "request") return Reflect.apply(emit, this, [event, ...args]);
    const req = args[0] as http.IncomingMessage | undefined;
    return holder.storage.run({ address: req?.socket?.remoteAddress }, () =>
      Reflect.apply(emit, this, [event, ...args]),
    );
  } as typeof emit;
}

/** The socket's address of the request being handled, or null outside a request (or before install). */
export function socketAddress(): string | null {
  return holder.storage.getStore()?.address ?? null;
}

/**
 * The key a network address is counted under. An IPv4 address as it is (also when written as
 * IPv4-mapped IPv6); an IPv6 address by its /64 prefix, the smallest block a subscriber is usually
 * given (RFC 6177), so rotating through one's own /64 does not give a new budget per address.
 * null for anything that is not an address.
 */
export function addressKey(raw: string | null | undefined): string | null {
  if (!raw) return null;
  const a = raw.trim().replace(/^\[|\]$/g, "");
  const mapped = a.match(/^::ffff:(\d+\.\d+\.\d+\.\d+)$/i);
  if (mapped && isIPv4(mapped[1]!)) return mapped[1]!;
  if (isIPv4(a)) return a;
  const bare = a.split("%")[0]!; // a zone index (fe80::1%eth0) names an interface, not a host
  if (!isIPv6(bare)) return null;
  return `${expandIPv6(bare).slice(0, 4).join(":")}::/64`;
}

function expandIPv6(a: string): string[] {
  let s = a.toLowerCase();
  // a trailing dotted quad (::1.2.3.4) is two groups
  const quad = s.match(/(\d+)\.(\d+)\.(\d+)\.(\d+)$/);
  if (quad) {
    const [, p, q, r, t] = quad.map(Number);
    s = s.slice(0, quad.index) + `${((p! << 8) | q!).toString(16)}:${((r! << 8) | t!).toString(16)}`;
  }
  const [head, tail] = s.split("::") as [string, string | undefined];
  const left = head ? head.split(":") : [];
  const right = tail ? tail.split(":") : [];
  const fill = tail === undefined ? [] : Array(8 - left.length - right.length).fill("0");
  return [...left, ...fill, ...right].map((g) => g.replace(/^0+(?=.)/, ""));
}
