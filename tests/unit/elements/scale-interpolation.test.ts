import fc from "fast-check";
import seedrandom from "seedrandom";
import { describe, expect, it } from "vitest";
import {
  AngleComputer,
  angleFunction,
  valueToTravelAngle,
  angleMonotonicity,
  angleToValue,
  fritschCarlsonTangents,
  gaugeScale,
  sampleScale,
  scaleSlopeAt,
  steepestSlope,
  valueToAngle,
  type GaugeScale,
  type SweepScale,
} from "../../../shared/elements/scale";

function sweep(points: [number, number][], interpolation: "linear" | "monotone-cubic"): SweepScale {
  return gaugeScale.parse({ kind: "sweep", interpolation, points: points.map(([value, angle]) => ({ value, angle })) }) as SweepScale;
}

/**
 * A plain C2 cubic spline with natural ends, written here only to show the contrast: it is the
 * interpolant Fritsch and Carlson (SIAM J. Numer. Anal. 17(2), 1980, section 1) show overshooting
 * monotone data. Solves the standard tridiagonal system for the second derivatives.
 */
function naturalCubicSpline(xs: number[], ys: number[]): (x: number) => number {
  const n = xs.length;
  const h = xs.slice(1).map((x, i) => x - xs[i]);
  const second = new Array<number>(n).fill(0);
  const diagonal = new Array<number>(n).fill(1);
  const rhs = new Array<number>(n).fill(0);
  const upper = new Array<number>(n).fill(0);
  const lower = new Array<number>(n).fill(0);
  for (let i = 1; i < n - 1; i++) {
    lower[i] = h[i - 1];
    diagonal[i] = 2 * (h[i - 1] + h[i]);
    upper[i] = h[i];
    rhs[i] = 6 * ((ys[i + 1] - ys[i]) / h[i] - (ys[i] - ys[i - 1]) / h[i - 1]);
  }
  for (let i = 1; i < n; i++) {
    const factor = lower[i] / diagonal[i - 1];
    diagonal[i] -= factor * upper[i - 1];
    rhs[i] -= factor * rhs[i - 1];
  }
  second[n - 1] = rhs[n - 1] / diagonal[n - 1];
  for (let i = n - 2; i >= 0; i--) second[i] = (rhs[i] - upper[i] * second[i + 1]) / diagonal[i];
  return (x: number) => {
    let k = 0;
    while (k < n - 2 && x > xs[k + 1]) k++;
    const a = (xs[k + 1] - x) / h[k];
    const b = (x - xs[k]) / h[k];
    return a * ys[k] + b * ys[k + 1] + ((a ** 3 - a) * second[k] + (b ** 3 - b) * second[k + 1]) * (h[k] ** 2) / 6;
  };
}

function denseValues(values: number[], perInterval: number): number[] {
  const out: number[] = [];
  for (let k = 0; k < values.length - 1; k++) {
    for (let j = 0; j < perInterval; j++) out.push(values[k] + ((values[k + 1] - values[k]) * j) / perInterval);
  }
  out.push(values[values.length - 1]);
  return out;
}

describe("linear interpolation", () => {
  const airspeed = sweep(
    [
      [40, 0],
      [60, 30],
      [100, 130],
      [200, 300],
    ],
    "linear",
  );

  it("hits every table point exactly and goes straight between them", () => {
    expect(valueToAngle(airspeed, 40)).toEqual({ angle: 0, pinned: null });
    expect(valueToAngle(airspeed, 100)).toEqual({ angle: 130, pinned: null });
    expect(valueToAngle(airspeed, 80).angle).toBeCloseTo(80, 12);
    expect(valueToAngle(airspeed, 150).angle).toBeCloseTo(215, 12);
  });

  it("pins at the stops beyond the table", () => {
    expect(valueToAngle(airspeed, 12)).toEqual({ angle: 0, pinned: "low" });
    expect(valueToAngle(airspeed, 260)).toEqual({ angle: 300, pinned: "high" });
  });

  it("gives NaN for NaN rather than a made-up angle", () => {
    expect(Number.isNaN(valueToAngle(airspeed, Number.NaN).angle)).toBe(true);
  });

  it("reports the slope of each interval and finds the steepest one", () => {
    expect(scaleSlopeAt(airspeed, 80)).toBeCloseTo(2.5, 12);
    expect(scaleSlopeAt(airspeed, 300)).toBe(0);
    expect(steepestSlope(airspeed)).toEqual({ degreesPerUnit: 2.5, atValue: 60 });
    expect(steepestSlope(airspeed, 110, 190).degreesPerUnit).toBeCloseTo(1.7, 12);
    // A range that ends exactly on a table point does not borrow the next interval's slope.
    expect(steepestSlope(airspeed, 100, 200).degreesPerUnit).toBeCloseTo(1.7, 12);
  });
});

