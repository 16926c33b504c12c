import { memo, startTransition, useCallback, useDeferredValue, useEffect, useMemo, useRef, useState } from "react";
import type { RunExpectedView } from "../../../shared/api/run-reports";
import { Card, ErrorNote, Loading } from "../../components/ui";
import { elementKey } from "./live";
import { lazyLayout } from "./lazy-layout";
import { MismatchTable } from "./MismatchTable";
import { PanelAtInstant } from "./PanelAtInstant";
import { PointerTraces } from "./PointerTraces";
import type { RunReportView } from "./queries";
import { useRunExpected, type ReportSource } from "./report-queries";
import { TimelineLanes, type TimelineGap, type TimelineMismatch } from "./TimelineLanes";
import { clock, ms, StateTag, StatusTag } from "./words";

const COUNT_ORDER = ["pass", "fail", "no_data", "untested", "placeholder"];

type ReportMismatch = RunReportView["panels"][number]["elements"][number]["mismatches"][number] & { panelId: string; elementId: string };

/**
 * The drawing stages after the first paint, in order: each starts after the previous one was
 * painted, in a task of its own, rendered as a transition, so no one task draws everything and a
 * click in between is answered first.
 */
const STAGE = { summary: 0, expectedAsked: 1, timeline: 2, panel: 3, rest: 4 } as const;

/**
 * Runs `work` in a new task after the next paint; returns a cancel. (Waiting for an idle moment
 * instead was measured: on a busy machine idle callbacks come only at their timeout, which added
 * up to a second before the timeline showed.)
 */
function afterNextPaint(work: () => void): () => void {
  let timer = 0;
  const frame = window.requestAnimationFrame(() => {
    timer = window.setTimeout(work, 0);
  });
  return () => {
    window.cancelAnimationFrame(frame);
    window.clearTimeout(timer);
  };
}

/**
 * The report of one run, as the workshop and a share link's reader see it: summary, coverage
 * gaps with suggestions, a timeline with one lane per element, the panel at any instant, a
 * pointer's traces, the per-element table and every mismatch. One instant (`atMs`) ties them:
 * the slider, a click on a lane, a trace or a mismatch row moves it.
 *
 * Speed (issue 6, docs/run-report.md): the summary, element tables and mismatch table are drawn
 * first from the report alone; only then is the expected view asked for, and the timeline, the
 * panel and the traces follow one stage at a time. Moving the instant re-renders only what shows it.
 */
