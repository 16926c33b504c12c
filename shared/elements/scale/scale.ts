import { fritschCarlsonTangents, hermiteAt, hermiteSlopeCoefficients, intervalIndex } from "./interpolate";
import type { FullCircleScale, GaugeScale, Interpolation, SweepScale } from "./schema";

/**
 * Pure functions over a validated gauge scale (parse it with `gaugeScale` first). They are called
 * once per pointer per sample by the expected-state engine, so each scale is prepared once (tangents,
 * typed arrays) and the preparation is cached against the scale object.
 */

export type Stop = "low" | "high";

export type AngleDirection = "increasing" | "decreasing" | "flat";

/** Whether a sweep scale's angles are monotone, and if not, the first point where they turn back. */
export type AngleMonotonicity =
  | { monotone: true; direction: AngleDirection; strict: boolean }
  | { monotone: false; turnsAtPoint: number };

interface PreparedSweep {
  kind: "sweep";
  values: Float64Array;
  angles: Float64Array;
  interpolation: Interpolation;
  tangents: Float64Array | null;
  monotonicity: AngleMonotonicity;
}

interface PreparedFullCircle {
  kind: "full-circle";
  period: number;
  angleAtZero: number;
  sign: 1 | -1;
}

type PreparedScale = PreparedSweep | PreparedFullCircle;

const prepared = new WeakMap<GaugeScale, PreparedScale>();

function angleMonotonicityOf(angles: Float64Array): AngleMonotonicity {
  let direction: AngleDirection = "flat";
  let strict = true;
  for (let i = 1; i < angles.length; i++) {
    const step = angles[i] - angles[i - 1];
    if (step === 0) {
      strict = false;
      continue;
    }
    const stepDirection: AngleDirection = step > 0 ? "increasing" : "decreasing";
    if (direction === "flat") direction = stepDirection;
    else if (direction !== stepDirection) return { monotone: false, turnsAtPoint: i - 1 };
  }
  return { monotone: true, direction, strict: strict && direction !== "flat" };
}

function prepare(scale: GaugeScale): PreparedScale {
  const cached = prepared.get(scale);
  if (cached) return cached;
  let result: PreparedScale;
  if (scale.kind === "sweep") {
    const values = Float64Array.from(scale.points, (p) => p.value);
    const angles = Float64Array.from(scale.points, (p) => p.angle);
    result = {
      kind: "sweep",
      values,
      angles,
      interpolation: scale.interpolation,
      tangents: scale.interpolation === "monotone-cubic" ? fritschCarlsonTangents(values, angles) : null,
      monotonicity: angleMonotonicityOf(angles),
    };
  } else {
    result = {
      kind: "full-circle",
      period: scale.period,
      angleAtZero: scale.angleAtZero,
      sign: scale.turn === "clockwise" ? 1 : -1,
    };
  }
  prepared.set(scale, result);
  return result;
}

/** An angle brought into [0, 360). */
export function normalizeAngle(angle: number): number {
  const wrapped = angle % 360;
  // `+ 0` turns -0 into 0 so callers never print "-0".
  return (wrapped < 0 ? wrapped + 360 : wrapped) + 0;
}

/**
 * Signed shortest turn from angle `from` to angle `to`, in (-180, 180]: positive is clockwise.
 * Full-circle pointers are judged on this, so 359 degrees against 1 degree is 2 degrees apart.
 */
export function shortestArc(from: number, to: number): number {
  const difference = normalizeAngle(to - from);
  return difference > 180 ? difference - 360 : difference;
}

export function isFullCircle(scale: GaugeScale): scale is FullCircleScale {
  return scale.kind === "full-circle";
}

export function angleMonotonicity(scale: SweepScale): AngleMonotonicity {
  return (prepare(scale) as PreparedSweep).monotonicity;
}

function sweepAngleAt(sweep: PreparedSweep, value: number): number {
  const { values, angles, tangents } = sweep;
  const k = intervalIndex(values, value);
  if (tangents) return hermiteAt(values, angles, tangents, k, value);
  const fraction = (value - values[k]) / (values[k + 1] - values[k]);
  return angles[k] + fraction * (angles[k + 1] - angles[k]);
}

export interface PointerAngle {
  /** Dial degrees; in [0, 360) for full-circle scales. NaN when the value is NaN. */
  angle: number;
  /** The stop the pointer rests on because the value lies beyond the table, or null. */
  pinned: Stop | null;
}

