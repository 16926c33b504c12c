import { memo, useMemo, useState, type MouseEvent } from "react";
import { laneBands, type LaneBand, type TimeInterval } from "../../../shared/compare/lane-bands";
import { clock } from "./words";

/** One lane: an element of the run. `key` is unique across panels (panel id and element id). */
export interface TimelineElement {
  key: string;
  label: string;
  /** The element's verdict (pass, fail, untested, no_data, placeholder), told by a mark and a word. */
  status?: string;
}

export interface TimelineMismatch extends TimeInterval {
  laneKey: string;
}

/** Recording time without data; `laneKeys` absent means every lane (a link gap of the only panel). */
export interface TimelineGap {
  fromMs: number;
  toMs: number;
  laneKeys?: readonly string[];
}

export interface TimelineLanesProps {
  elements: readonly TimelineElement[];
  mismatches: readonly TimelineMismatch[];
  gaps: readonly TimelineGap[];
  /** The span drawn: recording time from `fromMs` for `durationMs`. */
  fromMs?: number;
  durationMs: number;
  positionMs: number;
  onSeek?: (ms: number) => void;
  /** Coverage: the instants each lane's expected value changed (the recording exercised it there). */
  changes?: Readonly<Record<string, readonly number[]>>;
}

const LANE_HEIGHT = 26;
const MAX_VISIBLE = 16;
/** Drawn columns per lane: bands closer than one column merge (shared/compare/lane-bands.ts). */
const COLUMNS = 600;
const OVERSCAN = 4;
const MARK: Record<string, string> = { pass: "●", fail: "✕", untested: "○", no_data: "◌", placeholder: "□" };

/**
 * One lane per element over recording time: mismatch bands, stretches without data (hatched)
 * and ticks where the expected value changed (what the recording exercised). Lanes are
 * virtualized (only those scrolled into view are drawn) and bands merged per drawn column, so a
 * run with 200 elements and 10,000 mismatches stays quick; a click seeks there.
 */