export function ReportBody({ report, source }: { report: RunReportView; source: ReportSource }) {
  const { run, summary } = report;
  const [stage, setStage] = useState<number>(STAGE.summary);
  const expected = useRunExpected(source, stage >= STAGE.expectedAsked);
  const waitingForData = stage >= STAGE.expectedAsked && !expected.data;
  useEffect(() => {
    if (stage >= STAGE.rest || waitingForData) return;
    return afterNextPaint(() => startTransition(() => setStage((s) => s + 1)));
  }, [stage, waitingForData]);

  const mismatches = useMemo<ReportMismatch[]>(
    () => report.panels.flatMap((p) => p.elements.flatMap((e) => e.mismatches.map((m) => ({ ...m, panelId: p.panelId, elementId: e.elementId })))),
    [report],
  );
  const mismatchesByPanel = useMemo(() => {
    const out = new Map<string, ReportMismatch[]>(report.panels.map((p) => [p.panelId, []]));
    for (const m of mismatches) out.get(m.panelId)?.push(m);
    return out;
  }, [report, mismatches]);
  const elementCount = report.panels.reduce((n, p) => n + p.elements.length, 0);
  const hasPointer = report.panels.some((p) => p.elements.some((e) => e.kind === "pointer"));
  const labels = useMemo(() => Object.fromEntries(report.panels.flatMap((p) => p.elements.map((e) => [e.elementId, e.label]))), [report]);
  const fromMs = expected.data?.judgedFromMs ?? 0;
  const toMs = expected.data?.judgedToMs ?? run.positionMs;
  const [chosenMs, setAtMs] = useState<number | null>(null);
  const firstMismatch = useMemo(() => mismatches.reduce((min, m) => Math.min(min, m.startMs), Infinity), [mismatches]);
  const atMs = chosenMs ?? (Number.isFinite(firstMismatch) ? firstMismatch : fromMs);
  // What draws the instant (panel, timeline cursor, traces) may lag a fast slider by a frame.
  const shownMs = useDeferredValue(atMs);
  const bounds = useRef({ fromMs, toMs });
  bounds.current = { fromMs, toMs };
  // One function for the whole life of the page, so the memoized tables are not redrawn by a seek.
  const seek = useCallback((t: number) => setAtMs(Math.min(bounds.current.toMs, Math.max(bounds.current.fromMs, t))), []);

  return (
    <div className="flex flex-col gap-5">
      <Card title="Summary" aside={<StateTag state={run.state} />}>
        <p className="mb-3 text-lg font-semibold" role="status" data-testid="verdict">
          {summary.passed ? "● Passed: every element showed what it should." : "✕ Not passed: some elements failed or went without data."}
        </p>
        <dl className="grid grid-cols-2 gap-x-6 gap-y-1 text-sm sm:grid-cols-4">
          <dt className="text-ink-soft">Recording</dt>
          <dd>{run.recording.name}</dd>
          <dt className="text-ink-soft">Played</dt>
          <dd>
            {clock(run.positionMs)} of {clock(run.durationMs)} at {run.speed}×
          </dd>
          <dt className="text-ink-soft">Elements</dt>
          <dd>{summary.elements}</dd>
          <dt className="text-ink-soft">Mismatches</dt>
          <dd>{summary.mismatchCount}</dd>
          <dt className="text-ink-soft">Lag p50 / p95 / max</dt>
          <dd className="font-mono">
            {ms(summary.lag.p50)} / {ms(summary.lag.p95)} / {ms(summary.lag.max)}
          </dd>
          <dt className="text-ink-soft">Created</dt>
          <dd>
            {new Date(run.createdAt).toLocaleString()}
            {run.createdBy ? ` by ${run.createdBy}` : ""}
          </dd>
        </dl>
        <ul className="mt-3 flex flex-wrap gap-3 text-sm" aria-label="Counts">
          {COUNT_ORDER.filter((k) => summary.counts[k] !== undefined).map((k) => (
            <li key={k} className="flex items-center gap-1">
              <StatusTag status={k} /> {summary.counts[k]}
            </li>
          ))}
        </ul>
      </Card>

      <ErrorNote error={expected.error} />
      {!expected.error && (
        <>
          <Card title="Timeline">
            {expected.data && stage >= STAGE.timeline ? (
              <ReportTimeline report={report} view={expected.data} mismatches={mismatches} atMs={shownMs} onSeek={seek} />
            ) : (
              <Reserved height={timelineHeight(elementCount)} busy={stage >= STAGE.expectedAsked} />
            )}
          </Card>
          <Card title="The panel at any instant">
            {expected.data && stage >= STAGE.panel ? (
              <>
                <InstantSlider fromMs={fromMs} toMs={toMs} atMs={atMs} onChange={seek} mismatches={mismatches} />
                <div className="mt-4 grid gap-6 lg:grid-cols-2">
                  {expected.data.panels.map((p) => (
                    <PanelAtInstant key={p.panelId} panel={p} atMs={shownMs} mismatches={mismatchesByPanel.get(p.panelId) ?? NO_MISMATCHES} />
                  ))}
                </div>
              </>
            ) : (
              <Reserved height={PANEL_RESERVED_PX} busy={false} />
            )}
          </Card>
          {expected.data && stage >= STAGE.rest ? (
            <TracesCard report={report} source={source} atMs={shownMs} fromMs={fromMs} toMs={toMs} onSeek={seek} />
          ) : (
            hasPointer && (
              <Card title="A pointer's traces">
                <Reserved height={TRACES_RESERVED_PX} busy={false} />
              </Card>
            )
          )}
        </>
      )}

      {report.panels.map((p) => (
        <PanelElementsCard key={p.panelId} panel={p} rows={stage >= STAGE.expectedAsked ? Infinity : FIRST_PAINT_ELEMENT_ROWS} />
      ))}
      <Card title="Mismatches">
        <MismatchTable mismatches={mismatches} labels={labels} onSeek={seek} />
      </Card>
      {expected.data && stage >= STAGE.rest && <CoverageCard view={expected.data} />}
    </div>
  );
}