/** Where the pointer should point for a value. Values beyond a sweep scale's table pin at its stops. */
export function valueToAngle(scale: GaugeScale, value: number): PointerAngle {
  const p = prepare(scale);
  if (p.kind === "full-circle") {
    return { angle: normalizeAngle(p.angleAtZero + (p.sign * 360 * (value % p.period)) / p.period), pinned: null };
  }
  const { values, angles } = p;
  const last = values.length - 1;
  if (value < values[0]) return { angle: angles[0], pinned: "low" };
  if (value > values[last]) return { angle: angles[last], pinned: "high" };
  if (Number.isNaN(value)) return { angle: Number.NaN, pinned: null };
  return { angle: sweepAngleAt(p, value), pinned: null };
}

/**
 * A function from value to angle for one scale, prepared once: the expected-state engine's inner
 * loop calls it per pointer per sample, so it skips the cache lookup and the result object that
 * valueToAngle returns. Same angles as valueToAngle (stops clamp; full-circle in [0, 360)).
 */
export function angleFunction(scale: GaugeScale): (value: number) => number {
  const p = prepare(scale);
  if (p.kind === "full-circle") {
    const { angleAtZero, period, sign } = p;
    // Same arithmetic as valueToAngle, so both give bit-identical angles.
    return (value) => normalizeAngle(angleAtZero + (sign * 360 * (value % period)) / period);
  }
  const { values, angles } = p;
  const first = values[0];
  const lastValue = values[values.length - 1];
  const firstAngle = angles[0];
  const lastAngle = angles[angles.length - 1];
  return (value) => (value < first ? firstAngle : value > lastValue ? lastAngle : sweepAngleAt(p, value));
}

/**
 * The value-to-angle of one scale for a per-sample loop: write `value`, call `compute()`, read
 * `angle`. The number goes in and out through fields because a double passed to or returned from
 * a call the compiler does not inline is boxed (one allocation per call), and the expected-state
 * engine does this once per pointer per sample. Sweep scales give what angleFunction gives;
 * full-circle scales give the travel angle (valueToTravelAngle, turns counted). Same arithmetic in
 * the same order, so the same bits: tests/unit/elements/scale-interpolation.test.ts compares them.
 */
export class AngleComputer {
  value = 0;
  angle = 0;
  // Read by the expected-state engine's fused pointer loop too (shared/expect/pointer-loop.ts).
  readonly full: boolean;
  readonly values: Float64Array;
  readonly angles: Float64Array;
  readonly tangents: Float64Array | null;
  readonly angleAtZero: number;
  readonly sign: number;
  readonly period: number;

  constructor(scale: GaugeScale) {
    const p = prepare(scale);
    this.full = p.kind === "full-circle";
    this.values = p.kind === "sweep" ? p.values : new Float64Array(0);
    this.angles = p.kind === "sweep" ? p.angles : new Float64Array(0);
    this.tangents = p.kind === "sweep" ? p.tangents : null;
    this.angleAtZero = p.kind === "full-circle" ? p.angleAtZero : 0;
    this.sign = p.kind === "full-circle" ? p.sign : 1;
    this.period = p.kind === "full-circle" ? p.period : 1;
  }

  compute(): void {
    const value = this.value;
    if (this.full) {
      this.angle = this.angleAtZero + (this.sign * 360 * value) / this.period;
      return;
    }
    const xs = this.values;
    const ys = this.angles;
    const last = xs.length - 1;
    if (value < xs[0]) {
      this.angle = ys[0];
      return;
    }
    if (value > xs[last]) {
      this.angle = ys[last];
      return;
    }
    // intervalIndex, inlined.
    let k = 0;
    let high = xs.length - 2;
    while (k < high) {
      const middle = (k + high + 1) >> 1;
      if (xs[middle] <= value) k = middle;
      else high = middle - 1;
    }
    const tangents = this.tangents;
    if (tangents === null) {
      const fraction = (value - xs[k]) / (xs[k + 1] - xs[k]);
      this.angle = ys[k] + fraction * (ys[k + 1] - ys[k]);
      return;
    }
    // hermiteAt, inlined.
    const width = xs[k + 1] - xs[k];
    const t = (value - xs[k]) / width;
    const t2 = t * t;
    const t3 = t2 * t;
    const y0 = ys[k];
    const y1 = ys[k + 1];
    const y = (2 * t3 - 3 * t2 + 1) * y0 + (t3 - 2 * t2 + t) * width * tangents[k] + (-2 * t3 + 3 * t2) * y1 + (t3 - t2) * width * tangents[k + 1];
    const low = y0 < y1 ? y0 : y1;
    const top = y0 < y1 ? y1 : y0;
    this.angle = y < low ? low : y > top ? top : y;
  }
}

/**
 * The angle without wrapping: for a full-circle scale the turns are counted (value 2,500 ft on a
 * 1,000-ft pointer is 900 degrees), which is what a continuous-rotation motor has to travel. For a
 * sweep scale it is the same as valueToAngle's angle.
 */
