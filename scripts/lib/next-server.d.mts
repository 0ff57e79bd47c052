// Types for next-server.mjs, used by the browser test that deploys one build over another.
export function startNext(
  port: number,
  env: Record<string, string>,
  opts?: { inherit?: boolean },
): { ready: Promise<void>; exited: Promise<unknown>; stop: () => Promise<void> };
