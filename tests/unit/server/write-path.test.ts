import { readFileSync, readdirSync, statSync } from "node:fs";
import { join, relative } from "node:path";
import ts from "typescript";
import { describe, expect, it } from "vitest";

/**
 * DEVELOPERS.md "One write path", checked from the source: every module under app/, server/ and db/
 * that changes the database (a drizzle insert, update or delete, a raw INSERT/UPDATE/DELETE, a
 * transaction opened, or a call of a db/ function that does one of these) is one of the modules
 * below. A new side door (a route calling a query that writes, a service writing through db())
 * makes this test fail with its file name: route it through the applier table or a named service
 * taking the write context, or, if it truly is a new kind of write, add it here with the reason.
 * This sees every module, run by a test or not; what it cannot see (a write passed as a value, a
 * query built in a helper) the test servers catch as it runs (db/write-path.ts, LASHWRIGHT_CHECK_WRITES).
 */
const WRITERS: Record<string, string> = {
  // the SQL layer: statements only, each write taking the caller's transaction (or a queue's own)
  "db/queries/account-deletion.ts": "SQL of the account deletion and of the object-deletion queue",
  "db/queries/account-import.ts": "SQL of the account import",
  "db/queries/clubs.ts": "SQL of clubs, roles, invitations, shares, comments",
  "db/queries/garage.ts": "SQL of engines, checks, readings, tray",
  "db/queries/notices.ts": "SQL of the e-mail notice queue and mail stops",
  "db/queries/photos.ts": "SQL of photo rows and the stale-claim sweep",
  "db/queries/pool.ts": "SQL of the club pool and loans",
  "db/queries/sync.ts": "SQL of the push's device row and refusals",
  "db/queries/users.ts": "SQL of accounts and one-time tokens",
  // the machinery of a write
  "db/connection.ts": "transaction(), the one way to open a transaction",
  "db/versions.ts": "the per-owner change version counter and versioned()",
  "db/migrate.ts": "migrations",
  "db/seed.ts": "the demo seed",
  "server/write.ts": "write(): the write context of every REST write",
  "server/sync.ts": "the sync push: the device row, refusals, the table in savepoints",
  "server/budgets.ts": "the rate_limits table (rate-limiter-flexible)",
  // the applier table and the named services that take the write context
  "server/appliers.ts": "the applier table",
  "server/pool.ts": "the club pool's appliers (called from the table)",
  "server/clubs.ts": "named service: clubs, roles, invitations, shares",
  "server/photos.ts": "named service: photo claims, removal, the sweep of stale claims",
  "server/account-changes.ts":
    "named service: an account's own rows (sign-up, links, passwords, settings, sessions, unsubscribing)",
  "server/account-deletion.ts": "named service: account deletion",
  "server/account-import.ts": "named service: account import (applyImport in write())",
  "server/notices.ts": "the notice queue (post-commit e-mail)",
  "server/object-deletions.ts": "the queue of stored objects to delete",
};

const ROOT = join(__dirname, "../../..");
const ROOTS = ["app", "server", "db"];

function sources(dir: string): string[] {
  return readdirSync(join(ROOT, dir)).flatMap((name) => {
    const rel = join(dir, name);
    if (rel === "db/migrations") return [];
    if (statSync(join(ROOT, rel)).isDirectory()) return sources(rel);
    return /\.tsx?$/.test(name) ? [rel] : [];
  });
}

