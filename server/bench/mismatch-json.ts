import { sql } from "drizzle-orm";
import type { Database } from "../db/client";

export const elementKey = (panelId: string, elementId: string) => `${panelId}\u0000${elementId}`;

type MismatchLists = Map<string, { json: string; count: number }>;

/**
 * A run's mismatch lists as JSON, kept per judgement: a stored judgement never changes (judging
 * again stores a new one with a new `judgedAt`), so the lists are read once and every report of
 * that judgement reuses them. The run's end warms them (`warmMismatchJson`), so even the first
 * reader of a finished run's report does not wait for PostgreSQL to write 10,000 of them
 * (docs/run-report.md, "Speed"). A few runs are kept; what is kept is the promise, so readers
 * arriving together share one read.
 */
const cache = new Map<string, Promise<MismatchLists>>();
const CACHE_SIZE = 8;

/** Per element, its mismatches as a JSON array in export order (start, then id), and how many. */
export function mismatchJsonOf(db: Database, runId: string, judgedAt: Date | null): Promise<MismatchLists> {
  // Not judged yet: nothing stored that could be kept.
  if (!judgedAt) return readMismatchJson(db, runId);
  const key = `${runId}@${judgedAt.getTime()}`;
  let entry = cache.get(key);
  if (entry) cache.delete(key); // kept as the newest
  else {
    entry = readMismatchJson(db, runId);
    const kept = entry;
    kept.catch(() => cache.get(key) === kept && cache.delete(key));
  }
  cache.set(key, entry);
  while (cache.size > CACHE_SIZE) cache.delete(cache.keys().next().value!);
  return entry;
}

/** Reads a judgement's lists into the cache now (after storing it), without waiting; a failure is retried by the next reader. */
export function warmMismatchJson(db: Database, runId: string, judgedAt: Date): void {
  mismatchJsonOf(db, runId, judgedAt).catch(() => undefined);
}

async function readMismatchJson(db: Database, runId: string): Promise<MismatchLists> {
  const result = await db.execute<{ panel_id: string; element_id: string; list: string; count: number }>(sql`
    select panel_id, element_id, count(*)::int as count,
      '[' || string_agg(
        '{"id":"' || id || '","track":' || to_json(track)::text || ',"kind":' || to_json(kind)::text ||
        ',"startMs":' || to_json(start_ms)::text || ',"endMs":' || to_json(end_ms)::text ||
        ',"worstError":' || to_json(worst_error)::text || ',"expected":' || to_json(expected)::text ||
        ',"seen":' || to_json(seen)::text || ',"atMs":' || to_json(at_ms)::text || '}',
        ',' order by start_ms, id) || ']' as list
    from mismatch where run_id = ${runId}
    group by panel_id, element_id`);
  return new Map(result.rows.map((r) => [elementKey(r.panel_id, r.element_id), { json: r.list, count: r.count }]));
}

