import { and, asc, eq, sql } from "drizzle-orm";
import type { ElementStatus, Mismatch, Tolerances } from "../../shared/compare/types";
import { judgeOfflineInTurns, tolerancesOf, type RunJudgement } from "../../shared/compare/judge";
import { applyObservations } from "../../shared/compare/observations";
import { runChecks } from "../../shared/api/runs";
import { summarizeLags } from "../../shared/compare/statistics";
import { expectTimelinesInTurns } from "../../shared/expect/engine";
import type { RecordingColumns } from "../../shared/expect/recording-columns";
import { panelChannels, type Panel } from "../../shared/panel/schema";
import type { ChannelDefinition } from "../../shared/recording/channels";
import type pg from "pg";
import type { Database } from "../db/client";
import { copyField, copyFrom, withClientTransaction } from "../db/copy";
import { warmMismatchJson } from "./mismatch-json";
import { mismatch, recording, run, runElementResult, seenLog } from "../db/schema";
void mismatch;
import type { DbOrTx } from "../recordings/writer";
import { recordingColumnsOf, storedSegmentsOf } from "../recordings/read";
import type { StoredSegment } from "../../shared/replay/segment-source";
import { decodeSeenChunk, SeenLogMerger, type SeenRecord } from "./seen-log";
import { nextTurn } from "../turns";

type RunRow = typeof run.$inferSelect;

export const EMPTY_COUNTS: Record<ElementStatus, number> = { pass: 0, fail: 0, untested: 0, no_data: 0, placeholder: 0 };

/**
 * A recording's stored segments (compressed, as stored), with what a run needs beside them: a
 * run's player reads its frames from them as it goes (shared/replay/segment-source.ts), so a run
 * never holds the whole recording as frame objects.
 */
export async function loadRecordingSegments(
  db: DbOrTx,
  recordingId: string,
): Promise<{ segments: StoredSegment[]; durationMs: number; channels: ChannelDefinition[]; name: string }> {
  const rec = await recordingRowOf(db, recordingId);
  const segments: StoredSegment[] = [];
  for await (const segment of storedSegmentsOf(db, recordingId)) segments.push(segment);
  // The stored duration; the session stretches it to the last frame once it has read them all.
  return { segments, ...rec };
}

/** What a run needs of a recording's row. */
async function recordingRowOf(db: DbOrTx, recordingId: string): Promise<{ durationMs: number; channels: ChannelDefinition[]; name: string }> {
  const [rec] = await db.select({ durationMs: recording.durationMs, channels: recording.channels, name: recording.name }).from(recording).where(eq(recording.id, recordingId));
  if (!rec) throw new Error(`recording ${recordingId} is gone`);
  return rec;
}

/**
 * A recording as columns (shared/expect's RecordingColumns) of only the channels `panels` bind,
 * read straight from its segments: what expected timelines are computed from on the server. An
 * hour at 60 Hz as frame objects is about 180 MB the garbage collector marks again and again.
 */
export async function loadRecordingColumns(
  db: DbOrTx,
  recordingId: string,
  panels: readonly Pick<Panel, "elements">[],
): Promise<{ columns: RecordingColumns; durationMs: number; channels: ChannelDefinition[]; name: string }> {
  const rec = await recordingRowOf(db, recordingId);
  const columns = await recordingColumnsOf(db, recordingId, panels.flatMap((p) => panelChannels(p)));
  return { columns, durationMs: Math.max(rec.durationMs, columns.lastT), channels: rec.channels, name: rec.name };
}

/** The stored seen log of one panel, in time order, without reports a later pass replaced. */
export async function seenLogOf(db: DbOrTx, row: RunRow, panelId: string): Promise<SeenRecord[]> {
  const chunks = await db
    .select({ epoch: seenLog.epoch, payload: seenLog.payload })
    .from(seenLog)
    .where(and(eq(seenLog.runId, row.id), eq(seenLog.panelId, panelId)))
    .orderBy(asc(seenLog.chunk));
  const merged = new SeenLogMerger(row.cuts);
  for (const c of chunks) {
    merged.add(c.epoch, decodeSeenChunk(c.payload));
    // An hour's log is millions of reports (chunks of 20,000): other requests and live runs get
    // a turn after each chunk.
    await nextTurn();
  }
  return merged.result();
}

export interface PanelJudgement {
  panelId: string;
  ordinals: Map<string, number>;
  judgement: RunJudgement;
}