const TABLES = [...readFileSync(join(ROOT, "db/schema.ts"), "utf8").matchAll(/export const (\w+) = mysqlTable\(/g)].map(
  (m) => m[1]!,
);
/** A statement that changes rows: drizzle's builders on a table, raw DML text, the migrator, a limiter. */
const DML = new RegExp(
  [
    `\\.(?:insert|update|delete)\\(\\s*(?:${TABLES.join("|")})\\s*[,)]`,
    String.raw`\b(?:insert\s+(?:ignore\s+)?into|update\s+\w+\s+set|delete\s+from|replace\s+into)\b`,
    String.raw`\bmigrate\(`,
    String.raw`\bRateLimiterMySQL\b`,
    // a transaction opened (db/connection's transaction(), db/versions' versioned(), or drizzle's own)
    String.raw`(?<![\w.])(?:transaction|versioned)\(|\.transaction\(`,
  ].join("|"),
  "i",
);

type Module = { path: string; text: string; sf: ts.SourceFile };
const modules: Module[] = [...ROOTS.flatMap(sources)].map((path) => {
  const text = readFileSync(join(ROOT, path), "utf8");
  return { path, text, sf: ts.createSourceFile(path, text, ts.ScriptTarget.Latest, true) };
});

/** The code of a node without its comments (a comment naming "insert into" is not a write). */
function code(node: ts.Node, sf: ts.SourceFile): string {
  const printer = ts.createPrinter({ removeComments: true });
  return printer.printNode(ts.EmitHint.Unspecified, node, sf);
}

/** What a module imports from db/: local name -> exported name (`*` for a namespace). */
function dbImports(m: Module): { local: string; module: string; name: string }[] {
  const out: { local: string; module: string; name: string }[] = [];
  for (const st of m.sf.statements) {
    if (!ts.isImportDeclaration(st) || !st.importClause || st.importClause.isTypeOnly) continue;
    const spec = (st.moduleSpecifier as ts.StringLiteral).text;
    const target = spec.startsWith("@/")
      ? spec.slice(2)
      : spec.startsWith(".")
        ? relative(ROOT, join(ROOT, m.path, "..", spec))
        : null;
    if (!target?.startsWith("db/")) continue;
    const b = st.importClause.namedBindings;
    if (b && ts.isNamespaceImport(b)) out.push({ local: b.name.text, module: `${target}.ts`, name: "*" });
    if (b && ts.isNamedImports(b))
      for (const e of b.elements)
        if (!e.isTypeOnly)
          out.push({ local: e.name.text, module: `${target}.ts`, name: (e.propertyName ?? e.name).text });
  }
  return out;
}

/** The top-level functions of a module, by name, with their code. */
function functionsOf(m: Module): Map<string, { exported: boolean; code: string }> {
  const out = new Map<string, { exported: boolean; code: string }>();
  for (const st of m.sf.statements) {
    const exported = !!ts.getModifiers(st as ts.HasModifiers)?.some((x) => x.kind === ts.SyntaxKind.ExportKeyword);
    if (ts.isFunctionDeclaration(st) && st.name) out.set(st.name.text, { exported, code: code(st, m.sf) });
    if (ts.isVariableStatement(st))
      for (const d of st.declarationList.declarations)
        if (ts.isIdentifier(d.name) && d.initializer) out.set(d.name.text, { exported, code: code(d, m.sf) });
  }
  return out;
}

const called = (text: string, local: string, name: string) =>
  name === "*" ? new RegExp(`\\b${local}\\.(\\w+)\\s*\\(`, "g") : new RegExp(`(?<![\\w.])${local}\\s*\\(`, "g");

/** The exported functions of db/ that write, directly or through a local helper or another db/ module. */
function dbWriters(): Map<string, Set<string>> {
  const writers = new Map<string, Set<string>>();
  const dbModules = modules.filter((m) => m.path.startsWith("db/"));
  for (let changed = true; changed;) {
    changed = false;
    for (const m of dbModules) {
      const fns = functionsOf(m);
      const mine = writers.get(m.path) ?? new Set<string>();
      const imports = dbImports(m);
      const writes = (body: string) =>
        DML.test(body) ||
        [...mine].some((f) => called(body, f, f).test(body)) ||
        imports.some((i) =>
          i.name === "*"
            ? [...body.matchAll(called(body, i.local, "*"))].some((c) => writers.get(i.module)?.has(c[1]!))
            : writers.get(i.module)?.has(i.name) && called(body, i.local, i.name).test(body),
        );
      for (const [name, f] of fns)
        if (!mine.has(name) && writes(f.code)) {
          mine.add(name);
          changed = true;
        }
      writers.set(m.path, mine);
    }
  }
  return writers;
}

function writingModules(): Map<string, string> {
  const writers = dbWriters();
  const found = new Map<string, string>();
  for (const m of modules) {
    const text = code(m.sf, m.sf);
    const direct = text.match(DML);
    if (direct) {
      found.set(m.path, `writes: ${direct[0]}`);
      continue;
    }
    for (const i of dbImports(m)) {
      const hit =
        i.name === "*"
          ? [...text.matchAll(called(text, i.local, "*"))].find((c) => writers.get(i.module)?.has(c[1]!))?.[1]
          : writers.get(i.module)?.has(i.name) && called(text, i.local, i.name).test(text)
            ? i.name
            : undefined;
      if (hit) {
        found.set(m.path, `calls ${hit} of ${i.module}`);
        break;
      }
    }
  }
  return found;
}

describe("the one write path (DEVELOPERS.md)", () => {
  const found = writingModules();

  it("finds the writes it is meant to find (the detector itself works)", () => {
    const writers = dbWriters();
    expect(writers.get("db/queries/garage.ts")).toContain("writeReadings");
    expect(writers.get("db/queries/clubs.ts")).toContain("setRoles");
    expect(writers.get("db/queries/users.ts")).toContain("createUser");
    expect(writers.get("db/queries/clubs.ts")).not.toContain("listMembers");
    expect(found.get("server/appliers.ts")).toMatch(/calls/);
  });

  it("only the applier table, the named services and the write machinery change the database", () => {
    const report = [...found].map(([path, why]) => `${path} (${why})`).sort();
    const unexpected = report.filter((r) => !(r.split(" ")[0]! in WRITERS));
    expect(unexpected, "modules writing outside the write path").toEqual([]);
    // a module listed above that no longer writes is taken off the list, so the list stays true
    expect(Object.keys(WRITERS).filter((p) => !found.has(p))).toEqual([]);
  });
});
