import { randomUUID } from "node:crypto";
import { elementKey, mismatchJsonOf } from "./mismatch-json";
import { and, asc, eq, sql, type SQL } from "drizzle-orm";
import type { MismatchView, RunDetail, RunSummary } from "../../shared/api/runs";
import type { ElementStatus, MismatchKind } from "../../shared/compare/types";
import type { Database } from "../db/client";
import { mismatch, recording, run, runElementResult, user } from "../db/schema";
import type { RunManager } from "./run-manager";
import { EMPTY_COUNTS } from "./store";

type RunRow = typeof run.$inferSelect;

export const REPORT_FORMAT = "panelproof.run-report";
export const REPORT_VERSION = 1;

export async function recordingNameOf(db: Database, recordingId: string): Promise<string> {
  const [r] = await db.select({ name: recording.name }).from(recording).where(eq(recording.id, recordingId));
  return r?.name ?? "";
}

export async function creatorNameOf(db: Database, userId: string | null): Promise<string | null> {
  if (!userId) return null;
  const [u] = await db.select({ name: user.name }).from(user).where(eq(user.id, userId));
  return u?.name ?? null;
}

export function summaryOf(row: RunRow, recordingName: string, runs: RunManager): RunSummary {
  const live = runs.session(row.id)?.view();
  return {
    id: row.id,
    name: row.name,
    recordingId: row.recordingId,
    recordingName,
    panelIds: row.links.map((l) => l.panelId),
    state: runs.effectiveState(row),
    speed: live?.speed ?? row.speed,
    positionMs: live?.positionMs ?? row.positionMs,
    durationMs: row.durationMs,
    counts: { ...EMPTY_COUNTS, ...row.counts },
    mismatchCount: row.mismatchCount,
    createdBy: row.createdById,
    createdAt: row.createdAt.toISOString(),
    finishedAt: row.finishedAt?.toISOString() ?? null,
  };
}

export async function elementRowsOf(db: Database, runId: string) {
  return db.select().from(runElementResult).where(eq(runElementResult.runId, runId)).orderBy(asc(runElementResult.panelId), asc(runElementResult.ordinal));
}

export async function mismatchRowsOf(db: Database, runId: string, filter: { elementId?: string; kind?: MismatchKind } = {}): Promise<MismatchView[]> {
  const where: SQL[] = [eq(mismatch.runId, runId)];
  if (filter.elementId) where.push(eq(mismatch.elementId, filter.elementId));
  if (filter.kind) where.push(eq(mismatch.kind, filter.kind));
  const rows = await db.select().from(mismatch).where(and(...where)).orderBy(asc(mismatch.startMs), asc(mismatch.id));
  return rows.map((m) => ({
    id: String(m.id),
    panelId: m.panelId,
    elementId: m.elementId,
    track: m.track,
    kind: m.kind as MismatchKind,
    startMs: m.startMs,
    endMs: m.endMs,
    worstError: m.worstError,
    expected: m.expected,
    seen: m.seen,
    atMs: m.atMs,
  }));
}

export async function detailOf(db: Database, row: RunRow, runs: RunManager): Promise<RunDetail> {
  const summary = summaryOf(row, await recordingNameOf(db, row.recordingId), runs);
  const elements = await elementRowsOf(db, row.id);
  const live = runs.session(row.id)?.view();
  return {
    ...summary,
    elements: elements.map((e) => ({
      panelId: e.panelId,
      elementId: e.elementId,
      label: e.label,
      kind: e.kind,
      status: e.status,
      mismatchCount: e.mismatchCount,
      lag: e.lag,
      noDataMs: e.noDataMs,
      reports: e.reports,
    })),
    lag: row.lag ?? { count: 0, p50: null, p95: null, max: null },
    links:
      live?.links ??
      row.links.map((l) => {
        const s = row.linkStatus.find((x) => x.panelId === l.panelId);
        return { panelId: l.panelId, kind: l.kind, connected: false, faults: s?.faults ?? {}, gaps: s?.gaps ?? [] };
      }),
  };
}

/** The JSON export (docs/run-report.md): the whole report in one document. */
type ElementMismatch = Omit<MismatchView, "panelId" | "elementId">;