describe("monotone cubic interpolation (Fritsch and Carlson 1980)", () => {
  it("passes through every table point", () => {
    const scale = sweep(
      [
        [0, 0],
        [10, 5],
        [30, 90],
        [60, 200],
        [100, 220],
      ],
      "monotone-cubic",
    );
    for (const point of scale.points) expect(valueToAngle(scale, point.value).angle).toBeCloseTo(point.angle, 12);
  });

  it("reproduces a straight line exactly", () => {
    // A cubic Hermite with every tangent equal to the common slope is the line itself; the
    // three-point initial tangents give that slope on evenly and unevenly spaced points alike.
    const scale = sweep(
      [
        [0, 10],
        [1, 13],
        [5, 25],
        [6, 28],
      ],
      "monotone-cubic",
    );
    for (let value = 0; value <= 6; value += 0.25) expect(valueToAngle(scale, value).angle).toBeCloseTo(10 + 3 * value, 10);
  });

  it("does not overshoot a flat stretch followed by a jump, where a plain cubic spline does", () => {
    // Fritsch and Carlson (1980) section 1: monotone data with a flat run and a sharp rise make a
    // C2 spline wiggle outside the data. Table: flat at 0, then a jump to 100.
    const table: [number, number][] = [
      [0, 0],
      [1, 0],
      [2, 0],
      [3, 100],
      [4, 100],
      [5, 100],
    ];
    const xs = table.map(([x]) => x);
    const ys = table.map(([, y]) => y);
    const spline = naturalCubicSpline(xs, ys);
    const values = denseValues(xs, 100);
    const splineAngles = values.map(spline);
    // The contrast: the plain spline leaves the data range on both sides and is not monotone.
    expect(Math.min(...splineAngles)).toBeLessThan(-1);
    expect(Math.max(...splineAngles)).toBeGreaterThan(101);

    for (const interpolation of ["linear", "monotone-cubic"] as const) {
      const scale = sweep(table, interpolation);
      const angles = values.map((value) => valueToAngle(scale, value).angle);
      expect(Math.min(...angles)).toBe(0);
      expect(Math.max(...angles)).toBe(100);
      for (let i = 1; i < angles.length; i++) expect(angles[i]).toBeGreaterThanOrEqual(angles[i - 1]);
      // Flat stretches stay flat: the pointer does not creep on a dead band.
      for (const value of values.filter((v) => v <= 2 || v >= 3)) {
        expect(valueToAngle(scale, value).angle).toBe(value <= 2 ? 0 : 100);
      }
    }
  });

  it("keeps every random monotone table monotone (seeded property test)", () => {
    // Property from Fritsch and Carlson (1980), Theorem 2 and section 4: with tangents in the
    // region alpha^2 + beta^2 <= 9 every interval of monotone data gives a monotone cubic.
    const random = seedrandom("panelproof-scales-monotone");
    let tablesChecked = 0;
    for (let trial = 0; trial < 400; trial++) {
      const count = 2 + Math.floor(random() * 11);
      const falling = random() < 0.5;
      const points: [number, number][] = [];
      let value = (random() - 0.5) * 1000;
      let angle = (random() - 0.5) * 100;
      for (let i = 0; i < count; i++) {
        points.push([value, angle]);
        // Widths from tiny to wide, rises from none (flat) to steep, to stress the tangent limits.
        value += random() < 0.2 ? random() * 0.01 + 1e-3 : random() * 200 + 1e-3;
        const rise = random() < 0.25 ? 0 : random() < 0.3 ? random() * 150 : random() * 10;
        angle += falling ? -rise : rise;
      }
      const span = Math.max(...points.map(([, a]) => a)) - Math.min(...points.map(([, a]) => a));
      if (span > 360) continue;
      const scale = sweep(points, "monotone-cubic");
      const xs = points.map(([x]) => x);
      // Violations are collected and asserted once per table: an expect per sample is slow.
      const violations: string[] = [];
      const values = denseValues(xs, 40);
      let previous = valueToAngle(scale, values[0]).angle;
      for (const v of values.slice(1)) {
        const current = valueToAngle(scale, v).angle;
        if (falling ? current > previous : current < previous) violations.push(`turns back at value ${v}`);
        previous = current;
      }
      // Within each interval the curve stays between that interval's own two angles.
      for (let k = 0; k < points.length - 1; k++) {
        const low = Math.min(points[k][1], points[k + 1][1]);
        const high = Math.max(points[k][1], points[k + 1][1]);
        for (let j = 1; j < 20; j++) {
          const value = xs[k] + ((xs[k + 1] - xs[k]) * j) / 20;
          const angleInside = valueToAngle(scale, value).angle;
          if (angleInside < low || angleInside > high) violations.push(`leaves interval ${k} at value ${value}`);
        }
      }
      // The tangents themselves sit in the paper's monotone region.
      const tangents = fritschCarlsonTangents(xs, points.map(([, a]) => a));
      for (let k = 0; k < points.length - 1; k++) {
        const secant = (points[k + 1][1] - points[k][1]) / (xs[k + 1] - xs[k]);
        if (secant === 0) {
          if (tangents[k] !== 0 || tangents[k + 1] !== 0) violations.push(`flat interval ${k} has tangents`);
          continue;
        }
        const alpha = tangents[k] / secant;
        const beta = tangents[k + 1] / secant;
        if (alpha < 0 || beta < 0 || alpha * alpha + beta * beta > 9 + 1e-9) {
          violations.push(`interval ${k} tangents outside the region: alpha ${alpha}, beta ${beta}`);
        }
      }
      // valueToAngle clamps each interval into its data range against rounding, which would hide an
      // overshoot: so the raw Hermite cubic built from those tangents is checked as well.
      for (let k = 0; k < points.length - 1; k++) {
        const [x0, y0] = points[k];
        const [x1, y1] = points[k + 1];
        const width = x1 - x0;
        const slack = 1e-9 * (Math.abs(y0) + Math.abs(y1) + 1);
        let previousRaw = y0;
        for (let j = 1; j <= 40; j++) {
          const t = j / 40;
          const raw =
            (2 * t ** 3 - 3 * t ** 2 + 1) * y0 +
            (t ** 3 - 2 * t ** 2 + t) * width * tangents[k] +
            (-2 * t ** 3 + 3 * t ** 2) * y1 +
            (t ** 3 - t ** 2) * width * tangents[k + 1];
          if (falling ? raw > previousRaw + slack : raw < previousRaw - slack) violations.push(`raw cubic turns back in interval ${k}`);
          if (raw < Math.min(y0, y1) - slack || raw > Math.max(y0, y1) + slack) violations.push(`raw cubic overshoots interval ${k}`);
          previousRaw = raw;
        }
      }
      expect(violations, `table ${JSON.stringify(points)}`).toEqual([]);
      tablesChecked++;
    }
    expect(tablesChecked).toBeGreaterThan(300);
  });

  it("stays within each interval's angles on a table that turns back", () => {
    // Fritsch and Carlson (1980): tangents are set to 0 where the data change direction, so each
    // interval is monotone like its two points even when the whole table is not.
    const scale = sweep(
      [
        [0, 0],
        [10, 180],
        [20, 90],
        [30, 270],
      ],
      "monotone-cubic",
    );
    for (let k = 0; k < 3; k++) {
      const [a0, a1] = [scale.points[k].angle, scale.points[k + 1].angle];
      for (let j = 0; j <= 50; j++) {
        const angle = valueToAngle(scale, k * 10 + (10 * j) / 50).angle;
        expect(angle).toBeGreaterThanOrEqual(Math.min(a0, a1) - 1e-12);
        expect(angle).toBeLessThanOrEqual(Math.max(a0, a1) + 1e-12);
      }
    }
  });

  it("finds the steepest point of a cubic inside an interval, not only at its ends", () => {
    const scale = sweep(
      [
        [0, 0],
        [10, 0],
        [20, 100],
        [30, 100],
      ],
      "monotone-cubic",
    );
    // Flat tangents at 10 and 20 make the middle interval the smoothstep 100 (3t^2 - 2t^3), whose
    // slope peaks mid-way at 1.5 x the secant: 15 degrees per unit at value 15.
    const steepest = steepestSlope(scale);
    expect(steepest.degreesPerUnit).toBeCloseTo(15, 10);
    expect(steepest.atValue).toBeCloseTo(15, 10);
    expect(scaleSlopeAt(scale, 15)).toBeCloseTo(15, 10);
  });
});

