import "server-only";
import { drizzle, type MySql2Database } from "drizzle-orm/mysql2";
import mysql from "mysql2/promise";
import { env } from "@/lib/env";
import * as schema from "./schema";

export type Db = MySql2Database<typeof schema>;

// One pool per process, kept across hot reloads in development (module state is reset there).
const globalForDb = globalThis as unknown as { lashwrightPool?: mysql.Pool; lashwrightDb?: Db };

export function pool(): mysql.Pool {
  if (!globalForDb.lashwrightPool) {
    globalForDb.lashwrightPool = mysql.createPool({
      uri: env().DATABASE_URL,
      connectionLimit: 10,
      // decimals arrive as strings; drizzle's mode "number" converts the columns it knows
      supportBigNumbers: true,
      timezone: "Z",
      dateStrings: false,
    });
  }
  return globalForDb.lashwrightPool;
}

export function db(): Db {
  if (!globalForDb.lashwrightDb) globalForDb.lashwrightDb = drizzle(pool(), { schema, mode: "default" });
  return globalForDb.lashwrightDb;
}

export async function closeDb(): Promise<void> {
  const p = globalForDb.lashwrightPool;
  globalForDb.lashwrightPool = undefined;
  globalForDb.lashwrightDb = undefined;
  if (p) await p.end();
}
