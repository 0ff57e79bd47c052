import "server-only";
import http from "node:http";

/** A server marked with this is not the app's (the metrics listener): its events are not wrapped. */
export const UNLOGGED = Symbol.for("lashwright.request-context.unlogged");

/**
 * Run `around` in place of each of the app's HTTP servers' `events` ('request', 'connection'), with
 * `next` to emit it as before. Next's route handlers see no socket and no server, so what must
 * happen per request or connection (the request's id and log line, the drain on SIGTERM) wraps the
 * server's emit; installed by instrumentation.ts register() before Next takes any request.
 */
export function aroundServerEvents(
  events: readonly string[],
  around: (server: http.Server, event: string, args: unknown[], next: () => boolean) => boolean,
): void {
  const emit = http.Server.prototype.emit;
  http.Server.prototype.emit = function (
    this: http.Server & { [UNLOGGED]?: true },
    event: string | symbol,
    ...args: unknown[]
  ): boolean {
    const next = () => Reflect.apply(emit, this, [event, ...args]) as boolean;
    if (typeof event !== "string" || !events.includes(event) || this[UNLOGGED]) return next();
    return around(this, event, args, next);
  } as typeof emit;
}
