import { useRef, useState, type PointerEvent as ReactPointerEvent } from "react";
import type { Element, PointerElement } from "../../shared/elements/kinds";
import { valueToAngle } from "../../shared/elements/scale/scale";
import type { ExpectedState } from "../../shared/expect/types";
import type { Panel } from "../../shared/panel/schema";

/**
 * The virtual panel drawn as SVG from a definition: lamps as lenses with their legend, pointers
 * on dials with scale ticks (pointers sharing a gauge name on one dial), readouts as segment
 * digits, breakers, switches and levers with their position words, buttons and encoders. With
 * `states` it shows what each element should show at one instant, in words as well as colour.
 */

const C = {
  face: "#23292e",
  faceSoft: "#343c43",
  dial: "#e7e2d6",
  engraved: "#9aa3aa",
  lensOff: "#2c3338",
  lit: "#e0a526",
  litText: "#1f2428",
  dark: "#15191c",
  band: "#f3f0e8",
  bad: "#c4473c",
  highlight: "#e0a526",
};

type PanelLike = Pick<Panel, "elements" | "layout">;

export interface DrawnItem {
  /** The elements drawn here: one, or every pointer of one gauge. */
  elements: Element[];
  x: number;
  y: number;
  rotation: number;
}

export interface Arrangement {
  width: number;
  height: number;
  cell: number;
  items: DrawnItem[];
  /** True when some or all elements had no layout position and were placed in a grid. */
  autoPlaced: boolean;
}

const AUTO_CELL = 44;

/** Where everything goes: the layout's positions, and a grid for elements without one. */
export function arrange(p: PanelLike): Arrangement {
  const positions = p.layout?.positions ?? {};
  const items: DrawnItem[] = [];
  const byGauge = new Map<string, DrawnItem>();
  for (const el of p.elements) {
    const gauge = el.kind === "pointer" && el.gauge ? el.gauge : null;
    const existing = gauge ? byGauge.get(gauge) : undefined;
    const pos = positions[el.id];
    if (existing) {
      existing.elements.push(el);
      if (pos && Number.isNaN(existing.x)) Object.assign(existing, { x: pos.x, y: pos.y, rotation: pos.rotation ?? 0 });
      continue;
    }
    const item: DrawnItem = { elements: [el], x: pos ? pos.x : Number.NaN, y: pos ? pos.y : Number.NaN, rotation: pos?.rotation ?? 0 };
    items.push(item);
    if (gauge) byGauge.set(gauge, item);
  }
  const placed = items.filter((i) => !Number.isNaN(i.x));
  const unplaced = items.filter((i) => Number.isNaN(i.x));
  // The cell: the closest two placed items, so drawings never overlap their neighbours.
  let cell = AUTO_CELL;
  if (placed.length > 1) {
    let nearest = Infinity;
    for (let i = 0; i < placed.length; i++)
      for (let j = i + 1; j < placed.length; j++) nearest = Math.min(nearest, Math.hypot(placed[i].x - placed[j].x, placed[i].y - placed[j].y));
    cell = Math.max(14, Math.min(70, nearest * 0.95));
  } else if (p.layout) cell = Math.max(14, Math.min(70, Math.min(p.layout.width, p.layout.height) * 0.8));
  let width = p.layout?.width ?? 0;
  let height = p.layout?.height ?? 0;
  if (unplaced.length) {
    const step = cell * 1.25;
    const cols = p.layout ? Math.max(1, Math.floor(width / step)) : Math.max(3, Math.ceil(Math.sqrt(unplaced.length * 2)));
    const top = p.layout ? height + step * 0.6 : step * 0.6;
    unplaced.forEach((item, i) => {
      item.x = step * 0.6 + (i % cols) * step;
      item.y = top + Math.floor(i / cols) * step;
    });
    width = Math.max(width, step * 0.2 + Math.min(cols, unplaced.length) * step);
    height = top + Math.ceil(unplaced.length / cols) * step - step * 0.4;
  }
  return { width: Math.max(width, cell), height: Math.max(height, cell), cell, items, autoPlaced: unplaced.length > 0 };
}

const rad = (deg: number) => (deg * Math.PI) / 180;
/** Dial degrees are clockwise from 12 o'clock. */
const polar = (r: number, deg: number) => ({ x: r * Math.sin(rad(deg)), y: -r * Math.cos(rad(deg)) });

