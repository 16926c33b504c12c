import { useEffect, useId, useLayoutEffect, useRef, useState } from "react";
import uPlot from "uplot";
import "uplot/dist/uPlot.min.css";
import { formatDuration, formatValue } from "./format";
import { extendToEnd, seriesValueToChannelValue, stepValueAt, type StepSeries, type StripChannel } from "./series";

/**
 * The plot: one strip per channel, stacked on one shared time axis, so a 30,000 ft altitude and
 * an on/off lamp each keep a readable scale. Strips share the cursor (uPlot sync) and the zoom
 * (drag across any strip to select a stretch of time). Each strip's label reads its value at
 * the cursor; a click pins the instant for the full "values at cursor" read-out.
 * Loaded lazily (React.lazy) so uPlot stays out of the main bundle.
 */

export interface SeriesStripsProps {
  channels: StripChannel[];
  series: Record<string, StepSeries | undefined>;
  /** The stretch of time on screen, in ms. */
  range: { fromMs: number; toMs: number };
  cursorMs: number | null;
  onCursor: (ms: number | null) => void;
  onZoom: (range: { fromMs: number; toMs: number }) => void;
  onPin?: (ms: number) => void;
  pinnedMs?: number | null;
  /** Narrow label column, for a plot that shares the screen with an editor. */
  compact?: boolean;
}

const AXIS_WIDTH = 84;
const STRIP_HEIGHT = 86;
const LAST_AXIS_HEIGHT = 30;
const INK = "#1f2428";
const INK_SOFT = "#56606a";
const RULE = "#d9d3c4";
const LINE = "#36597a";
const AMBER = "#b97d0c";

export default function SeriesStrips(props: SeriesStripsProps) {
  const { channels, series, range, cursorMs, pinnedMs, compact } = props;
  const columns = compact ? "grid-cols-[8.5rem_1fr]" : "grid-cols-[13rem_1fr]";
  // The label column (8.5rem = 136 px or 13rem = 208 px) plus a 12 px gap.
  const labelPx = compact ? 148 : 220;
  const syncKey = useId();
  const box = useRef<HTMLDivElement>(null);
  const [width, setWidth] = useState(0);

  useLayoutEffect(() => {
    const el = box.current;
    if (!el) return;
    const measure = () => setWidth(Math.max(200, Math.floor(el.getBoundingClientRect().width) - labelPx));
    measure();
    const observer = new ResizeObserver(measure);
    observer.observe(el);
    return () => observer.disconnect();
  }, [labelPx]);

  return (
    <div ref={box} className="flex flex-col" onMouseLeave={() => props.onCursor(null)}>
      <div className={`mb-1 grid ${columns} gap-3 text-xs text-ink-soft`}>
        <span>
          Cursor{" "}
          <span className="font-mono text-ink" data-testid="cursor-time">
            {cursorMs === null ? "–" : formatDuration(cursorMs)}
          </span>
        </span>
        <span className="text-right">
          Drag across the plot to zoom{props.onPin ? " · click to read every channel at that instant" : ""}
        </span>
      </div>
      {channels.map((channel, i) => {
        const s = series[channel.name];
        const value = s && cursorMs !== null ? seriesValueToChannelValue(channel, stepValueAt(s, cursorMs)) : null;
        return (
          <div key={channel.name} className={`grid ${columns} items-stretch gap-3 border-t border-rule/70 first:border-t-0`}>
            <div className="flex min-w-0 flex-col justify-center py-1">
              <span className={`truncate font-mono text-ink ${compact ? "text-xs" : "text-sm"}`} title={channel.name}>
                {channel.name}
              </span>
              <span className="text-xs text-ink-soft">
                {channel.kind}
                {channel.unit ? ` · ${channel.unit}` : ""}
              </span>
              <span className="font-mono text-base text-ink" aria-live="off" data-testid={`cursor-value-${channel.name}`}>
                {cursorMs === null ? " " : formatValue(value, channel.kind)}
                {cursorMs !== null && value !== null && channel.unit ? <span className="ml-1 text-xs text-ink-soft">{channel.unit}</span> : null}
              </span>
            </div>
            <div className="min-w-0">
              {width > 0 && s ? (
                <Strip
                  channel={channel}
                  series={s}
                  range={range}
                  width={width}
                  last={i === channels.length - 1}
                  syncKey={syncKey}
                  pinnedMs={pinnedMs ?? null}
                  onCursor={props.onCursor}
                  onZoom={props.onZoom}
                  onPin={props.onPin}
                />
              ) : (
                <div style={{ height: STRIP_HEIGHT }} className="grid place-items-center font-mono text-xs text-ink-soft">
                  {s ? "" : "reading…"}
                </div>
              )}
            </div>
          </div>
        );
      })}
    </div>
  );
}

