import "server-only";
import { overloaded } from "@/lib/errors";

/**
 * A counting semaphore that refuses rather than queues without end: `size` run at once, up to
 * `maxWaiting` wait (each at most `maxWaitMs`), and any more are answered "busy" at once (503 with
 * Retry-After). Written here because the limiters at hand queue without a bound and cannot refuse; one
 * module for every capped kind of work (password hashes, photo decodes).
 */
export class Slots {
  private running = 0;
  private readonly waiting: { go: () => void }[] = [];
  /** the most that ever ran at once */
  peak = 0;
  constructor(
    readonly size: number,
    readonly maxWaiting: number,
    readonly maxWaitMs: number,
    private readonly busy: () => Error = () => overloaded("The server is busy: try again in a moment", 3),
  ) {}

  get inUse() {
    return this.running;
  }
  get queued() {
    return this.waiting.length;
  }

  private take() {
    this.running++;
    this.peak = Math.max(this.peak, this.running);
  }

  private acquire(): Promise<void> {
    if (this.running < this.size) {
      this.take();
      return Promise.resolve();
    }
    if (this.waiting.length >= this.maxWaiting) return Promise.reject(this.busy());
    return new Promise<void>((resolve, reject) => {
      const w = {
        go: () => {
          clearTimeout(timer);
          this.take();
          resolve();
        },
      };
      const timer = setTimeout(() => {
        const i = this.waiting.indexOf(w);
        if (i >= 0) this.waiting.splice(i, 1);
        reject(this.busy());
      }, this.maxWaitMs);
      timer.unref?.();
      this.waiting.push(w);
    });
  }

  private release() {
    this.running--;
    this.waiting.shift()?.go();
  }

  async run<T>(fn: () => Promise<T>): Promise<T> {
    await this.acquire();
    try {
      return await fn();
    } finally {
      this.release();
    }
  }
}

/**
 * Slots the metrics report (server/metrics.ts), by kind. On globalThis: the metrics are read from
 * instrumentation's chunk, the slots are used by the route handlers' (each chunk has its own copy of
 * a module), so every copy's slots are listed and summed.
 */
const WATCHED = Symbol.for("lashwright.slots");
const watched = ((globalThis as Record<symbol, Map<string, Set<Slots>> | undefined>)[WATCHED] ??= new Map());

export function watchSlots(kind: string, slots: Slots): Slots {
  let set = watched.get(kind);
  if (!set) watched.set(kind, (set = new Set()));
  set.add(slots);
  return slots;
}

/** Work of a kind running and waiting now, over every copy of its slots. */
export function slotsNow(): { kind: string; running: number; queued: number }[] {
  return [...watched].map(([kind, set]) => ({
    kind,
    running: [...set].reduce((n, s) => n + s.inUse, 0),
    queued: [...set].reduce((n, s) => n + s.queued, 0),
  }));
}