function splitLegend(text: string, maxChars: number): string[] {
  if (text.length <= maxChars || !text.includes(" ")) return [text];
  const words = text.split(" ");
  let best = [text];
  let bestWidth = Infinity;
  for (let k = 1; k < words.length; k++) {
    const a = words.slice(0, k).join(" ");
    const b = words.slice(k).join(" ");
    const w = Math.max(a.length, b.length);
    if (w < bestWidth) {
      bestWidth = w;
      best = [a, b];
    }
  }
  return best;
}

/** The words a preview prints under an element: its state, never colour alone. */
export function stateWords(el: Element, s: ExpectedState | undefined): string | null {
  if (!s) return null;
  switch (el.kind) {
    case "lamp":
      if (!s.lamp) return "no value yet";
      if (s.mode === "dark" || s.mode?.includes("supply.dark")) return "DARK · no power";
      if (s.lamp.state === "off") return "OFF";
      if (s.lamp.state === "flashing") return `FLASHING ${s.lamp.periodMs} ms`;
      return s.lamp.level < 255 ? `ON ${Math.round((s.lamp.level / 255) * 100)}%` : "ON";
    case "pointer":
      if (s.angle === undefined) return "no value yet";
      return `${s.flag ? "OFF flag · " : ""}${s.angle.toFixed(1)}°`;
    case "readout":
      return s.text === undefined ? "no value yet" : s.text === "" ? "BLANK" : null;
    case "breaker":
      return s.breaker ? s.breaker.toUpperCase() : "no value yet";
    case "switch":
    case "lever":
      return s.position ? `${s.position}${s.mode === "held" ? " · held" : s.mode === "locked" ? " · locked" : ""}` : "no value yet";
    case "button": {
      const lit = s.lamp && s.lamp.state !== "off" ? " · lit" : "";
      return s.pressed === undefined ? "no value yet" : `${s.pressed ? "PRESSED" : "released"}${lit}`;
    }
    case "encoder":
      return s.detents === undefined ? "no value yet" : `${s.detents > 0 ? "+" : ""}${s.detents} detents`;
  }
}

interface ItemProps {
  item: DrawnItem;
  cell: number;
  states?: Record<string, ExpectedState>;
}

function Caption({ y, text, size, bold = false, fill = C.dial }: { y: number; text: string; size: number; bold?: boolean; fill?: string }) {
  return (
    <text y={y} textAnchor="middle" fontSize={size} fill={fill} fontWeight={bold ? 700 : 400} fontFamily="Source Sans 3, sans-serif">
      {text}
    </text>
  );
}

function LampDrawing({ el, s, cell, lampState, legend }: { el: Element; s?: ExpectedState; cell: number; lampState?: ExpectedState["lamp"]; legend: string }) {
  const w = cell * 0.86;
  const h = cell * 0.46;
  const lit = lampState && lampState.state !== "off";
  const level = lampState && lampState.state !== "off" ? lampState.level / 255 : 0;
  const dark = s?.mode === "dark" || s?.mode?.includes("supply.dark");
  const lines = splitLegend(legend.toUpperCase(), 9);
  const fs = Math.min(cell * 0.13, (w * 0.92) / (Math.max(...lines.map((l) => l.length)) * 0.62));
  return (
    <g>
      <rect x={-w / 2} y={-h / 2 - cell * 0.06} width={w} height={h} rx={cell * 0.05} fill={dark ? C.dark : C.lensOff} stroke={C.engraved} strokeWidth={cell * 0.012} />
      {lit && <rect x={-w / 2} y={-h / 2 - cell * 0.06} width={w} height={h} rx={cell * 0.05} fill={C.lit} opacity={0.35 + 0.65 * level} />}
      {lampState?.state === "flashing" && (
        <rect
          x={-w / 2 - cell * 0.04}
          y={-h / 2 - cell * 0.1}
          width={w + cell * 0.08}
          height={h + cell * 0.08}
          rx={cell * 0.07}
          fill="none"
          stroke={C.lit}
          strokeWidth={cell * 0.02}
          strokeDasharray={`${cell * 0.06} ${cell * 0.04}`}
        />
      )}
      {lines.map((line, i) => (
        <text
          key={i}
          y={-cell * 0.06 + (i - (lines.length - 1) / 2) * fs * 1.05 + fs * 0.35}
          textAnchor="middle"
          fontSize={fs}
          fontWeight={700}
          letterSpacing={fs * 0.04}
          fill={lit ? C.litText : C.engraved}
          fontFamily="Source Sans 3, sans-serif"
        >
          {line}
        </text>
      ))}
      <title>{el.label}</title>
    </g>
  );
}

