import pg from "pg";
import { judgeOffline, RunJudge, tolerancesOf } from "../shared/compare/judge";
import type { Mismatch, SeenSample } from "../shared/compare/types";
import type { ElementTimeline, ExpectedTimelines } from "../shared/expect/types";
import { copyMismatches } from "../server/bench/store";
import { copyFrom } from "../server/db/copy";
import { encodeSeenChunk } from "../server/bench/seen-log";
import type { BenchReport, BenchRow } from "./harness";

/**
 * Runs: (1) judging live, as the bench does while a run plays (reports fed as they arrive,
 * advance() at 60 Hz), against judging the same seen log offline in one go; (2) storing a
 * one-hour run's mismatches with the server's batched inserts, against a bare COPY of the same
 * rows in the same run; (3) the seen log's size against raw JSON.
 * Needs a database for (2): BENCH_DATABASE_URL or TEST_DATABASE_URL (skipped without one).
 */

const HOUR_MS = 3_600_000;

function makeRun(elementsCount = 200) {
  const elements: ElementTimeline[] = [];
  const seen: { elementId: string; sample: SeenSample }[] = [];
  for (let i = 0; i < elementsCount; i++) {
    const id = `lamp-${i}`;
    const lamp: ElementTimeline["tracks"]["lamp"] = [];
    for (let t = 0, on = false; t < HOUR_MS; t += 2_000 + i * 7, on = !on) lamp.push({ t, shows: on ? { state: "on", level: 255 } : { state: "off" } });
    elements.push({ id, kind: "lamp", label: id, placeholder: false, tracks: { lamp } });
    // Every tenth lamp answers late by 400 ms: a mismatch per change, about 36,000 in the hour.
    const lag = i % 10 === 0 ? 400 : 30;
    for (const c of lamp) seen.push({ elementId: id, sample: { t: c.t + lag, shows: { track: "lamp", lamp: c.shows } } });
  }
  seen.sort((a, b) => a.sample.t - b.sample.t);
  const timelines: ExpectedTimelines = { panelId: "bench", startMs: 0, endMs: HOUR_MS, elements };
  return { timelines, seen };
}

/** Rounds of storing, alternating the server's path and the bare COPY. */
const STORE_ROUNDS = 3;

export async function run(): Promise<BenchReport> {
  const rows: BenchRow[] = [];
  const { timelines, seen } = makeRun();
  const tol = () => tolerancesOf(undefined, { lagBudgetMs: 150 });

  // (1) live against offline judging of the same reports.
  let t0 = performance.now();
  const offline = judgeOffline(timelines, seen, [], tol);
  const offlineMs = performance.now() - t0;
  t0 = performance.now();
  const live = new RunJudge(timelines, tol);
  let k = 0;
  for (let now = 0; now <= HOUR_MS; now += 1000 / 60) {
    while (k < seen.length && seen[k].sample.t <= now) live.addSeen(seen[k].elementId, seen[k++].sample), 0;
    live.advance(now);
  }
  const liveResult = live.finish();
  const liveMs = performance.now() - t0;
  rows.push({
    metric: "judge a one-hour 200-lamp run live (advance at 60 Hz)",
    value: seen.length / (liveMs / 1000),
    unit: "reports/s",
    baseline: seen.length / (offlineMs / 1000),
    ratio: offlineMs / liveMs,
    note: `live ${liveMs.toFixed(0)} ms, offline ${offlineMs.toFixed(0)} ms; ${liveResult.mismatches.length} mismatches live, ${offline.mismatches.length} offline (must be equal)`,
  });

  // (3) the seen log, compactly.
  const raw = Buffer.byteLength(JSON.stringify(seen));
  t0 = performance.now();
  let packed = 0;
  for (let i = 0; i < seen.length; i += 20_000) packed += encodeSeenChunk(seen.slice(i, i + 20_000)).length;
  rows.push({ metric: "seen log stored size", value: packed, unit: "bytes", baseline: raw, ratio: packed / raw, note: `raw JSON ${raw} bytes; encoded in ${(performance.now() - t0).toFixed(0)} ms` });

  // (2) storing mismatches.
  const url = process.env.BENCH_DATABASE_URL ?? process.env.TEST_DATABASE_URL;
  if (!url) {
    rows.push({ metric: "store mismatches", value: 0, unit: "rows/s", note: "skipped: set BENCH_DATABASE_URL or TEST_DATABASE_URL" });
    return { topic: "runs", rows };
  }
  const list: Mismatch[] = offline.mismatches;
  const client = new pg.Client({ connectionString: url });
  await client.connect();
  try {
    // Foreign keys off for this session only: the rows belong to no real run.
    await client.query("SET session_replication_role = replica");
    const esc = (s: string) => s.replace(/\\/g, "\\\\").replace(/\t/g, "\\t").replace(/\n/g, "\\n").replace(/\r/g, "\\r");
    const textOf = (runId: string) => list.map((m) => [runId, "bench-panel", m.elementId, m.track, m.kind, m.startMs, m.endMs, m.worstError, esc(m.expected), esc(m.seen), m.atMs].join("\t")).join("\n") + "\n";
    // Alternating rounds, best of each: the first write into the table is slower whichever goes first.
    let batchedMs = Infinity;
    let copyMs = Infinity;
    for (let round = 0; round < STORE_ROUNDS; round++) {
      const runId = `bench-${Date.now()}-${round}`;
      t0 = performance.now();
      await client.query("BEGIN");
      await copyMismatches(client, runId, "bench-panel", list);
      await client.query("COMMIT");
      batchedMs = Math.min(batchedMs, performance.now() - t0);
      await client.query("DELETE FROM mismatch WHERE run_id = $1", [runId]);

      // A bare COPY of the same rows, its text made beforehand (not timed).
      const text = textOf(runId);
      t0 = performance.now();
      await client.query("BEGIN");
      await copyFrom(client, "COPY mismatch (run_id, panel_id, element_id, track, kind, start_ms, end_ms, worst_error, expected, seen, at_ms) FROM STDIN", text);
      await client.query("COMMIT");
      copyMs = Math.min(copyMs, performance.now() - t0);
      await client.query("DELETE FROM mismatch WHERE run_id = $1", [runId]);
    }
    rows.push({
      metric: `store ${list.length} mismatches of a one-hour run (the server's COPY, its text made from the mismatches)`,
      value: list.length / (batchedMs / 1000),
      unit: "rows/s",
      baseline: list.length / (copyMs / 1000),
      ratio: copyMs / batchedMs,
      target: ">= 0.5 of COPY",
      met: copyMs / batchedMs >= 0.5,
      note: `server's copyMismatches ${batchedMs.toFixed(0)} ms, bare COPY FROM STDIN of prepared text ${copyMs.toFixed(0)} ms; best of ${STORE_ROUNDS} alternating rounds each`,
    });
  } finally {
    await client.end();
  }
  return { topic: "runs", rows };
}
