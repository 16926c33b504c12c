import { drizzle, type NodePgDatabase } from "drizzle-orm/node-postgres";
import pg from "pg";
import * as schema from "./schema";

export type Database = NodePgDatabase<typeof schema> & { $client: pg.Pool };

export function connectDatabase(url: string, max = 10): Database {
  const pool = new pg.Pool({ connectionString: url, max });
  // An idle client losing its connection must not crash the server; the next query reconnects.
  pool.on("error", (err) => console.error("[db] idle client error:", err.message));
  return drizzle(pool, { schema }) as Database;
}