function dialTicks(p: PointerElement, r: number, cell: number) {
  const ticks: { angle: number; label: string }[] = [];
  if (p.scale.kind === "full-circle") {
    const sign = p.scale.turn === "counterclockwise" ? -1 : 1;
    for (let i = 0; i < 10; i++) ticks.push({ angle: p.scale.angleAtZero + sign * i * 36, label: String(i) });
  } else {
    const points = p.scale.points;
    if (points.length < 5) {
      // Few table points (a linear gauge): ticks at round values across the range, read off the scale.
      const lo = points[0].value;
      const hi = points[points.length - 1].value;
      const raw = (hi - lo) / 8;
      const mag = 10 ** Math.floor(Math.log10(raw || 1));
      const step = [1, 2, 2.5, 5, 10].map((k) => k * mag).find((k) => k >= raw) ?? raw;
      for (let v = Math.ceil(lo / step) * step, i = 0; v <= hi + 1e-9; v += step, i++) {
        ticks.push({ angle: valueToAngle(p.scale, v).angle, label: i % 2 === 0 ? formatTick(v) : "" });
      }
      return drawTicks(ticks, r, cell);
    }
    const every = Math.ceil(points.length / 9);
    points.forEach((pt, i) => {
      // Two points on one angle (a dead band) get one tick.
      if (i > 0 && Math.abs(pt.angle - points[i - 1].angle) < 1e-9) return;
      ticks.push({ angle: pt.angle, label: i % every === 0 || i === points.length - 1 ? formatTick(pt.value) : "" });
    });
  }
  return drawTicks(ticks, r, cell);
}

function drawTicks(ticks: { angle: number; label: string }[], r: number, cell: number) {
  const fs = cell * 0.085;
  return ticks.map((t, i) => {
    const a = polar(r * 0.98, t.angle);
    const b = polar(r * 0.84, t.angle);
    const l = polar(r * 0.68, t.angle);
    return (
      <g key={i}>
        <line x1={a.x} y1={a.y} x2={b.x} y2={b.y} stroke={C.dial} strokeWidth={cell * 0.014} />
        {t.label && (
          <text x={l.x} y={l.y + fs * 0.35} textAnchor="middle" fontSize={fs} fill={C.dial} fontFamily="Roboto Mono, monospace">
            {t.label}
          </text>
        )}
      </g>
    );
  });
}

function formatTick(v: number): string {
  if (Math.abs(v) >= 1000) return `${Math.round(v / 100) / 10}k`;
  return String(Math.round(v * 100) / 100);
}

/** The angle a pointer rests at without a preview: where its park angle or scale starts. */
function restAngle(p: PointerElement): number {
  if (p.parkAngle !== undefined) return p.parkAngle;
  if (p.scale.kind === "full-circle") return p.scale.angleAtZero;
  return valueToAngle(p.scale, p.scale.points[0].value).angle;
}

