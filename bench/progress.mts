// What the bench is doing, as it does it: one line per stage with the time since the start, on
// stderr so that the table (stdout) stays clean to pipe. A run takes minutes on this shared machine.
const started = performance.now();

const clock = () => {
  const s = Math.round((performance.now() - started) / 1000);
  return `${Math.floor(s / 60)}:${String(s % 60).padStart(2, "0")}`;
};

export function say(line: string) {
  process.stderr.write(`[bench ${clock()}] ${line}\n`);
}

/** Runs a stage between a start line and a done line that gives its own duration. */
export async function stage<T>(name: string, fn: () => T | Promise<T>): Promise<T> {
  say(`${name}...`);
  const t0 = performance.now();
  const out = await fn();
  say(`${name}: done in ${((performance.now() - t0) / 1000).toFixed(1)} s`);
  return out;
}
