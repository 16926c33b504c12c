import { z } from "zod";
import { angleAt, valueAt } from "../expect/lookup";
import type { ElementTimeline, ExpectedTimelines, LampShows } from "../expect/types";
import type { LinkGap, SeenSample } from "../compare/types";
import type { Element } from "../elements/kinds";

/**
 * Faults a virtual panel can be told to have, for demos and for testing the tester: each is
 * what a real build gets wrong (a cold joint, a slipped needle, a missed step, a dead digit).
 */
export const fault = z.discriminatedUnion("kind", [
  z.object({ kind: z.literal("lamp_stuck"), element: z.string(), lit: z.boolean() }).strict(),
  z.object({ kind: z.literal("lamp_inverted"), element: z.string() }).strict(),
  z.object({ kind: z.literal("pointer_offset"), element: z.string(), degrees: z.number().min(-360).max(360) }).strict(),
  /** The needle turns `factor` times as far as it should from its first angle (a wrong steps-per-degree). */
  z.object({ kind: z.literal("pointer_scale"), element: z.string(), factor: z.number().min(0).max(10) }).strict(),
  /** The needle moves at most this fast, slower than the instrument (a motor too weak or slow). */
  z.object({ kind: z.literal("pointer_slow"), element: z.string(), degPerSec: z.number().positive().max(10_000) }).strict(),
  /** Every `everyMs` the needle slips `degrees` further (lost steps accumulate, as they do). */
  z.object({ kind: z.literal("missed_steps"), element: z.string(), everyMs: z.number().int().min(10), degrees: z.number().min(-90).max(90) }).strict(),
  /** One digit position (0 = leftmost) never lights: shown as a space. */
  z.object({ kind: z.literal("digit_dropped"), element: z.string(), position: z.number().int().min(0).max(31) }).strict(),
  z.object({ kind: z.literal("breaker_stuck"), element: z.string(), position: z.enum(["in", "pulled", "tripped"]) }).strict(),
  /** The element follows late by this much. */
  z.object({ kind: z.literal("added_lag"), element: z.string(), ms: z.number().int().min(0).max(60_000) }).strict(),
  /** The whole link drops between these instants and then reconnects. */
  z.object({ kind: z.literal("disconnect"), fromMs: z.number().min(0), toMs: z.number().min(0) }).strict(),
]);
export type Fault = z.infer<typeof fault>;
export const faultList = z.array(fault).max(100);

type ElementKind = Element["kind"];

/** The element kinds each fault acts on (what it changes must be something the element shows). */
export const FAULT_TARGETS: Record<Exclude<Fault["kind"], "disconnect">, readonly ElementKind[]> = {
  lamp_stuck: ["lamp", "button"],
  lamp_inverted: ["lamp", "button"],
  pointer_offset: ["pointer"],
  pointer_scale: ["pointer"],
  pointer_slow: ["pointer"],
  missed_steps: ["pointer"],
  digit_dropped: ["readout"],
  breaker_stuck: ["breaker"],
  added_lag: ["lamp", "button", "pointer", "readout", "breaker", "switch", "lever", "encoder"],
};

/** Whether `fault` can act on `el` (a lamp fault on a pointer would change nothing). */
export function faultFits(kind: Fault["kind"], el: Pick<Element, "kind" | "placeholder">): boolean {
  if (kind === "disconnect") return true;
  return !el.placeholder && FAULT_TARGETS[kind].includes(el.kind);
}

/**
 * Why a fault cannot be injected into a panel with these elements, in words, or null. `disconnect`
 * needs a real stretch; the others an element the panel has, of a kind the fault acts on.
 */
export function faultProblem(f: Fault, elements: readonly Pick<Element, "id" | "kind" | "label" | "placeholder">[]): { field: string; message: string } | null {
  if (f.kind === "disconnect") return f.toMs <= f.fromMs ? { field: "toMs", message: "must be after fromMs" } : null;
  const el = elements.find((e) => e.id === f.element);
  if (!el) return { field: "element", message: `the panel has no element "${f.element}"` };
  if (el.placeholder) return { field: "element", message: `"${el.label}" is a placeholder: it is never judged, so a fault on it tests nothing` };
  if (!faultFits(f.kind, el)) return { field: "element", message: `"${el.label}" is a ${el.kind}; this fault acts on a ${FAULT_TARGETS[f.kind].join(" or ")}` };
  return null;
}

export interface SimulatedPanelOptions {
  /** How often a pointer reports its angle (a real board: every few tens of ms). */
  pointerReportMs?: number;
  /** How long a healthy panel takes to follow a change. */
  followMs?: number;
}