function DialDrawing({ pointers, states, cell }: { pointers: PointerElement[]; states?: Record<string, ExpectedState>; cell: number }) {
  const r = cell * 0.42;
  const first = pointers[0];
  const flags = pointers.some((p) => states?.[p.id]?.flag);
  const arc =
    first.scale.kind === "sweep"
      ? (() => {
          const a0 = first.scale.points[0].angle;
          const a1 = first.scale.points[first.scale.points.length - 1].angle;
          const lo = Math.min(a0, a1);
          const hi = Math.max(a0, a1);
          const p0 = polar(r * 0.98, lo);
          const p1 = polar(r * 0.98, hi);
          return `M ${p0.x} ${p0.y} A ${r * 0.98} ${r * 0.98} 0 ${hi - lo > 180 ? 1 : 0} 1 ${p1.x} ${p1.y}`;
        })()
      : null;
  return (
    <g>
      <circle r={r * 1.08} fill={C.faceSoft} />
      <circle r={r} fill={C.face} stroke={C.engraved} strokeWidth={cell * 0.01} />
      {arc && <path d={arc} fill="none" stroke={C.dial} strokeWidth={cell * 0.01} />}
      {first.scale.kind === "full-circle" && <circle r={r * 0.98} fill="none" stroke={C.dial} strokeWidth={cell * 0.01} />}
      {dialTicks(first, r, cell)}
      {flags && (
        <g transform={`translate(${-r * 0.62}, ${r * 0.18})`}>
          <rect width={r * 0.5} height={r * 0.3} fill={C.bad} stroke={C.dial} strokeWidth={cell * 0.008} />
          <text x={r * 0.25} y={r * 0.22} textAnchor="middle" fontSize={r * 0.2} fontWeight={700} fill={C.dial} fontFamily="Source Sans 3, sans-serif">
            OFF
          </text>
        </g>
      )}
      {pointers.map((p, i) => {
        const s = states?.[p.id];
        const angle = s?.angle ?? restAngle(p);
        const length = r * (i === 0 ? 0.9 : 0.62);
        const tip = polar(length, angle);
        const tail = polar(r * 0.18, angle + 180);
        const width = cell * (i === 0 ? 0.022 : 0.04);
        return (
          <g key={p.id} data-pointer={p.id} data-angle={angle.toFixed(2)}>
            <line x1={tail.x} y1={tail.y} x2={tip.x} y2={tip.y} stroke={i === 0 ? C.dial : C.lit} strokeWidth={width} strokeLinecap="round" opacity={s?.angle === undefined && states ? 0.35 : 1} />
            <title>{`${p.label}${s?.angle !== undefined ? `: ${s.angle.toFixed(1)}°` : ""}`}</title>
          </g>
        );
      })}
      <circle r={cell * 0.035} fill={C.dial} />
    </g>
  );
}

function ReadoutDrawing({ el, s, cell }: { el: Extract<Element, { kind: "readout" }>; s?: ExpectedState; cell: number }) {
  const width = el.format.width ?? 4;
  const text = s?.text ?? "";
  const w = cell * 0.9;
  const fs = Math.min(cell * 0.26, (w * 0.9) / (Math.max(width, text.length, 1) * 0.62));
  const ghost = el.display === "seven-segment" ? "8".repeat(Math.max(width, text.length)) : "";
  const shown = text.padStart(width, " ");
  return (
    <g>
      <rect x={-w / 2} y={-cell * 0.2} width={w} height={cell * 0.34} rx={cell * 0.03} fill={C.dark} stroke={C.engraved} strokeWidth={cell * 0.01} />
      {ghost && (
        <text y={-cell * 0.03 + fs * 0.35} textAnchor="middle" fontSize={fs} fill="#3a2f16" fontFamily="Roboto Mono, monospace" xmlSpace="preserve">
          {ghost}
        </text>
      )}
      <text y={-cell * 0.03 + fs * 0.35} textAnchor="middle" fontSize={fs} fill={C.lit} fontFamily="Roboto Mono, monospace" xmlSpace="preserve" data-readout={el.id}>
        {shown}
      </text>
    </g>
  );
}

function BreakerDrawing({ s, cell }: { s?: ExpectedState; cell: number }) {
  const out = s?.breaker === "pulled" || s?.breaker === "tripped";
  const rise = out ? cell * 0.12 : 0;
  return (
    <g>
      <line x1={-cell * 0.3} x2={cell * 0.3} y1={cell * 0.08} y2={cell * 0.08} stroke={C.engraved} strokeWidth={cell * 0.015} />
      <rect x={-cell * 0.14} y={cell * 0.02} width={cell * 0.28} height={cell * 0.06} fill={C.faceSoft} stroke={C.engraved} strokeWidth={cell * 0.008} />
      {out && <rect x={-cell * 0.09} y={cell * 0.02 - rise} width={cell * 0.18} height={rise} fill={C.band} stroke={C.engraved} strokeWidth={cell * 0.006} />}
      <rect x={-cell * 0.12} y={-cell * 0.14 - rise} width={cell * 0.24} height={cell * 0.16} rx={cell * 0.03} fill={C.dark} stroke={C.engraved} strokeWidth={cell * 0.01} />
    </g>
  );
}

