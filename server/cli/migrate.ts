import path from "node:path";
import { fileURLToPath } from "node:url";
import { migrate } from "drizzle-orm/node-postgres/migrator";
import { connectDatabase } from "../db/client";

/** Applies every migration in drizzle/ that the database has not seen. Safe to run again. */
export async function migrateDatabase(url: string) {
  const db = connectDatabase(url, 1);
  try {
    const folder = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "../../drizzle");
    await migrate(db, { migrationsFolder: folder });
  } finally {
    await db.$client.end();
  }
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const url = process.env.DATABASE_URL;
  if (!url) {
    console.error("DATABASE_URL is not set.");
    process.exit(2);
  }
  await migrateDatabase(url);
  console.log("[migrate] database is up to date");
}
