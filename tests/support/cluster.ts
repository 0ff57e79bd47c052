import type { ClusterSpec } from "../../scripts/lib/galera.mjs";
import { startApp, type App } from "./server";

/** The Galera cluster that scripts/test.mjs started for the cluster level. */
export function clusterSpec(): ClusterSpec {
  const s = process.env.LASHWRIGHT_CLUSTER;
  if (!s) throw new Error("LASHWRIGHT_CLUSTER is not set: run the cluster level through npm test -- cluster");
  return JSON.parse(s) as ClusterSpec;
}

/**
 * Two app instances of the production build, the first on node 1, the second on node 2. Their
 * phones are robots that write faster than people: the write budget (server/sync.ts) is raised.
 */
export async function startInstances(spec = clusterSpec()): Promise<[App, App]> {
  const fast = { SYNC_WRITES_PER_MINUTE: "10000000" };
  return Promise.all([
    startApp({ DATABASE_URL: spec.urls[0]!, ...fast }),
    startApp({ DATABASE_URL: spec.urls[1]!, ...fast }),
  ]);
}