function PositionsDrawing({ el, s, cell }: { el: Extract<Element, { kind: "switch" | "lever" }>; s?: ExpectedState; cell: number }) {
  const n = el.positions.length;
  const current = s?.position;
  const index = current ? el.positions.indexOf(current) : -1;
  const shownIndex = index >= 0 ? index : 0;
  const span = cell * 0.5;
  // positions[0] at the bottom, the last at the top, as most two- and three-way switches read.
  const yOf = (i: number) => (n === 1 ? 0 : span / 2 - (span * i) / (n - 1)) - cell * 0.05;
  const fs = Math.min(cell * 0.1, (cell * 0.5) / (Math.max(...el.positions.map((p) => p.length)) * 0.6));
  const isLever = el.kind === "lever";
  const knobY = yOf(shownIndex);
  return (
    <g>
      {isLever ? (
        <rect x={-cell * 0.22 - cell * 0.03} y={yOf(n - 1) - cell * 0.05} width={cell * 0.06} height={span + cell * 0.1} rx={cell * 0.03} fill={C.dark} stroke={C.engraved} strokeWidth={cell * 0.008} />
      ) : (
        <circle cx={-cell * 0.22} cy={-cell * 0.05} r={cell * 0.08} fill={C.faceSoft} stroke={C.engraved} strokeWidth={cell * 0.01} />
      )}
      {isLever ? (
        <rect x={-cell * 0.34} y={knobY - cell * 0.05} width={cell * 0.24} height={cell * 0.1} rx={cell * 0.02} fill={index >= 0 || !s ? C.dial : C.engraved} />
      ) : (
        <line x1={-cell * 0.22} y1={-cell * 0.05} x2={-cell * 0.22} y2={knobY} stroke={index >= 0 || !s ? C.dial : C.engraved} strokeWidth={cell * 0.05} strokeLinecap="round" />
      )}
      {el.positions.map((pos, i) => {
        const active = s ? i === index : false;
        return (
          <text
            key={pos}
            x={-cell * 0.06}
            y={yOf(i) + fs * 0.35}
            fontSize={fs}
            fontWeight={active ? 700 : 400}
            fill={active ? C.lit : C.engraved}
            fontFamily="Source Sans 3, sans-serif"
          >
            {active ? `▸ ${pos}` : pos}
          </text>
        );
      })}
    </g>
  );
}

function ButtonDrawing({ el, s, cell }: { el: Extract<Element, { kind: "button" }>; s?: ExpectedState; cell: number }) {
  const size = cell * (s?.pressed ? 0.44 : 0.5);
  const lit = s?.lamp && s.lamp.state !== "off";
  const lines = splitLegend(el.label.toUpperCase(), 7);
  const fs = Math.min(cell * 0.1, (size * 0.9) / (Math.max(...lines.map((l) => l.length)) * 0.62));
  return (
    <g>
      <rect x={-cell * 0.29} y={-cell * 0.34} width={cell * 0.58} height={cell * 0.58} rx={cell * 0.06} fill={C.faceSoft} />
      <rect x={-size / 2} y={-size / 2 - cell * 0.05} width={size} height={size} rx={cell * 0.05} fill={lit ? C.lit : C.lensOff} stroke={s?.pressed ? C.dial : C.engraved} strokeWidth={cell * (s?.pressed ? 0.03 : 0.012)} />
      {lines.map((line, i) => (
        <text
          key={i}
          y={-cell * 0.05 + (i - (lines.length - 1) / 2) * fs * 1.05 + fs * 0.35}
          textAnchor="middle"
          fontSize={fs}
          fontWeight={700}
          fill={lit ? C.litText : C.engraved}
          fontFamily="Source Sans 3, sans-serif"
        >
          {line}
        </text>
      ))}
    </g>
  );
}

function EncoderDrawing({ el, s, cell }: { el: Extract<Element, { kind: "encoder" }>; s?: ExpectedState; cell: number }) {
  const r = cell * 0.26;
  const turn = ((s?.detents ?? 0) * 360) / el.detentsPerTurn;
  const notches = Math.min(24, el.detentsPerTurn);
  return (
    <g>
      <circle r={r * 1.15} fill={C.faceSoft} />
      <g transform={`rotate(${turn})`}>
        <circle r={r} fill={C.dark} stroke={C.engraved} strokeWidth={cell * 0.01} />
        {Array.from({ length: notches }, (_, i) => {
          const a = polar(r, (i * 360) / notches);
          const b = polar(r * 0.86, (i * 360) / notches);
          return <line key={i} x1={a.x} y1={a.y} x2={b.x} y2={b.y} stroke={C.engraved} strokeWidth={cell * 0.008} />;
        })}
        <line x1={0} y1={-r * 0.2} x2={0} y2={-r * 0.8} stroke={C.dial} strokeWidth={cell * 0.025} strokeLinecap="round" />
      </g>
    </g>
  );
}