describe("reading a value back from an angle", () => {
  const scales: GaugeScale[] = (["linear", "monotone-cubic"] as const).flatMap((interpolation) => [
    sweep(
      [
        [0, 10],
        [50, 40],
        [120, 200],
        [250, 330],
      ],
      interpolation,
    ),
    sweep(
      [
        [-6000, 300],
        [-1000, 200],
        [0, 150],
        [1000, 100],
        [6000, 0],
      ],
      interpolation,
    ),
  ]);

  it("round-trips every value on rising and falling scales", () => {
    for (const scale of scales) {
      const points = (scale as SweepScale).points;
      const first = points[0].value;
      const last = points[points.length - 1].value;
      for (let i = 0; i <= 200; i++) {
        const value = first + ((last - first) * i) / 200;
        const reading = angleToValue(scale, valueToAngle(scale, value).angle);
        expect(reading.ok).toBe(true);
        if (reading.ok) expect(reading.value).toBeCloseTo(value, 6);
      }
    }
  });

  it("reports an angle at or beyond a stop as the end of the table", () => {
    const scale = scales[0];
    expect(angleToValue(scale, -20)).toEqual({ ok: true, value: 0, valueRange: { from: 0, to: 0 }, atStop: "low" });
    expect(angleToValue(scale, 330)).toEqual({ ok: true, value: 250, valueRange: { from: 250, to: 250 }, atStop: "high" });
  });

  it("gives the whole span of a dead band, choosing the end nearest a hint", () => {
    const airspeed = sweep(
      [
        [0, 0],
        [40, 0],
        [60, 30],
        [200, 300],
      ],
      "monotone-cubic",
    );
    expect(angleToValue(airspeed, 0)).toEqual({ ok: true, value: 0, valueRange: { from: 0, to: 40 }, atStop: "low" });
    const hinted = angleToValue(airspeed, 0, { near: 25 });
    expect(hinted.ok && hinted.value).toBe(25);
    const inMiddle = sweep(
      [
        [0, 0],
        [10, 90],
        [20, 90],
        [30, 180],
      ],
      "linear",
    );
    expect(angleToValue(inMiddle, 90)).toEqual({ ok: true, value: 10, valueRange: { from: 10, to: 20 }, atStop: null });
  });

  it("refuses a scale whose angles turn back, naming the point", () => {
    const turning = sweep(
      [
        [0, 0],
        [10, 180],
        [20, 90],
      ],
      "linear",
    );
    expect(angleMonotonicity(turning)).toEqual({ monotone: false, turnsAtPoint: 1 });
    const reading = angleToValue(turning, 100);
    expect(reading.ok).toBe(false);
    if (!reading.ok) {
      expect(reading.pointIndex).toBe(1);
      expect(reading.reason).toMatch(/turn back at point 1/);
    }
  });
});