export const TimelineLanes = memo(function TimelineLanes({ elements, mismatches, gaps, fromMs = 0, durationMs, positionMs, onSeek, changes }: TimelineLanesProps) {
  const toMs = fromMs + Math.max(1, durationMs);
  const [scrollTop, setScrollTop] = useState(0);

  const bandsByLane = useMemo(() => {
    const grouped = new Map<string, TimeInterval[]>();
    for (const m of mismatches) {
      const list = grouped.get(m.laneKey);
      if (list) list.push(m);
      else grouped.set(m.laneKey, [m]);
    }
    const out = new Map<string, { bands: LaneBand[]; count: number }>();
    for (const [key, list] of grouped) out.set(key, { bands: laneBands(list, fromMs, toMs, COLUMNS), count: list.length });
    return out;
  }, [mismatches, fromMs, toMs]);

  const gapsByLane = useMemo(() => {
    const every: TimeInterval[] = [];
    const byLane = new Map<string, TimeInterval[]>();
    for (const g of gaps) {
      const interval = { startMs: g.fromMs, endMs: g.toMs };
      if (!g.laneKeys) every.push(interval);
      else for (const k of g.laneKeys) byLane.set(k, [...(byLane.get(k) ?? []), interval]);
    }
    return (key: string) => laneBands([...every, ...(byLane.get(key) ?? [])], fromMs, toMs, COLUMNS);
  }, [gaps, fromMs, toMs]);

  const ticksByLane = useMemo(() => {
    const out = new Map<string, LaneBand[]>();
    for (const [key, list] of Object.entries(changes ?? {})) out.set(key, laneBands(list.map((t) => ({ startMs: t, endMs: t })), fromMs, toMs, COLUMNS / 2));
    return out;
  }, [changes, fromMs, toMs]);

  const visible = Math.min(elements.length, MAX_VISIBLE);
  const first = Math.max(0, Math.floor(scrollTop / LANE_HEIGHT) - OVERSCAN);
  const last = Math.min(elements.length, Math.ceil((scrollTop + visible * LANE_HEIGHT) / LANE_HEIGHT) + OVERSCAN);
  const x = (ms: number) => ((ms - fromMs) / (toMs - fromMs)) * 1000;
  const seekFrom = (e: MouseEvent<Element>) => {
    if (!onSeek) return;
    const box = e.currentTarget.getBoundingClientRect();
    const fraction = Math.min(1, Math.max(0, (e.clientX - box.left) / Math.max(1, box.width)));
    onSeek(Math.round(fromMs + fraction * (toMs - fromMs)));
  };
  const cursor = Math.min(1000, Math.max(0, x(positionMs)));

  return (
    <div className="flex flex-col gap-2" data-testid="timeline-lanes">
      <div className="grid grid-cols-[minmax(8rem,14rem)_1fr_4.5rem] items-end gap-2 text-xs text-ink-soft">
        <span>Element</span>
        <svg viewBox="0 0 1000 16" preserveAspectRatio="none" className="h-4 w-full cursor-pointer" onClick={seekFrom} aria-hidden="true">
          {[0, 0.25, 0.5, 0.75, 1].map((f) => (
            <line key={f} x1={f * 1000} x2={f * 1000} y1={10} y2={16} stroke="currentColor" vectorEffect="non-scaling-stroke" />
          ))}
          <line x1={cursor} x2={cursor} y1={0} y2={16} stroke="#1d2327" strokeWidth={2} vectorEffect="non-scaling-stroke" />
        </svg>
        <span className="text-right">mismatches</span>
        <span />
        <span className="flex justify-between font-mono">
          {[0, 0.25, 0.5, 0.75, 1].map((f) => (
            <span key={f}>{clock(fromMs + f * (toMs - fromMs))}</span>
          ))}
        </span>
        <span />
      </div>
      <div
        className="overflow-y-auto rounded-lg border border-rule bg-card"
        style={{ height: visible * LANE_HEIGHT + 2 }}
        onScroll={(e) => setScrollTop(e.currentTarget.scrollTop)}
        role="list"
        aria-label="Timeline: one lane per element"
      >
        <div style={{ height: elements.length * LANE_HEIGHT, position: "relative" }}>
          {elements.slice(first, last).map((el, i) => {
            const index = first + i;
            const m = bandsByLane.get(el.key);
            const noData = gapsByLane(el.key);
            const ticks = ticksByLane.get(el.key) ?? [];
            return (
              <div
                key={el.key}
                role="listitem"
                className="absolute inset-x-0 grid grid-cols-[minmax(8rem,14rem)_1fr_4.5rem] items-center gap-2 border-b border-rule/50 px-2"
                style={{ top: index * LANE_HEIGHT, height: LANE_HEIGHT }}
                data-testid={`lane-${el.key}`}
                data-bands={m?.bands.length ?? 0}
                data-status={el.status}
              >
                <span className="truncate text-xs" title={el.label}>
                  <span aria-hidden="true" className="mr-1 font-mono">
                    {MARK[el.status ?? ""] ?? "·"}
                  </span>
                  {el.label}
                  {el.status === "untested" && <span className="ml-1 text-ink-soft">(never exercised)</span>}
                </span>
                <svg viewBox={`0 0 1000 ${LANE_HEIGHT}`} preserveAspectRatio="none" className={`h-full w-full ${onSeek ? "cursor-pointer" : ""}`} onClick={seekFrom} aria-hidden="true">
                  {noData.map((g) => (
                    <rect key={`g${g.fromMs}`} x={x(g.fromMs)} width={Math.max(1, x(g.toMs) - x(g.fromMs))} y={3} height={LANE_HEIGHT - 6} fill="url(#lane-no-data)" stroke="#b7791f" strokeWidth={1} vectorEffect="non-scaling-stroke" />
                  ))}
                  {m?.bands.map((b) => (
                    <rect key={`m${b.fromMs}`} x={x(b.fromMs)} width={Math.max(1.5, x(b.toMs) - x(b.fromMs))} y={6} height={LANE_HEIGHT - 12} fill="#c4473c" />
                  ))}
                  {ticks.map((t) => (
                    <line key={`t${t.fromMs}`} x1={x(t.fromMs)} x2={x(t.fromMs)} y1={LANE_HEIGHT - 5} y2={LANE_HEIGHT} stroke="#36597a" strokeWidth={1} vectorEffect="non-scaling-stroke" />
                  ))}
                  <line x1={cursor} x2={cursor} y1={0} y2={LANE_HEIGHT} stroke="#1d2327" strokeWidth={1.5} vectorEffect="non-scaling-stroke" />
                </svg>
                <span className="text-right font-mono text-xs">{m?.count ?? 0}</span>
              </div>
            );
          })}
        </div>
        <svg width="0" height="0" className="absolute" aria-hidden="true">
          <defs>
            <pattern id="lane-no-data" width="6" height="6" patternUnits="userSpaceOnUse" patternTransform="rotate(45)">
              <rect width="6" height="6" fill="#f4e3c1" />
              <line x1="0" y1="0" x2="0" y2="6" stroke="#b7791f" strokeWidth="2" />
            </pattern>
          </defs>
        </svg>
      </div>
      <p className="flex flex-wrap gap-4 text-xs text-ink-soft" aria-label="Timeline legend">
        <span>
          <span className="mr-1 inline-block h-2.5 w-4 bg-[#c4473c] align-middle" /> mismatch
        </span>
        <span>
          <span className="mr-1 inline-block h-2.5 w-4 border border-[#b7791f] bg-[#f4e3c1] align-middle" /> no data
        </span>
        <span>
          <span className="mr-1 inline-block h-2.5 w-px bg-[#36597a] align-middle" /> expected change (exercised)
        </span>
        <span>│ the instant shown · {elements.length} lanes, scroll for more</span>
      </p>
    </div>
  );
});