function ItemDrawing({ item, cell, states }: ItemProps) {
  const el = item.elements[0];
  const s = states?.[el.id];
  const labelSize = cell * 0.1;
  const label = item.elements.length > 1 ? (el.kind === "pointer" && el.gauge ? el.gauge : el.label) : el.label;
  const words = item.elements.length > 1 ? null : stateWords(el, s);
  const placeholder = item.elements.every((e) => e.placeholder);
  const below = el.kind === "pointer" ? cell * 0.56 : el.kind === "lamp" ? cell * 0.3 : cell * 0.36;
  let body;
  switch (el.kind) {
    case "lamp":
      body = <LampDrawing el={el} s={s} cell={cell} lampState={s?.lamp} legend={el.label} />;
      break;
    case "pointer":
      body = <DialDrawing pointers={item.elements as PointerElement[]} states={states} cell={cell * 1.2} />;
      break;
    case "readout":
      body = <ReadoutDrawing el={el} s={s} cell={cell} />;
      break;
    case "breaker":
      body = <BreakerDrawing s={s} cell={cell} />;
      break;
    case "switch":
    case "lever":
      body = <PositionsDrawing el={el} s={s} cell={cell} />;
      break;
    case "button":
      body = <ButtonDrawing el={el} s={s} cell={cell} />;
      break;
    case "encoder":
      body = <EncoderDrawing el={el} s={s} cell={cell} />;
      break;
  }
  return (
    <g opacity={placeholder ? 0.55 : 1}>
      {body}
      {placeholder && (
        <rect x={-cell * 0.48} y={-cell * 0.48} width={cell * 0.96} height={cell * 0.96} fill="none" stroke={C.engraved} strokeWidth={cell * 0.012} strokeDasharray={`${cell * 0.05} ${cell * 0.04}`} />
      )}
      {el.kind !== "lamp" && <Caption y={below} text={label} size={labelSize} fill={C.engraved} />}
      {words && <Caption y={below + (el.kind !== "lamp" ? labelSize * 1.15 : 0)} text={words} size={labelSize} bold fill={C.dial} />}
      {placeholder && <Caption y={-cell * 0.52} text="placeholder" size={labelSize * 0.9} fill={C.engraved} />}
    </g>
  );
}

export interface PanelDrawingProps {
  panel: PanelLike;
  /** Expected state per element id at one instant (a preview); absent: the definition only. */
  states?: Record<string, ExpectedState>;
  selected?: string | null;
  onSelect?: (elementId: string) => void;
  title?: string;
  className?: string;
  /**
   * When given, elements can be dragged to a new place (a builder's layout); called on drop with
   * the item's elements (every pointer of a shared dial) and where it was dropped, in the layout's
   * units. A press without movement still selects. Absent: nothing moves (viewers, previews, runs).
   */
  onPlace?: (elementIds: string[], at: { x: number; y: number }) => void;
}

/** Client pixels a press must travel before it counts as a drag rather than a click. */
const DRAG_THRESHOLD_PX = 4;

interface Drag {
  ids: string[];
  pointerId: number;
  clientX: number;
  clientY: number;
  /** The item's position minus the pointer's, in drawing units, so the item does not jump. */
  offsetX: number;
  offsetY: number;
  x: number;
  y: number;
  moved: boolean;
}