/** The JSON export (docs/run-report.md) as objects: for JUnit XML and the e-mailed summary. */
export async function exportOf(db: Database, row: RunRow, runs: RunManager) {
  const [mismatches, parts] = await Promise.all([mismatchRowsOf(db, row.id), reportPartsOf(db, row, runs)]);
  // Grouped in one pass: filtering the whole list once per element was quadratic (10,000 x 200).
  const byElement = new Map<string, ElementMismatch[]>();
  for (const { panelId, elementId, ...m } of mismatches) {
    const key = elementKey(panelId, elementId);
    const list = byElement.get(key);
    if (list) list.push(m);
    else byElement.set(key, [m]);
  }
  return reportOf<ElementMismatch[]>(row, parts, mismatches.length, (panelId, elementId) => byElement.get(elementKey(panelId, elementId)) ?? []);
}

/**
 * The same export as JSON text, for the answers that send it whole (export.json, a share link's
 * report page). Each element's mismatch list is written as JSON by PostgreSQL (compact, in the
 * export's key order; a number may be written differently, 1e-07 for 1e-7) and spliced into
 * the text unread: Node never makes the 10,000 row objects, mismatch objects and their JSON, which
 * on a server that had not served a report yet took most of the page's first second (issue 6,
 * docs/run-report.md "Speed"). `shape` may change the report before it is written (a share link
 * hides the maker); it must keep the mismatch lists as they are.
 */
export async function exportJsonOf(db: Database, row: RunRow, runs: RunManager, shape: (report: ExportedReport<unknown>) => object = (r) => r): Promise<string> {
  const [lists, dbParts] = await Promise.all([mismatchJsonOf(db, row.id, row.judgedAt), reportPartsOf(db, row, runs)]);
  let count = 0;
  for (const list of lists.values()) count += list.count;
  // Each list stands in the report as a string no report can otherwise hold (a fresh random
  // mark), replaced by the list's JSON once the rest is written.
  const mark = `\u0001mismatches:${randomUUID()}:`;
  const spliced: string[] = [];
  const report = reportOf<string | []>(row, dbParts, count, (panelId, elementId) => {
    const list = lists.get(elementKey(panelId, elementId));
    if (!list) return [];
    spliced.push(list.json);
    return `${mark}${spliced.length - 1}`;
  });
  const parts = JSON.stringify(shape(report)).split(new RegExp(`"${escapeRegExp(JSON.stringify(mark).slice(1, -1))}(\\d+)"`));
  // split() with a group alternates: text, list index, text, list index, ..., text.
  for (let i = 1; i < parts.length; i += 2) parts[i] = spliced[Number(parts[i])];
  return parts.join("");
}

const escapeRegExp = (text: string) => text.replace(/[.*+?^${}()|[\]\\]/g, "\\$&");

/** The export with each element's mismatches as `M`. */
export type ExportedReport<M> = ReturnType<typeof reportOf<M>>;

/** What the export reads from the database beside the mismatches; asked side by side with them. */
async function reportPartsOf(db: Database, row: RunRow, runs: RunManager) {
  const [detail, createdBy] = await Promise.all([detailOf(db, row, runs), creatorNameOf(db, row.createdById)]);
  return { detail, createdBy };
}

function reportOf<M>(row: RunRow, { detail, createdBy }: Awaited<ReturnType<typeof reportPartsOf>>, mismatchCount: number, mismatchesOf: (panelId: string, elementId: string) => M) {
  const fromMs = row.segment?.fromMs ?? 0;
  return {
    format: REPORT_FORMAT,
    version: REPORT_VERSION,
    run: {
      id: row.id,
      name: row.name,
      state: detail.state,
      recording: { id: row.recordingId, name: detail.recordingName },
      speed: detail.speed,
      segment: row.segment ?? null,
      tolerance: row.tolerance,
      judgedFromMs: fromMs,
      positionMs: detail.positionMs,
      durationMs: row.durationMs,
      createdBy,
      createdAt: detail.createdAt,
      finishedAt: detail.finishedAt,
      judgedAt: row.judgedAt?.toISOString() ?? null,
    },
    summary: { passed: passed(detail.counts), counts: detail.counts, elements: detail.elements.length, mismatchCount, lag: detail.lag },
    panels: row.panels.map((p) => {
      const link = detail.links.find((l) => l.panelId === p.panelId);
      return {
        panelId: p.panelId,
        name: p.name,
        definitionId: p.definition.id,
        link: { ...row.links.find((l) => l.panelId === p.panelId)!, connected: link?.connected ?? false, faults: link?.faults ?? {}, gaps: link?.gaps ?? [] },
        elements: detail.elements
          .filter((e) => e.panelId === p.panelId)
          .map((e) => ({ ...e, mismatches: mismatchesOf(p.panelId, e.elementId) })),
      };
    }),
  };
}

