import "server-only";
import { migrate } from "drizzle-orm/mysql2/migrator";
import { fileURLToPath } from "node:url";
import { closeDb, db } from "./connection";

/** Apply the committed migrations (never `drizzle-kit push`: it misbehaves on MariaDB). */
export async function runMigrations(): Promise<void> {
  // the migrator runs its own transaction on the session, outside transaction()
  await migrate(db() as unknown as Parameters<typeof migrate>[0], {
    migrationsFolder: fileURLToPath(new URL("./migrations", import.meta.url)),
  });
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  runMigrations()
    .then(() => closeDb())
    .catch(async (e: unknown) => {
      console.error(`Migration failed: ${e instanceof Error ? e.message : String(e)}`);
      await closeDb();
      process.exit(1);
    });
}