export function PanelDrawing({ panel, states, selected, onSelect, title = "Virtual panel", className = "", onPlace }: PanelDrawingProps) {
  const svgRef = useRef<SVGSVGElement>(null);
  const [drag, setDrag] = useState<Drag | null>(null);
  const a = arrange(panel);
  if (panel.elements.length === 0 && !panel.layout) Object.assign(a, { width: 240, height: 50, cell: 44 });
  const pad = a.cell * 0.7;
  const vb = `${-pad} ${-pad} ${a.width + pad * 2} ${a.height + pad * 2}`;

  /** Client pixels to drawing units, through the SVG's own transform (viewBox and scaling). */
  const toDrawing = (clientX: number, clientY: number) => {
    const svg = svgRef.current;
    const matrix = svg?.getScreenCTM();
    if (!svg || !matrix) return { x: 0, y: 0 };
    const point = new DOMPoint(clientX, clientY).matrixTransform(matrix.inverse());
    return { x: point.x, y: point.y };
  };
  const startDrag = (item: DrawnItem) => (e: ReactPointerEvent<SVGGElement>) => {
    if (!onPlace || e.button !== 0) return;
    e.preventDefault();
    svgRef.current?.setPointerCapture(e.pointerId);
    const at = toDrawing(e.clientX, e.clientY);
    setDrag({
      ids: item.elements.map((el) => el.id),
      pointerId: e.pointerId,
      clientX: e.clientX,
      clientY: e.clientY,
      offsetX: item.x - at.x,
      offsetY: item.y - at.y,
      x: item.x,
      y: item.y,
      moved: false,
    });
  };
  const moveDrag = (e: ReactPointerEvent<SVGSVGElement>) => {
    if (!drag || e.pointerId !== drag.pointerId) return;
    const at = toDrawing(e.clientX, e.clientY);
    const moved = drag.moved || Math.hypot(e.clientX - drag.clientX, e.clientY - drag.clientY) >= DRAG_THRESHOLD_PX;
    setDrag({ ...drag, x: at.x + drag.offsetX, y: at.y + drag.offsetY, moved });
  };
  const endDrag = (e: ReactPointerEvent<SVGSVGElement>) => {
    if (!drag || e.pointerId !== drag.pointerId) return;
    setDrag(null);
    if (drag.moved) onPlace?.(drag.ids, { x: drag.x, y: drag.y });
    else onSelect?.(drag.ids[0]);
  };

  return (
    <svg
      ref={svgRef}
      viewBox={vb}
      role="img"
      aria-label={title}
      className={`w-full rounded-lg ${className}`}
      style={{ background: C.face, maxHeight: "30rem", touchAction: onPlace ? "none" : undefined }}
      data-testid="panel-drawing"
      onPointerMove={onPlace ? moveDrag : undefined}
      onPointerUp={onPlace ? endDrag : undefined}
      onPointerCancel={onPlace ? () => setDrag(null) : undefined}
    >
      <title>{title}</title>
      {panel.layout && <rect x={0} y={0} width={panel.layout.width} height={panel.layout.height} fill="none" stroke={C.faceSoft} strokeWidth={a.cell * 0.02} rx={a.cell * 0.1} />}
      {panel.elements.length === 0 && (
        <text x={a.width / 2} y={a.height / 2} textAnchor="middle" fontSize={a.cell * 0.14} fill={C.engraved} fontFamily="Source Sans 3, sans-serif">
          No elements yet
        </text>
      )}
      {a.items.map((item) => {
        const ids = item.elements.map((e) => e.id);
        const isSelected = selected ? ids.includes(selected) : false;
        const dragged = drag && drag.ids[0] === ids[0] ? drag : null;
        const x = dragged ? dragged.x : item.x;
        const y = dragged ? dragged.y : item.y;
        return (
          <g
            key={ids[0]}
            transform={`translate(${x} ${y}) rotate(${item.rotation})`}
            // With onPlace, a press without movement selects (the captured pointer's click lands on the svg).
            onClick={onSelect && !onPlace ? () => onSelect(ids[0]) : undefined}
            onPointerDown={onPlace ? startDrag(item) : undefined}
            style={onPlace ? { cursor: dragged?.moved ? "grabbing" : "grab" } : onSelect ? { cursor: "pointer" } : undefined}
            opacity={dragged?.moved ? 0.8 : undefined}
            data-element={ids.join(" ")}
            data-x={x.toFixed(1)}
            data-y={y.toFixed(1)}
          >
            {isSelected && (
              <rect
                x={-a.cell * 0.55}
                y={-a.cell * 0.55}
                width={a.cell * 1.1}
                height={a.cell * 1.2}
                rx={a.cell * 0.08}
                fill="none"
                stroke={C.highlight}
                strokeWidth={a.cell * 0.025}
                strokeDasharray={`${a.cell * 0.08} ${a.cell * 0.05}`}
              />
            )}
            <ItemDrawing item={item} cell={a.cell} states={states} />
          </g>
        );
      })}
    </svg>
  );
}