/** Judges every panel of a run from its stored seen log and gaps, with `tolerance` over the elements' own. */
export async function judgeStored(db: DbOrTx, row: RunRow, tolerance: Partial<Tolerances>): Promise<PanelJudgement[]> {
  const rec = await loadRecordingColumns(db, row.recordingId, row.panels.map((p) => p.definition));
  const fromMs = row.segment?.fromMs ?? 0;
  // Judged up to where the run got (a stopped or interrupted run is not judged beyond it).
  const endMs = Math.max(fromMs, Math.min(row.positionMs, row.segment?.toMs ?? rec.durationMs, rec.durationMs));
  const out: PanelJudgement[] = [];
  const checks = runChecks.parse(row.checks ?? {});
  for (const p of row.panels) {
    const def = p.definition;
    const full = await expectTimelinesInTurns(def, rec.columns, { endMs: rec.durationMs, turn: nextTurn });
    const timelines = { ...full, startMs: fromMs, endMs };
    const byId = new Map(def.elements.map((el) => [el.id, el]));
    const seen = (await seenLogOf(db, row, p.panelId)).filter((r) => r.sample.t <= endMs);
    const status = row.linkStatus.find((l) => l.panelId === p.panelId);
    const ids = def.elements.map((e) => e.id);
    const gaps = (status?.gaps ?? []).map((gap) => ({ elementIds: ids, gap }));
    // The builder's observation answers join the link's judgement (docs/judging.md, "Observations").
    const judgement = applyObservations(
      await judgeOfflineInTurns(timelines, seen, gaps, (id) => tolerancesOf(byId.get(id), tolerance), { turn: nextTurn }),
      p.panelId,
      def.elements,
      checks.observed,
      checks.checkpoints,
    );
    out.push({ panelId: p.panelId, ordinals: new Map(ids.map((id, i) => [id, i])), judgement });
  }
  return out;
}

/** Writes a judgement as the run's results: element rows and mismatches replaced whole, in batches. */
export async function storeJudgement(db: Database, runId: string, panels: PanelJudgement[], batch = 1000): Promise<void> {
  const counts = { ...EMPTY_COUNTS };
  let mismatchTotal = 0;
  const judgedAt = new Date();
  await withClientTransaction(db, async (tx, client) => {
    await tx.delete(mismatch).where(eq(mismatch.runId, runId));
    await tx.delete(runElementResult).where(eq(runElementResult.runId, runId));
    const elementRows = panels.flatMap((p) =>
      p.judgement.elements.map((e) => ({
        runId,
        panelId: p.panelId,
        elementId: e.elementId,
        ordinal: p.ordinals.get(e.elementId) ?? 0,
        label: e.label,
        kind: e.kind,
        status: e.status,
        mismatchCount: e.mismatches.length,
        lag: e.lag,
        noDataMs: e.noDataMs,
        reports: e.reports,
      })),
    );
    for (const e of elementRows) counts[e.status]++;
    for (let i = 0; i < elementRows.length; i += batch) await tx.insert(runElementResult).values(elementRows.slice(i, i + batch));
    for (const p of panels) {
      mismatchTotal += p.judgement.mismatches.length;
      await copyMismatches(client, runId, p.panelId, p.judgement.mismatches);
    }
    const lag = summarizeLagsOf(panels);
    await tx.update(run).set({ counts, mismatchCount: mismatchTotal, lag, judgedAt }).where(eq(run.id, runId));
  });
  // The report of this judgement will be asked for: its mismatch lists are read now.
  warmMismatchJson(db, runId, judgedAt);
}

/**
 * Run-wide lag. One panel: its judge's own percentiles. Several: the judge keeps no raw samples
 * across panels, so the count is summed and p50, p95 and max are the worst panel's (conservative).
 */
export function summarizeLagsOf(panels: PanelJudgement[]) {
  const withLag = panels.map((p) => p.judgement.lag).filter((l) => l.count > 0);
  if (withLag.length <= 1) return withLag[0] ?? summarizeLags([]);
  const worst = (k: "p50" | "p95" | "max") => Math.max(...withLag.map((l) => l[k] ?? 0));
  return { count: withLag.reduce((n, l) => n + l.count, 0), p50: worst("p50"), p95: worst("p95"), max: worst("max") };
}

/**
 * Mismatch rows of one panel in one COPY (server/db/copy.ts), inside the caller's transaction.
 * Never one insert per interval: drizzle's multi-row VALUES was 9 times slower than a bare COPY,
 * INSERT ... SELECT FROM json_to_recordset() in batches of 5,000 about half as quick
 * (bench/runs.bench.ts).
 */
export async function copyMismatches(client: pg.ClientBase, runId: string, panelId: string, list: readonly Mismatch[]): Promise<void> {
  if (list.length === 0) return;
  const lines: string[] = new Array(list.length);
  const runField = copyField(runId);
  const panelField = copyField(panelId);
  for (let i = 0; i < list.length; i++) {
    const m = list[i];
    lines[i] = `${runField}\t${panelField}\t${copyField(m.elementId)}\t${copyField(m.track)}\t${copyField(m.kind)}\t${m.startMs}\t${m.endMs}\t${m.worstError}\t${copyField(m.expected)}\t${copyField(m.seen)}\t${m.atMs}`;
  }
  await copyFrom(client, "COPY mismatch (run_id, panel_id, element_id, track, kind, start_ms, end_ms, worst_error, expected, seen, at_ms) FROM STDIN", lines.join("\n") + "\n");
}

/** Judges a run from storage with its own tolerance and stores the result. */
export async function judgeRun(db: Database, runId: string, tolerance?: Partial<Tolerances>): Promise<void> {
  const [row] = await db.select().from(run).where(eq(run.id, runId));
  if (!row) return;
  const panels = await judgeStored(db, row, tolerance ?? row.tolerance);
  await storeJudgement(db, runId, panels);
}