describe("sampling a curve for plotting", () => {
  it("covers the table evenly and includes every table point", () => {
    const scale = sweep(
      [
        [0, 0],
        [33, 100],
        [100, 300],
      ],
      "monotone-cubic",
    );
    const samples = sampleScale(scale, { count: 11 });
    expect(samples[0]).toEqual({ value: 0, angle: 0 });
    expect(samples[samples.length - 1]).toEqual({ value: 100, angle: 300 });
    expect(samples.map((s) => s.value)).toContain(33);
    expect(samples).toHaveLength(12);
    for (let i = 1; i < samples.length; i++) expect(samples[i].value).toBeGreaterThan(samples[i - 1].value);
  });

  it("plots beyond the stops flat when asked for a wider range", () => {
    const scale = sweep(
      [
        [0, 0],
        [100, 300],
      ],
      "linear",
    );
    const samples = sampleScale(scale, { count: 5, fromValue: -100, toValue: 200 });
    expect(samples.map((s) => s.value)).toEqual([-100, -25, 0, 50, 100, 125, 200]);
    expect(samples.map((s) => s.angle)).toEqual([0, 0, 0, 150, 300, 300, 300]);
  });
});

describe("AngleComputer (the engine's per-sample form)", () => {
  it("gives the same bits as angleFunction on sweeps and valueToTravelAngle on full circles", () => {
    const sweepOf = (interpolation: "linear" | "monotone-cubic") =>
      gaugeScale.parse({ kind: "sweep", interpolation, points: [0, 40, 60, 100, 200].map((value, i) => ({ value, angle: [0, 15, 90, 200, 300][i] })) });
    const circle = gaugeScale.parse({ kind: "full-circle", period: 1000, angleAtZero: 12, turn: "counterclockwise" });
    fc.assert(
      fc.property(fc.double({ min: -100, max: 400, noNaN: true }), (value) => {
        for (const scale of [sweepOf("linear"), sweepOf("monotone-cubic")]) {
          const computer = new AngleComputer(scale);
          computer.value = value;
          computer.compute();
          expect(Object.is(computer.angle, angleFunction(scale)(value))).toBe(true);
        }
        const computer = new AngleComputer(circle);
        computer.value = value;
        computer.compute();
        expect(Object.is(computer.angle, valueToTravelAngle(circle, value))).toBe(true);
      }),
      { numRuns: 300 },
    );
  });
});
