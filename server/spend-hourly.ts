import "server-only";
import { tooMany } from "@/lib/errors";
import type { Budget } from "./budgets";

/**
 * Spend one unit of a per-hour budget, or refuse (429 with Retry-After) in words that say how many
 * the hour allows and how long to wait: `words(points, "12 minutes")`.
 */
export async function spendHourly(b: Budget, key: string, words: (points: number, wait: string) => string) {
  const spent = await b.take(key);
  if (spent.ok) return;
  const minutes = Math.ceil(spent.retryAfterSeconds / 60);
  throw tooMany(words(b.spec.points, `${minutes} minute${minutes === 1 ? "" : "s"}`), spent.retryAfterSeconds);
}
