import { describe, expect, it } from "vitest";
import {
  angleFunction,
  angleToValue,
  gaugeScale,
  normalizeAngle,
  sampleScale,
  scaleSlopeAt,
  shortestArc,
  valueToAngle,
  valueToTravelAngle,
} from "../../../shared/elements/scale";

// An altimeter's 100-ft pointer turns 360 degrees per 1,000 ft (fact of the trade); its 1,000-ft
// pointer turns once per 10,000 ft (fact of the trade).
const hundredsPointer = gaugeScale.parse({ kind: "full-circle", period: 1000 });
const thousandsPointer = gaugeScale.parse({ kind: "full-circle", period: 10_000 });

describe("full-circle pointers", () => {
  it("turns the 100-ft pointer once per 1,000 ft", () => {
    expect(valueToAngle(hundredsPointer, 0)).toEqual({ angle: 0, pinned: null });
    expect(valueToAngle(hundredsPointer, 250).angle).toBe(90);
    expect(valueToAngle(hundredsPointer, 1000).angle).toBe(0);
    expect(valueToAngle(hundredsPointer, 12_345).angle).toBeCloseTo(124.2, 9);
    expect(valueToAngle(thousandsPointer, 12_345).angle).toBeCloseTo(84.42, 9);
  });

  it("wraps values below zero onto the dial", () => {
    // An altimeter below sea level at -250 ft shows the 100-ft pointer at 750 ft, 270 degrees.
    expect(valueToAngle(hundredsPointer, -250).angle).toBe(270);
    expect(valueToAngle(hundredsPointer, -1000).angle).toBe(0);
    expect(Object.is(valueToAngle(hundredsPointer, -1000).angle, -0)).toBe(false);
  });

  it("honours the angle at zero and a counter-clockwise turn", () => {
    const scale = gaugeScale.parse({ kind: "full-circle", period: 360, angleAtZero: 90, turn: "counterclockwise" });
    expect(valueToAngle(scale, 0).angle).toBe(90);
    expect(valueToAngle(scale, 90).angle).toBe(0);
    expect(valueToAngle(scale, 180).angle).toBe(270);
    expect(scaleSlopeAt(scale, 10)).toBe(-1);
    const reading = angleToValue(scale, 270);
    expect(reading.ok && reading.value).toBeCloseTo(180, 12);
  });

  it("counts whole turns for the motor and for plots", () => {
    expect(valueToTravelAngle(hundredsPointer, 2500)).toBe(900);
    expect(valueToTravelAngle(hundredsPointer, -250)).toBe(-90);
    const samples = sampleScale(hundredsPointer, { count: 5 });
    expect(samples).toEqual([
      { value: 0, angle: 0 },
      { value: 250, angle: 90 },
      { value: 500, angle: 180 },
      { value: 750, angle: 270 },
      { value: 1000, angle: 360 },
    ]);
  });

  it("reads a reported angle back as the value nearest the expected one", () => {
    const plain = angleToValue(hundredsPointer, 90);
    expect(plain).toEqual({ ok: true, value: 250, valueRange: { from: 250, to: 250 }, atStop: null });
    // Expected 12,240 ft; the panel reports 100 degrees, i.e. x,277.8 ft: the nearest is 12,277.8.
    const reading = angleToValue(hundredsPointer, 100, { near: 12_240 });
    expect(reading.ok && reading.value).toBeCloseTo(12_277.78, 2);
    // Across a turn boundary: expected 12,990 ft, reported 3.6 degrees (x,010 ft) means 13,010 ft.
    const acrossTurn = angleToValue(hundredsPointer, 3.6, { near: 12_990 });
    expect(acrossTurn.ok && acrossTurn.value).toBeCloseTo(13_010, 6);
  });
});

describe("shortest arc between two pointer angles", () => {
  it.each([
    [350, 10, 20],
    [10, 350, -20],
    [0, 90, 90],
    [90, 0, -90],
    [0, 180, 180],
    [180, 0, 180],
    [0, 540, 180],
    [720, 1, 1],
    [-30, 30, 60],
    [359.5, 0.5, 1],
    [45, 45, 0],
  ])("from %d to %d is %d degrees", (from, to, arc) => {
    expect(shortestArc(from, to)).toBeCloseTo(arc, 9);
  });

  it("is never more than half a turn and agrees with the angles modulo 360", () => {
    for (let from = -720; from <= 720; from += 37) {
      for (let to = -720; to <= 720; to += 41) {
        const arc = shortestArc(from, to);
        expect(arc).toBeGreaterThan(-180);
        expect(arc).toBeLessThanOrEqual(180);
        expect(normalizeAngle(from + arc)).toBeCloseTo(normalizeAngle(to), 9);
      }
    }
  });
});

describe("prepared angle function", () => {
  it("gives the same angles as valueToAngle on every kind of scale, stops included", () => {
    const scales = [
      hundredsPointer,
      gaugeScale.parse({ kind: "full-circle", period: 360, angleAtZero: 90, turn: "counterclockwise" }),
      ...(["linear", "monotone-cubic"] as const).map((interpolation) =>
        gaugeScale.parse({
          kind: "sweep",
          interpolation,
          points: [
            { value: 0, angle: 0 },
            { value: 40, angle: 0 },
            { value: 60, angle: 35 },
            { value: 200, angle: 290 },
          ],
        }),
      ),
    ];
    for (const scale of scales) {
      const angleOf = angleFunction(scale);
      for (let value = -1500; value <= 1500; value += 7.3) {
        expect(angleOf(value)).toBe(valueToAngle(scale, value).angle);
      }
    }
  });
});
