import { readdirSync, readFileSync, statSync } from "node:fs";
import path from "node:path";

/** Every API route on disk as "METHOD /api/path/:param", read from the route files' exports. */
export function routesOnDisk(): string[] {
  const api = path.resolve(__dirname, "../../app/api");
  const out: string[] = [];
  const walk = (dir: string) => {
    for (const f of readdirSync(dir)) {
      const p = path.join(dir, f);
      if (statSync(p).isDirectory()) walk(p);
      else if (f === "route.ts") {
        const url =
          "/api/" +
          path
            .relative(api, dir)
            .split(path.sep)
            .map((s) => s.replace(/^\[(?:\.\.\.)?(.+)\]$/, ":$1"))
            .join("/");
        for (const m of readFileSync(p, "utf8").matchAll(
          /export (?:const|async function) (GET|POST|PUT|PATCH|DELETE)\b|export \{[^}]*handler as (GET|POST)/g,
        ))
          out.push(`${m[1] ?? m[2]} ${url.replace(/\/$/, "")}`);
        if (/handler as GET, handler as POST/.test(readFileSync(p, "utf8"))) out.push(`POST ${url}`);
      }
    }
  };
  walk(api);
  return [...new Set(out)].sort();
}