export function valueToTravelAngle(scale: GaugeScale, value: number): number {
  const p = prepare(scale);
  if (p.kind === "full-circle") return p.angleAtZero + (p.sign * 360 * value) / p.period;
  return valueToAngle(scale, value).angle;
}

export type AngleReading =
  | {
      ok: true;
      /** The value the angle shows: the end of valueRange nearest the hint, or its lower end. */
      value: number;
      /**
       * Every value that shows this angle: a single value, or a span where the scale is flat
       * (a dead band). For a full-circle scale, the one turn nearest the hint.
       */
      valueRange: { from: number; to: number };
      /** The angle is at or past a stop, so the value may lie anywhere beyond that end of the table. */
      atStop: Stop | null;
    }
  | {
      ok: false;
      /** The first point where the angles turn back. */
      pointIndex: number;
      reason: string;
    };

export interface AngleToValueOptions {
  /** A value the answer should lie near (the expected value): picks the turn of a full-circle scale and the end of a flat span. */
  near?: number;
}

/**
 * The value a reported angle stands for, used to judge what a panel shows in the gauge's own units.
 * Only monotone scales can be read backwards; a scale whose angles turn back is refused with the
 * point where they turn.
 */
export function angleToValue(scale: GaugeScale, angle: number, options: AngleToValueOptions = {}): AngleReading {
  const p = prepare(scale);
  const { near } = options;
  if (p.kind === "full-circle") {
    const turnFraction = normalizeAngle(p.sign * (angle - p.angleAtZero)) / 360;
    let value = turnFraction * p.period;
    if (near !== undefined && Number.isFinite(near)) value += p.period * Math.round((near - value) / p.period);
    return { ok: true, value, valueRange: { from: value, to: value }, atStop: null };
  }
  const { monotonicity } = p;
  if (!monotonicity.monotone) {
    return {
      ok: false,
      pointIndex: monotonicity.turnsAtPoint,
      reason: `the scale's angles turn back at point ${monotonicity.turnsAtPoint}, so one angle can mean more than one value`,
    };
  }
  // Read an increasing copy of the angles so one search serves both directions.
  const flip = monotonicity.direction === "decreasing" ? -1 : 1;
  const { values, angles } = p;
  const last = values.length - 1;
  const target = flip * angle;
  const angleAt = (i: number) => flip * angles[i];

  const finish = (from: number, to: number, atStop: Stop | null): AngleReading => {
    const value = near !== undefined && Number.isFinite(near) ? Math.min(Math.max(near, from), to) : from;
    return { ok: true, value, valueRange: { from, to }, atStop };
  };
  const endOfFlatRunFrom = (i: number) => {
    let j = i;
    while (j < last && angles[j + 1] === angles[i]) j++;
    return j;
  };
  const startOfFlatRunTo = (i: number) => {
    let j = i;
    while (j > 0 && angles[j - 1] === angles[i]) j--;
    return j;
  };

  if (target <= angleAt(0)) return finish(values[0], values[endOfFlatRunFrom(0)], "low");
  if (target >= angleAt(last)) return finish(values[startOfFlatRunTo(last)], values[last], "high");

  // First point at or past the target angle; the crossing is in the interval before it, or at it.
  let low = 1;
  let high = last;
  while (low < high) {
    const middle = (low + high) >> 1;
    if (angleAt(middle) >= target) high = middle;
    else low = middle + 1;
  }
  const i = low;
  if (angleAt(i) === target) return finish(values[i], values[endOfFlatRunFrom(i)], null);
  const value = solveWithinInterval(p, i - 1, angle);
  return finish(value, value, null);
}

/** The value in interval k whose angle is `angle`; the interval's curve is strictly monotone there. */
function solveWithinInterval(sweep: PreparedSweep, k: number, angle: number): number {
  const { values, angles } = sweep;
  const a0 = angles[k];
  const a1 = angles[k + 1];
  const fraction = (angle - a0) / (a1 - a0);
  if (!sweep.tangents) return values[k] + fraction * (values[k + 1] - values[k]);
  // Bisection: the Fritsch-Carlson segment is monotone, so it cannot miss the root, and 60 halvings
  // reach the limit of double precision on any interval.
  let low = values[k];
  let high = values[k + 1];
  const rising = a1 > a0;
  for (let iteration = 0; iteration < 60 && high - low > 0; iteration++) {
    const middle = low + (high - low) / 2;
    if (middle === low || middle === high) break;
    const middleAngle = hermiteAt(values, angles, sweep.tangents, k, middle);
    if (middleAngle < angle === rising) low = middle;
    else high = middle;
  }
  return low + (high - low) / 2;
}

/**
 * Degrees of pointer travel per unit of value at `value` (the scale's local gain): 0 beyond the
 * stops; at a table point of a linear scale, the slope of the interval above it.
 */
