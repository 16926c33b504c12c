import { drizzle, type NodePgDatabase } from "drizzle-orm/node-postgres";
import type pg from "pg";
import type { Database } from "./client";
import * as schema from "./schema";

/**
 * `COPY table (columns) FROM STDIN` in PostgreSQL's text format, through the pg package's own
 * query path (a minimal "submittable" speaking the COPY sub-protocol; no extra package). `text` is
 * whole rows: fields joined by tabs, rows ended by newlines, each field through `copyField`.
 * Much quicker than INSERT for thousands of rows; on error nothing of the COPY is kept, and the
 * surrounding transaction fails with it.
 */
export function copyFrom(client: pg.ClientBase, copySql: string, text: string): Promise<void> {
  return new Promise<void>((resolve, reject) => {
    let failed: Error | null = null;
    const copy = {
      submit: (connection: { query(sql: string): void }) => connection.query(copySql),
      handleCopyInResponse: (connection: { sendCopyFromChunk(b: Buffer): void; endCopyFrom(): void }) => {
        connection.sendCopyFromChunk(Buffer.from(text));
        connection.endCopyFrom();
      },
      handleCommandComplete: () => undefined,
      handleError: (error: Error) => (failed = error),
      handleReadyForQuery: () => (failed ? reject(failed) : resolve()),
    };
    client.query(copy as never);
  });
}

const NEEDS_ESCAPE = /[\\\t\n\r\u0000]/;

/**
 * One field of a COPY text row. Backslash, tab, newline and carriage return are escaped as COPY
 * reads them; U+0000, which PostgreSQL text cannot hold, becomes U+FFFD (a mismatch quoting what a
 * panel showed must never stop a judgement from being stored). Numbers as JavaScript writes them
 * (PostgreSQL reads 1e-7, Infinity and NaN).
 */
export function copyField(value: string | number): string {
  if (typeof value === "number") return String(value);
  if (!NEEDS_ESCAPE.test(value)) return value;
  return value.replace(/[\\\t\n\r\u0000]/g, (c) => (c === "\\" ? "\\\\" : c === "\t" ? "\\t" : c === "\n" ? "\\n" : c === "\r" ? "\\r" : "\ufffd"));
}

/**
 * A transaction on one client of the pool, for work that needs the client itself (COPY) beside
 * drizzle queries: `tx` is drizzle over that client. Commits when `work` resolves, rolls back when
 * it throws.
 */
export async function withClientTransaction<T>(db: Database, work: (tx: NodePgDatabase<typeof schema>, client: pg.PoolClient) => Promise<T>): Promise<T> {
  const client = await db.$client.connect();
  try {
    await client.query("BEGIN");
    const result = await work(drizzle(client, { schema }), client);
    await client.query("COMMIT");
    return result;
  } catch (error) {
    await client.query("ROLLBACK").catch(() => undefined);
    throw error;
  } finally {
    client.release();
  }
}