const NO_MISMATCHES: ReportMismatch[] = [];

/*
 * Room kept for what is drawn after the first paint, about as tall as what comes, so the table
 * below does not jump away from a reader's pointer while the timeline and the panel arrive.
 */
const timelineHeight = (lanes: number) => Math.min(16, Math.max(1, lanes)) * 26 + 2 + 72;
const PANEL_RESERVED_PX = 380;
const TRACES_RESERVED_PX = 320;

/** Kept room; `busy` says the wait in words (once on the page: the timeline's room says it). */
function Reserved({ height, busy }: { height: number; busy: boolean }) {
  return <div style={{ minHeight: height }}>{busy ? <Loading what="Working out what every element should show" /> : null}</div>;
}

/** Element rows drawn at first paint; the rest follow after it (a panel may have 200). */
const FIRST_PAINT_ELEMENT_ROWS = 24;

/** One panel's link and per-element results (the first `rows` of them); memoized: nothing in it changes with the instant. */
const PanelElementsCard = memo(function PanelElementsCard({ panel: p, rows }: { panel: RunReportView["panels"][number]; rows: number }) {
  return (
    <Card title={p.name}>
      <p className="mb-3 text-sm text-ink-soft">
        {p.link.kind} link
        {Object.keys(p.link.faults).length > 0 && ` · refused frames: ${Object.entries(p.link.faults).map(([k, v]) => `${k} ${v}`).join(", ")}`}
      </p>
      {p.link.gaps.length > 0 && (
        <p className="mb-3 text-sm" aria-label="Stretches without data">
          ◌ Without data: {p.link.gaps.map((g) => `${clock(g.fromMs)}–${clock(g.toMs)}`).join(", ")}
        </p>
      )}
      {/* Laid out only when scrolled near: 200 rows below the fold cost the first paint nothing. */}
      <div className="overflow-x-auto rounded-lg border border-rule" style={lazyLayout(Math.min(rows, p.elements.length))}>
        <table className="w-full text-left text-sm" aria-label={`Elements of ${p.name}`}>
          <thead className="border-b border-rule bg-paper/60 text-ink-soft">
            <tr>
              <th className="px-3 py-2">Element</th>
              <th className="px-3 py-2">Kind</th>
              <th className="px-3 py-2">Status</th>
              <th className="px-3 py-2 text-right">Mismatches</th>
              <th className="px-3 py-2 text-right">Lag p50 / p95 / max</th>
              <th className="px-3 py-2 text-right">Without data</th>
              <th className="px-3 py-2 text-right">Reports</th>
            </tr>
          </thead>
          <tbody>
            {p.elements.slice(0, rows).map((e) => (
              <tr key={e.elementId} className="border-b border-rule/60 last:border-0" data-testid={`report-element-${e.elementId}`}>
                <td className="px-3 py-2">
                  <span className="font-semibold">{e.label}</span> <span className="font-mono text-xs text-ink-soft">{e.elementId}</span>
                </td>
                <td className="px-3 py-2">{e.kind}</td>
                <td className="px-3 py-2">
                  <StatusTag status={e.status} />
                </td>
                <td className="px-3 py-2 text-right">{e.mismatchCount}</td>
                <td className="px-3 py-2 text-right font-mono">
                  {ms(e.lag.p50)} / {ms(e.lag.p95)} / {ms(e.lag.max)}
                </td>
                <td className="px-3 py-2 text-right">{e.noDataMs > 0 ? ms(e.noDataMs) : "—"}</td>
                <td className="px-3 py-2 text-right">{e.reports}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
    </Card>
  );
});

const ReportTimeline = memo(function ReportTimeline({ report, view, mismatches, atMs, onSeek }: { report: RunReportView; view: RunExpectedView; mismatches: ReportMismatch[]; atMs: number; onSeek: (ms: number) => void }) {
  const { elements, laneMismatches, gaps, changes } = useMemo(() => {
    const elements = report.panels.flatMap((p) => p.elements.map((e) => ({ key: elementKey(p.panelId, e.elementId), label: report.panels.length > 1 ? `${e.label} · ${p.name}` : e.label, status: e.status })));
    const laneMismatches: TimelineMismatch[] = mismatches.map((m) => ({ laneKey: elementKey(m.panelId, m.elementId), startMs: m.startMs, endMs: m.endMs }));
    const gaps: TimelineGap[] = report.panels.flatMap((p) => p.link.gaps.map((g) => ({ ...g, laneKeys: p.elements.map((e) => elementKey(p.panelId, e.elementId)) })));
    // Coverage: every instant the expected value changed, per element (pointers: their points).
    const changes: Record<string, number[]> = {};
    for (const p of view.panels) {
      for (const tl of p.timelines.elements) {
        const times = new Set<number>();
        for (const [name, track] of Object.entries(tl.tracks)) if (name !== "mode" && track) for (const c of track.slice(1)) times.add(c.t);
        if (tl.angle) for (const t of tl.angle.t.slice(1)) times.add(t);
        changes[elementKey(p.panelId, tl.id)] = [...times];
      }
    }
    return { elements, laneMismatches, gaps, changes };
  }, [report, view, mismatches]);
  return <TimelineLanes elements={elements} mismatches={laneMismatches} gaps={gaps} fromMs={view.judgedFromMs} durationMs={view.judgedToMs - view.judgedFromMs} positionMs={atMs} onSeek={onSeek} changes={changes} />;
});

/** Index of the first value of ascending `sorted` that `holds` (its length when none does): a binary search. */
function firstIndex(sorted: readonly number[], holds: (value: number) => boolean): number {
  let lo = 0;
  let hi = sorted.length;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (holds(sorted[mid])) hi = mid;
    else lo = mid + 1;
  }
  return lo;
}

function InstantSlider({ fromMs, toMs, atMs, onChange, mismatches }: { fromMs: number; toMs: number; atMs: number; onChange: (ms: number) => void; mismatches: ReportMismatch[] }) {
  const starts = useMemo(() => [...new Set(mismatches.map((m) => m.startMs))].sort((a, b) => a - b), [mismatches]);
  const next = starts[firstIndex(starts, (s) => s > atMs)];
  const previous = starts[firstIndex(starts, (s) => s >= atMs) - 1];
  return (
    <div className="flex flex-wrap items-center gap-3">
      <label className="flex flex-1 items-center gap-3 text-sm font-semibold">
        Instant
        <input
          type="range"
          min={fromMs}
          max={Math.max(fromMs + 1, toMs)}
          step={10}
          value={atMs}
          onChange={(e) => onChange(Number(e.target.value))}
          className="min-w-48 flex-1 accent-amber"
          aria-valuetext={clock(atMs)}
        />
      </label>
      <output className="font-mono text-sm" aria-label="Instant shown">
        {clock(atMs)}
      </output>
      <button type="button" className="rounded-md border border-rule bg-card px-2.5 py-1 text-sm disabled:opacity-40" disabled={previous === undefined} onClick={() => previous !== undefined && onChange(previous)}>
        ‹ Previous mismatch
      </button>
      <button type="button" className="rounded-md border border-rule bg-card px-2.5 py-1 text-sm disabled:opacity-40" disabled={next === undefined} onClick={() => next !== undefined && onChange(next)}>
        Next mismatch ›
      </button>
    </div>
  );
}

/** Gaps listed before the rest fold away: a short recording leaves dozens. */
const GAPS_SHOWN = 6;

type GapRow = RunExpectedView["panels"][number]["coverageGaps"][number] & { panelName: string };

function CoverageGap({ gap: g, showPanel }: { gap: GapRow; showPanel: boolean }) {
  return (
    <li className="rounded-md border border-rule/70 px-3 py-2" data-testid={`coverage-gap-${g.elementId}`}>
      <span className="font-mono" aria-hidden="true">
        ○{" "}
      </span>
      <strong>{g.gap}</strong>
      {showPanel && <span className="text-ink-soft"> ({g.panelName})</span>}
      {g.suggestion && <span className="block text-ink-soft">→ {g.suggestion}</span>}
    </li>
  );
}

const CoverageCard = memo(function CoverageCard({ view }: { view: RunExpectedView }) {
  const gaps = view.panels.flatMap((p) => p.coverageGaps.map((g) => ({ ...g, panelName: p.name })));
  return (
    <Card title="Coverage gaps">
      {gaps.length === 0 ? (
        <p className="text-sm text-ink-soft">The recording exercised every state and range of every element.</p>
      ) : (
        <>
          <p className="mb-3 text-sm text-ink-soft">What the recording never made these elements show, so this run could not test it, and a step a scenario could add.</p>
          <ul className="flex flex-col gap-2 text-sm" aria-label="Coverage gaps">
            {gaps.slice(0, GAPS_SHOWN).map((g, i) => (
              <CoverageGap key={`${g.panelId}-${g.elementId}-${i}`} gap={g} showPanel={view.panels.length > 1} />
            ))}
          </ul>
          {gaps.length > GAPS_SHOWN && (
            <details className="mt-2 text-sm">
              <summary className="cursor-pointer font-semibold text-calm">Show {gaps.length - GAPS_SHOWN} more</summary>
              <ul className="mt-2 flex flex-col gap-2" aria-label="More coverage gaps">
                {gaps.slice(GAPS_SHOWN).map((g, i) => (
                  <CoverageGap key={`${g.panelId}-${g.elementId}-more-${i}`} gap={g} showPanel={view.panels.length > 1} />
                ))}
              </ul>
            </details>
          )}
        </>
      )}
    </Card>
  );
});

function TracesCard({ report, source, atMs, fromMs, toMs, onSeek }: { report: RunReportView; source: ReportSource; atMs: number; fromMs: number; toMs: number; onSeek: (ms: number) => void }) {
  const pointers = report.panels.flatMap((p) => p.elements.filter((e) => e.kind === "pointer").map((e) => ({ panelId: p.panelId, elementId: e.elementId, label: report.panels.length > 1 ? `${e.label} (${p.name})` : e.label, status: e.status })));
  const firstFailing = pointers.find((p) => p.status === "fail") ?? pointers[0];
  const [chosen, setChosen] = useState<string | null>(null);
  const key = chosen ?? (firstFailing ? elementKey(firstFailing.panelId, firstFailing.elementId) : null);
  const pointer = pointers.find((p) => elementKey(p.panelId, p.elementId) === key);
  if (pointers.length === 0) return null;
  return (
    <Card title="A pointer's traces">
      <label className="mb-3 flex items-center gap-2 text-sm font-semibold">
        Pointer
        <select value={key ?? ""} onChange={(e) => setChosen(e.target.value)} className="rounded-md border border-rule bg-card px-2 py-1.5 font-normal">
          {pointers.map((p) => (
            <option key={elementKey(p.panelId, p.elementId)} value={elementKey(p.panelId, p.elementId)}>
              {p.label} {p.status === "fail" ? "(✕ failed)" : ""}
            </option>
          ))}
        </select>
      </label>
      {pointer && <PointerTraces source={source} panelId={pointer.panelId} elementId={pointer.elementId} atMs={atMs} fromMs={fromMs} toMs={toMs} onSeek={onSeek} />}
    </Card>
  );
}