/** A run passes when nothing failed and nothing went without data. */
export function passed(counts: Record<ElementStatus, number>): boolean {
  return (counts.fail ?? 0) === 0 && (counts.no_data ?? 0) === 0;
}

function xml(text: string): string {
  return text
    .replace(/[\u0000-\u0008\u000b\u000c\u000e-\u001f\ufffe\uffff]/g, "\ufffd")
    .replace(/&/g, "&amp;")
    .replace(/</g, "&lt;")
    .replace(/>/g, "&gt;")
    .replace(/"/g, "&quot;")
    .replace(/'/g, "&apos;");
}

const seconds = (ms: number) => (ms / 1000).toFixed(3);

/**
 * JUnit XML: one testsuite per panel, one testcase per element. Failures (fail and no_data) list
 * their mismatch intervals; placeholders and untested elements are skipped. Times in seconds:
 * a suite's time is the judged span of recording time; elements are judged side by side over
 * that span, so each case gets an equal share and the cases add up to the suite.
 */
export function junitOf(report: Awaited<ReturnType<typeof exportOf>>): string {
  const span = Math.max(0, report.run.positionMs - report.run.judgedFromMs);
  const lines: string[] = ['<?xml version="1.0" encoding="UTF-8"?>'];
  const all = report.panels.flatMap((p) => p.elements);
  const failing = (s: ElementStatus) => s === "fail" || s === "no_data";
  const skipping = (s: ElementStatus) => s === "placeholder" || s === "untested";
  lines.push(
    `<testsuites name="${xml(`Panelproof run ${report.run.name}`)}" tests="${all.length}" failures="${all.filter((e) => failing(e.status)).length}" errors="0" skipped="${all.filter((e) => skipping(e.status)).length}" time="${seconds(span)}">`,
  );
  for (const p of report.panels) {
    const els = p.elements;
    lines.push(
      `  <testsuite name="${xml(`${p.name} (${p.definitionId})`)}" tests="${els.length}" failures="${els.filter((e) => failing(e.status)).length}" errors="0" skipped="${els.filter((e) => skipping(e.status)).length}" time="${seconds(span)}" timestamp="${xml(report.run.createdAt.replace(/\.\d+Z$/, ""))}">`,
    );
    lines.push(`    <properties><property name="recording" value="${xml(report.run.recording.name)}"/><property name="link" value="${xml(p.link.kind)}"/><property name="speed" value="${report.run.speed}"/></properties>`);
    const share = els.length ? span / els.length : 0;
    for (const e of els) {
      const open = `    <testcase classname="${xml(`panelproof.${p.definitionId}`)}" name="${xml(`${e.label} (${e.elementId})`)}" time="${seconds(share)}"`;
      if (e.status === "pass") {
        lines.push(`${open}/>`);
      } else if (skipping(e.status)) {
        const why = e.status === "placeholder" ? "placeholder: built but not interfaced, never judged" : "untested: the recording never changed what this element should show";
        lines.push(`${open}>`, `      <skipped message="${xml(why)}"/>`, "    </testcase>");
      } else if (e.status === "no_data") {
        lines.push(`${open}>`, `      <failure type="no_data" message="${xml(`no data for ${seconds(e.noDataMs)} s (${e.reports} reports)`)}">${xml(`The panel sent no report for this element for ${seconds(e.noDataMs)} s of the run.`)}</failure>`, "    </testcase>");
      } else {
        const body = e.mismatches
          .map((m) => `${seconds(m.startMs)} s to ${seconds(m.endMs)} s: ${m.kind} (${m.track}), expected ${m.expected}, seen ${m.seen}, worst ${Math.round(m.worstError * 1000) / 1000} at ${seconds(m.atMs)} s`)
          .join("\n");
        const kinds = [...new Set(e.mismatches.map((m) => m.kind))].join(",");
        lines.push(`${open}>`, `      <failure type="${xml(kinds || "wrong_value")}" message="${xml(`${e.mismatches.length} mismatch${e.mismatches.length === 1 ? "" : "es"}`)}">${xml(body)}</failure>`, "    </testcase>");
      }
    }
    lines.push("  </testsuite>");
  }
  lines.push("</testsuites>", "");
  return lines.join("\n");
}