function faultsFor(faults: readonly Fault[], id: string) {
  return faults.filter((f) => f.kind !== "disconnect" && f.element === id);
}

export function lampAfterFaults(lamp: LampShows, faults: readonly Fault[]): LampShows {
  let out = lamp;
  for (const f of faults) {
    if (f.kind === "lamp_stuck") out = f.lit ? { state: "on", level: 255 } : { state: "off" };
    if (f.kind === "lamp_inverted") out = out.state === "off" ? { state: "on", level: 255 } : { state: "off" };
  }
  return out;
}

export function textAfterFaults(text: string, faults: readonly Fault[]): string {
  let out = text;
  for (const f of faults) {
    if (f.kind === "digit_dropped" && f.position < out.length) out = `${out.slice(0, f.position)} ${out.slice(f.position + 1)}`;
  }
  return out;
}

/**
 * What a panel with these faults reports for an expected timeline: discrete elements report
 * on every change (after `followMs` plus any added lag), pointers every `pointerReportMs`.
 * Without faults the result judges as a pass: the comparator's own test of itself.
 */
export function simulateSeen(timelines: ExpectedTimelines, faults: readonly Fault[], options: SimulatedPanelOptions = {}) {
  const pointerEvery = options.pointerReportMs ?? 50;
  const follow = options.followMs ?? 20;
  const samples: { elementId: string; sample: SeenSample }[] = [];
  for (const tl of timelines.elements) {
    const mine = faultsFor(faults, tl.id);
    const lag = follow + mine.reduce((sum, f) => sum + (f.kind === "added_lag" ? f.ms : 0), 0);
    const push = (t: number, sample: SeenSample["shows"]) => samples.push({ elementId: tl.id, sample: { t: Math.min(t, timelines.endMs), shows: sample } });
    if (tl.tracks.lamp) for (const c of tl.tracks.lamp) push(c.t + lag, { track: "lamp", lamp: lampAfterFaults(c.shows, mine) });
    if (tl.tracks.text) for (const c of tl.tracks.text) push(c.t + lag, { track: "text", text: textAfterFaults(c.shows, mine) });
    if (tl.tracks.breaker) {
      const stuck = mine.find((f) => f.kind === "breaker_stuck");
      for (const c of tl.tracks.breaker) push(c.t + lag, { track: "breaker", breaker: stuck && stuck.kind === "breaker_stuck" ? stuck.position : c.shows });
    }
    if (tl.tracks.position) for (const c of tl.tracks.position) push(c.t + lag, { track: "position", position: c.shows });
    if (tl.angle) simulatePointer(tl, mine, lag, pointerEvery, timelines, push);
  }
  samples.sort((a, b) => a.sample.t - b.sample.t);
  const gaps: LinkGap[] = faults.flatMap((f) => (f.kind === "disconnect" && f.toMs > f.fromMs ? [{ fromMs: f.fromMs, toMs: f.toMs }] : []));
  // Nothing arrives while the link is down.
  const kept = samples.filter((s) => !gaps.some((g) => s.sample.t >= g.fromMs && s.sample.t < g.toMs));
  return { samples: kept, gaps };
}

function simulatePointer(
  tl: ElementTimeline,
  faults: readonly Fault[],
  lag: number,
  every: number,
  timelines: ExpectedTimelines,
  push: (t: number, shows: SeenSample["shows"]) => void,
) {
  const track = tl.angle!;
  const first = track.angle[0] ?? 0;
  const slow = faults.find((f) => f.kind === "pointer_slow");
  let shown: number | null = null;
  let slipped = 0;
  for (let t = timelines.startMs; t <= timelines.endMs; t += every) {
    // The panel shows at t what it should have shown `lag` earlier.
    const source = t - lag;
    if (source < (track.t[0] ?? 0)) continue;
    // Raw (unwrapped) expected angle, so scale errors and slips act on travel, not on 0..360.
    let target = angleAt({ ...track, wrap: false }, source) ?? first;
    for (const f of faults) {
      if (f.kind === "pointer_scale") target = first + (target - first) * f.factor;
      if (f.kind === "pointer_offset") target += f.degrees;
      if (f.kind === "missed_steps") slipped = Math.floor(source / f.everyMs) * f.degrees;
    }
    target += slipped;
    if (slow && slow.kind === "pointer_slow" && shown !== null) {
      const maxStep = (slow.degPerSec * every) / 1000;
      target = shown + Math.max(-maxStep, Math.min(maxStep, target - shown));
    }
    shown = target;
    push(t, { track: "angle", angle: track.wrap ? ((target % 360) + 360) % 360 : target });
  }
}

export { valueAt };