export function scaleSlopeAt(scale: GaugeScale, value: number): number {
  const p = prepare(scale);
  if (p.kind === "full-circle") return (p.sign * 360) / p.period;
  const { values, angles, tangents } = p;
  if (!(value >= values[0] && value <= values[values.length - 1])) return 0;
  const k = intervalIndex(values, value);
  if (!tangents) return (angles[k + 1] - angles[k]) / (values[k + 1] - values[k]);
  const { a, b, c } = hermiteSlopeCoefficients(values, angles, tangents, k);
  const t = (value - values[k]) / (values[k + 1] - values[k]);
  return (a * t + b) * t + c;
}

export interface SteepestSlope {
  /** Largest |degrees per unit of value| over the range. */
  degreesPerUnit: number;
  /** Where it occurs. */
  atValue: number;
}

/**
 * The steepest part of the scale between two values: where a changing value moves the pointer
 * fastest, and so where a motor is most likely to fall behind.
 */
export function steepestSlope(scale: GaugeScale, fromValue?: number, toValue?: number): SteepestSlope {
  const p = prepare(scale);
  if (p.kind === "full-circle") return { degreesPerUnit: 360 / p.period, atValue: fromValue ?? 0 };
  const { values, angles, tangents } = p;
  const last = values.length - 1;
  const from = Math.max(Math.min(fromValue ?? values[0], toValue ?? values[last]), values[0]);
  const to = Math.min(Math.max(fromValue ?? values[0], toValue ?? values[last]), values[last]);
  let best: SteepestSlope = { degreesPerUnit: 0, atValue: from };
  if (!(to >= from)) return best;
  const consider = (slope: number, at: number) => {
    if (Math.abs(slope) > best.degreesPerUnit) best = { degreesPerUnit: Math.abs(slope), atValue: at };
  };
  const firstInterval = intervalIndex(values, from);
  const lastInterval = Math.min(intervalIndex(values, to), last - 1);
  for (let k = firstInterval; k <= lastInterval; k++) {
    const width = values[k + 1] - values[k];
    const start = Math.max(from, values[k]);
    const end = Math.min(to, values[k + 1]);
    // A range that only touches an interval at a table point does not travel on that interval.
    if (end < start || (end === start && firstInterval !== lastInterval)) continue;
    if (!tangents) {
      consider((angles[k + 1] - angles[k]) / width, start);
      continue;
    }
    // The Hermite slope is a quadratic in t: its largest magnitude is at an end or at its vertex.
    const { a, b, c } = hermiteSlopeCoefficients(values, angles, tangents, k);
    const slopeAtT = (t: number) => (a * t + b) * t + c;
    const tStart = (start - values[k]) / width;
    const tEnd = (end - values[k]) / width;
    consider(slopeAtT(tStart), start);
    consider(slopeAtT(tEnd), end);
    if (a !== 0) {
      const tVertex = -b / (2 * a);
      if (tVertex > tStart && tVertex < tEnd) consider(slopeAtT(tVertex), values[k] + tVertex * width);
    }
  }
  return best;
}

export interface ScaleSample {
  value: number;
  /** Dial degrees; for full-circle scales counted without wrapping, so a plot is one rising line. */
  angle: number;
}

export interface SampleScaleOptions {
  /** Evenly spaced samples across the range, besides the table points themselves. Default 101. */
  count?: number;
  /** Range to plot; defaults to the table's first to last value, or one turn of a full-circle scale. */
  fromValue?: number;
  toValue?: number;
}

/** Points along the curve for plotting: evenly spaced samples merged with the table's own points. */
export function sampleScale(scale: GaugeScale, options: SampleScaleOptions = {}): ScaleSample[] {
  const p = prepare(scale);
  const count = Math.max(2, Math.floor(options.count ?? 101));
  const defaultFrom = p.kind === "full-circle" ? 0 : p.values[0];
  const defaultTo = p.kind === "full-circle" ? p.period : p.values[p.values.length - 1];
  const from = options.fromValue ?? defaultFrom;
  const to = options.toValue ?? defaultTo;
  const sampleValues: number[] = [];
  for (let i = 0; i < count; i++) sampleValues.push(from + ((to - from) * i) / (count - 1));
  if (p.kind === "sweep") {
    for (const value of p.values) if (value > Math.min(from, to) && value < Math.max(from, to)) sampleValues.push(value);
  }
  sampleValues.sort((a, b) => (from <= to ? a - b : b - a));
  const samples: ScaleSample[] = [];
  for (const value of sampleValues) {
    if (samples.length > 0 && samples[samples.length - 1].value === value) continue;
    samples.push({ value, angle: valueToTravelAngle(scale, value) });
  }
  return samples;
}
