import path from "node:path";
import { freePorts, type ClusterSpec } from "../../scripts/lib/galera.mjs";
import { startHaproxy, type Haproxy } from "../../scripts/lib/haproxy.mjs";
import { startApp, type App } from "./server";

/**
 * Two app instances of the production build behind HAProxy ("app/app1", "app/app2"), as production
 * runs them: their ports are chosen first, so HAProxy's configuration names them before they start.
 * Instance i reaches the database at node i directly, or, with `galera`, through HAProxy too (one
 * listener per instance, each preferring its own node: proxy.dbUrls[i]), once HAProxy sees every
 * node up. Each instance trusts the one proxy in front of it and is reached at HAProxy's address;
 * `env` adds to that. Returns once HAProxy sees both instances up; on a failure on the way, what was
 * started is stopped.
 */
export async function behindHaproxy(opts: {
  spec: ClusterSpec;
  /** HAProxy's folder, under the cluster's */
  name: string;
  galera?: boolean;
  env: Record<string, string>;
}): Promise<{ proxy: Haproxy; apps: [App, App] }> {
  const { spec, galera = false } = opts;
  const [frontPort, statsPort, app1, app2, db1, db2] = (await freePorts(galera ? 6 : 4)) as number[];
  const proxy = await startHaproxy({
    dir: path.join(spec.dir, opts.name),
    frontPort: frontPort!,
    statsPort: statsPort!,
    apps: [
      { name: "app1", port: app1! },
      { name: "app2", port: app2! },
    ],
    ...(galera
      ? {
          db: {
            nodes: spec.nodes.map((n) => ({ name: n.name, port: n.port })),
            listeners: [
              { port: db1!, prefer: 0 },
              { port: db2!, prefer: 1 },
            ],
            user: spec.user,
            password: spec.password,
            database: spec.database,
          },
        }
      : {}),
  });
  let started: App[] = [];
  try {
    if (galera) await proxy.waitUp(spec.nodes.map((n) => `galera/${n.name}`));
    const env = (i: number) => ({
      DATABASE_URL: galera ? proxy.dbUrls[i]! : spec.urls[i]!,
      NEXTAUTH_URL: proxy.url,
      TRUSTED_PROXIES: "1",
      ...opts.env,
    });
    const booted = await Promise.allSettled([app1!, app2!].map((port, i) => startApp(env(i), { port })));
    started = booted.flatMap((b) => (b.status === "fulfilled" ? [b.value] : []));
    for (const b of booted) if (b.status === "rejected") throw b.reason;
    await proxy.waitUp(["app/app1", "app/app2"]);
    return { proxy, apps: started as [App, App] };
  } catch (e) {
    await Promise.all(started.map((a) => a.stop()));
    await proxy.stop();
    throw e;
  }
}
