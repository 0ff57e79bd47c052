import "server-only";
import pino, { type Logger } from "pino";

/**
 * The server's log: JSON lines on stdout (pino), one object per line, for whatever collects them.
 * LOG_LEVEL picks the least severe level written (default info; lib/env.ts lists the names).
 *
 * On globalThis: instrumentation and the route handlers are bundled into different chunks, and
 * every copy must write through the one logger (one level, one stream).
 */
export const LOG_LEVELS = ["fatal", "error", "warn", "info", "debug", "trace", "silent"] as const;

const KEY = Symbol.for("lashwright.log");

/**
 * Errors keep their type, message, stack, database codes and cause, and nothing else: a failed
 * query's error carries its parameters (drizzle puts them in the message, mysql2 the whole SQL in
 * `sql`), which may be anyone's data, so the parameters are cut out and `sql` is not copied.
 */
type Serialized = {
  type: string;
  message: string;
  stack?: string;
  code?: unknown;
  errno?: unknown;
  sqlState?: unknown;
  cause?: Serialized | string;
};
const scrub = (s: string) => s.replace(/\nparams: [\s\S]*?(?=\n\s+at |$)/, "\nparams: [not logged]");
export function serializeError(e: unknown, depth = 0): Serialized | string {
  if (!(e instanceof Error)) return typeof e === "string" ? e : String(e);
  const x = e as Error & { code?: unknown; errno?: unknown; sqlState?: unknown };
  const out: Serialized = { type: e.constructor?.name ?? "Error", message: scrub(e.message) };
  if (e.stack) out.stack = scrub(e.stack);
  if (x.code !== undefined) out.code = x.code;
  if (x.errno !== undefined) out.errno = x.errno;
  if (x.sqlState !== undefined) out.sqlState = x.sqlState;
  if (e.cause !== undefined && depth < 3) out.cause = serializeError(e.cause, depth + 1);
  return out;
}

function level(): string {
  const want = process.env.LOG_LEVEL;
  return want && (LOG_LEVELS as readonly string[]).includes(want) ? want : "info";
}

function make(): Logger {
  return pino({
    level: level(),
    base: { pid: process.pid },
    timestamp: pino.stdTimeFunctions.isoTime,
    // "level":"warn" rather than 40: read by people as often as by machines
    formatters: { level: (label) => ({ level: label }) },
    serializers: { err: serializeError },
  });
}

export const log: Logger = ((globalThis as Record<symbol, Logger | undefined>)[KEY] ??= make());