function timeLabel(seconds: number): string {
  return formatDuration(seconds * 1000).replace(/\.0$/, "");
}

interface StripProps {
  channel: StripChannel;
  series: StepSeries;
  range: { fromMs: number; toMs: number };
  width: number;
  last: boolean;
  syncKey: string;
  pinnedMs: number | null;
  onCursor: (ms: number | null) => void;
  onZoom: (range: { fromMs: number; toMs: number }) => void;
  onPin?: (ms: number) => void;
}

function toAligned(series: StepSeries, toMs: number): uPlot.AlignedData {
  const s = extendToEnd(series, toMs);
  return [s.t.map((t) => t / 1000), s.v];
}

function Strip({ channel, series, range, width, last, syncKey, pinnedMs, onCursor, onZoom, onPin }: StripProps) {
  const el = useRef<HTMLDivElement>(null);
  const plot = useRef<uPlot | null>(null);
  const callbacks = useRef({ onCursor, onZoom, onPin });
  callbacks.current = { onCursor, onZoom, onPin };
  const latest = useRef({ series, range, pinnedMs });
  latest.current = { series, range, pinnedMs };
  const valuesKey = channel.values?.join("\u0000") ?? "";

  useEffect(() => {
    const target = el.current;
    if (!target) return;
    const discrete = channel.kind === "boolean" || channel.kind === "enum";
    const labels = channel.kind === "boolean" ? ["false", "true"] : (channel.values ?? []);
    const height = STRIP_HEIGHT + (last ? LAST_AXIS_HEIGHT : 6);
    const opts: uPlot.Options = {
      width,
      height,
      legend: { show: false },
      padding: [6, 22, 0, 0],
      cursor: {
        sync: { key: syncKey, setSeries: false },
        drag: { x: true, y: false, setScale: false },
        points: { size: 7, fill: AMBER, stroke: AMBER },
        // Step semantics: the value under the cursor is the last sample at or before it.
        dataIdx: (u, _seriesIdx, closestIdx, xValue) => {
          const xs = u.data[0];
          let i = closestIdx;
          while (i > 0 && xs[i] > xValue) i--;
          return i;
        },
      },
      scales: {
        x: { time: false, auto: false, range: () => [latest.current.range.fromMs / 1000, latest.current.range.toMs / 1000] },
        y: discrete
          ? { auto: false, range: () => [-0.35, Math.max(1, labels.length - 1) + 0.35] }
          : {
              range: (_u, min, max) => {
                if (min === null || max === null) return [0, 1];
                if (min === max) return [min - 1, max + 1];
                const pad = (max - min) * 0.08;
                return [min - pad, max + pad];
              },
            },
      },
      axes: [
        {
          stroke: INK_SOFT,
          grid: { stroke: RULE, width: 1 },
          ticks: { stroke: RULE, width: 1, size: last ? 4 : 0 },
          size: last ? LAST_AXIS_HEIGHT : 6,
          font: "11px 'Roboto Mono', monospace",
          values: last ? (_u, splits) => splits.map(timeLabel) : (_u, splits) => splits.map(() => ""),
        },
        {
          stroke: INK_SOFT,
          size: AXIS_WIDTH,
          grid: { stroke: RULE, width: 1 },
          ticks: { show: false },
          font: "11px 'Roboto Mono', monospace",
          ...(discrete
            ? {
                splits: () => labels.map((_l, idx) => idx),
                values: (_u: uPlot, splits: number[]) => splits.map((v) => labels[v] ?? ""),
              }
            : { values: (_u: uPlot, splits: number[]) => splits.map((v) => formatValue(v)) }),
        },
      ],
      series: [
        {},
        {
          label: channel.name,
          stroke: LINE,
          width: 1.75,
          // Booleans fill their "true" stretches, so a lamp flash reads as a block.
          fill: channel.kind === "boolean" ? "#36597a1f" : undefined,
          paths: uPlot.paths.stepped!({ align: 1 }),
          points: { show: false },
        },
      ],
      hooks: {
        setCursor: [
          (u) => {
            const left = u.cursor.left;
            callbacks.current.onCursor(left === undefined || left < 0 ? null : Math.max(0, u.posToVal(left, "x") * 1000));
          },
        ],
        setSelect: [
          (u) => {
            const { left, width: w } = u.select;
            if (w > 3) {
              const fromMs = Math.max(0, u.posToVal(left, "x") * 1000);
              const toMs = u.posToVal(left + w, "x") * 1000;
              if (toMs - fromMs >= 1) callbacks.current.onZoom({ fromMs, toMs });
            }
            u.setSelect({ left: 0, top: 0, width: 0, height: 0 }, false);
          },
        ],
        draw: [
          (u) => {
            // The pinned instant: a dashed amber rule across every strip.
            const pinned = latest.current.pinnedMs;
            if (pinned === null) return;
            const x = u.valToPos(pinned / 1000, "x", true);
            if (x < u.bbox.left || x > u.bbox.left + u.bbox.width) return;
            const ctx = u.ctx;
            ctx.save();
            ctx.strokeStyle = AMBER;
            ctx.lineWidth = 1.5 * devicePixelRatio;
            ctx.setLineDash([4 * devicePixelRatio, 3 * devicePixelRatio]);
            ctx.beginPath();
            ctx.moveTo(x, u.bbox.top);
            ctx.lineTo(x, u.bbox.top + u.bbox.height);
            ctx.stroke();
            ctx.restore();
          },
        ],
      },
    };
    const u = new uPlot(opts, toAligned(latest.current.series, latest.current.range.toMs), target);
    plot.current = u;
    const click = () => {
      const left = u.cursor.left;
      if (left !== undefined && left >= 0) callbacks.current.onPin?.(Math.max(0, Math.round(u.posToVal(left, "x") * 1000)));
    };
    u.over.addEventListener("click", click);
    u.over.style.cursor = "crosshair";
    return () => {
      u.over.removeEventListener("click", click);
      u.destroy();
      plot.current = null;
    };
    // Rebuilt only when what the axes show changes; data, range and size are updated in place.
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [channel.name, channel.kind, valuesKey, last, syncKey]);

  useEffect(() => {
    const u = plot.current;
    if (!u) return;
    u.batch(() => {
      u.setData(toAligned(series, range.toMs));
      u.setScale("x", { min: range.fromMs / 1000, max: range.toMs / 1000 });
    });
  }, [series, range]);

  useEffect(() => {
    plot.current?.setSize({ width, height: STRIP_HEIGHT + (last ? LAST_AXIS_HEIGHT : 6) });
  }, [width, last]);

  useEffect(() => {
    plot.current?.redraw(false, false);
  }, [pinnedMs]);

  return <div ref={el} role="img" aria-label={`Plot of ${channel.name}${channel.unit ? ` in ${channel.unit}` : ""} over time`} data-testid={`strip-${channel.name}`} />;
}
