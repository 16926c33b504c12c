import { useEffect, useLayoutEffect, useMemo, useRef, useState } from "react";
import uPlot from "uplot";
import "uplot/dist/uPlot.min.css";
import type { PointerTracesView } from "../../../shared/api/run-reports";
import { ErrorNote, Loading } from "../../components/ui";
import { usePointerTraces, type ReportSource } from "./report-queries";
import { clock } from "./words";

const EXPECTED = "#36597a";
const SEEN = "#c4473c";
const GAP = "rgba(183, 121, 31, 0.18)";
const INK_SOFT = "#5b6470";
const RULE = "#d9dcd6";

/**
 * Expected and seen angle series on one time axis (seconds). The expected needle moves linearly
 * between its points; a report holds until the next one, so seen is drawn as steps. Merging the
 * two time lists keeps each series' own points (nulls elsewhere, spanned).
 */
export function alignTraces(view: Pick<PointerTracesView, "expected" | "seen">): uPlot.AlignedData {
  const e = view.expected;
  const s = view.seen;
  const xs: number[] = [];
  const ev: (number | null)[] = [];
  const sv: (number | null)[] = [];
  let i = 0;
  let j = 0;
  while (i < e.t.length || j < s.t.length) {
    const te = i < e.t.length ? e.t[i] : Infinity;
    const ts = j < s.t.length ? s.t[j] : Infinity;
    const t = Math.min(te, ts);
    xs.push(t / 1000);
    ev.push(te === t ? e.angle[i++] : null);
    sv.push(ts === t ? s.angle[j++] : null);
  }
  return [xs, ev, sv];
}

/**
 * For a pointer: the expected needle and what the panel reported, plotted together over the run,
 * with stretches without data shaded and the report's current instant marked; a click seeks.
 * Data from GET .../traces (the stored seen log), through the workshop or a share link.
 */
export function PointerTraces({ source, panelId, elementId, atMs, fromMs, toMs, onSeek }: { source: ReportSource; panelId: string; elementId: string; atMs: number; fromMs: number; toMs: number; onSeek?: (ms: number) => void }) {
  const traces = usePointerTraces(source, panelId, elementId);
  const box = useRef<HTMLDivElement>(null);
  const plot = useRef<uPlot | null>(null);
  const [width, setWidth] = useState(640);
  const latest = useRef({ atMs, onSeek, gaps: [] as { fromMs: number; toMs: number }[] });
  latest.current = { atMs, onSeek, gaps: traces.data?.gaps ?? [] };
  const data = useMemo(() => (traces.data ? alignTraces(traces.data) : null), [traces.data]);

  useLayoutEffect(() => {
    const target = box.current;
    if (!target) return;
    const measure = () => setWidth(Math.max(240, Math.floor(target.clientWidth)));
    measure();
    const observer = new ResizeObserver(measure);
    observer.observe(target);
    return () => observer.disconnect();
  }, [traces.isSuccess]);

  useEffect(() => {
    const target = box.current;
    if (!target || !data) return;
    const opts: uPlot.Options = {
      width,
      height: 240,
      legend: { show: true },
      cursor: { drag: { x: false, y: false } },
      scales: { x: { time: false, auto: false, range: () => [fromMs / 1000, Math.max(fromMs + 1, toMs) / 1000] } },
      axes: [
        { stroke: INK_SOFT, grid: { stroke: RULE, width: 1 }, font: "11px 'Roboto Mono', monospace", values: (_u, splits) => splits.map((v) => clock(v * 1000)) },
        { stroke: INK_SOFT, grid: { stroke: RULE, width: 1 }, font: "11px 'Roboto Mono', monospace", size: 52, values: (_u, splits) => splits.map((v) => `${Math.round(v)}°`) },
      ],
      series: [
        { label: "time", value: (_u, v) => (v === null || v === undefined ? "—" : clock(v * 1000)) },
        { label: "expected", stroke: EXPECTED, width: 2, spanGaps: true, points: { show: false }, value: (_u, v) => (v === null || v === undefined ? "—" : `${v.toFixed(1)}°`) },
        {
          label: "seen",
          stroke: SEEN,
          width: 1.5,
          dash: [5, 3],
          spanGaps: true,
          paths: uPlot.paths.stepped!({ align: 1 }),
          points: { show: false },
          value: (_u, v) => (v === null || v === undefined ? "—" : `${v.toFixed(1)}°`),
        },
      ],
      hooks: {
        drawClear: [
          (u) => {
            const ctx = u.ctx;
            ctx.save();
            ctx.fillStyle = GAP;
            for (const g of latest.current.gaps) {
              const x0 = u.valToPos(g.fromMs / 1000, "x", true);
              const x1 = u.valToPos(g.toMs / 1000, "x", true);
              ctx.fillRect(x0, u.bbox.top, Math.max(1, x1 - x0), u.bbox.height);
            }
            ctx.restore();
          },
        ],
        draw: [
          (u) => {
            const ctx = u.ctx;
            const x = u.valToPos(latest.current.atMs / 1000, "x", true);
            ctx.save();
            ctx.strokeStyle = "#1d2327";
            ctx.lineWidth = 1.5 * devicePixelRatio;
            ctx.beginPath();
            ctx.moveTo(x, u.bbox.top);
            ctx.lineTo(x, u.bbox.top + u.bbox.height);
            ctx.stroke();
            ctx.restore();
          },
        ],
      },
    };
    const u = new uPlot(opts, data, target);
    plot.current = u;
    const click = () => {
      const left = u.cursor.left;
      if (left !== undefined && left >= 0) latest.current.onSeek?.(Math.round(u.posToVal(left, "x") * 1000));
    };
    u.over.addEventListener("click", click);
    return () => {
      u.over.removeEventListener("click", click);
      u.destroy();
      plot.current = null;
    };
  }, [data, width, fromMs, toMs]);

  // Moving the instant only redraws the marker.
  useEffect(() => {
    plot.current?.redraw(false, false);
  }, [atMs]);

  if (traces.isPending) return <Loading what="Reading the pointer's reports" />;
  if (traces.error) return <ErrorNote error={traces.error} />;
  const t = traces.data;
  return (
    <figure className="flex flex-col gap-2" aria-label={`Traces of ${t.label}`} data-testid={`traces-${t.elementId}`}>
      <div ref={box} className="w-full" />
      <figcaption className="text-xs text-ink-soft">
        <span style={{ color: EXPECTED }}>━ expected</span> · <span style={{ color: SEEN }}>╌ seen</span> ({t.seen.t.length} reports, {t.expected.t.length} expected points)
        {t.gaps.length > 0 && " · shaded: no data"}
        {t.wrap && " · a full-circle pointer: angles shown within 0–360°, so a pass through zero jumps"}
      </figcaption>
    </figure>
  );
}
