import { describe, expect, it } from "vitest";
import { checkKeepUp, gaugeScale, motionDemand, motorProfile } from "../../../shared/elements/scale";

// An invented airspeed scale: stop below 40 kt, 2.5 degrees per knot from 60 to 100 kt, 1.7 above.
const airspeed = gaugeScale.parse({
  kind: "sweep",
  interpolation: "linear",
  points: [
    { value: 40, angle: 0 },
    { value: 60, angle: 30 },
    { value: 100, angle: 130 },
    { value: 200, angle: 300 },
  ],
});

// Instrument micro stepper: about 1/3 degree per full step (from memory); 4 microsteps: 1/12 degree.
const microStepper = motorProfile.parse({
  fullStepsPerTurn: 1080,
  microstepping: 4,
  sweep: { kind: "limited", minDegrees: 0, maxDegrees: 315 },
  maxStepsPerSecond: 600,
  accelerationStepsPerSecond2: 3000,
});

describe("can this motor keep up with a ramp", () => {
  it("works the sum on the steepest part of the scale", () => {
    // 10 kt/s on 2.5 deg/kt = 25 deg/s; at 1/12 degree per step, 300 steps/s against 600.
    const check = checkKeepUp(airspeed, microStepper, 10);
    expect(check.keepsUp).toBe(true);
    expect(check.neededDegreesPerSecond).toBeCloseTo(25, 9);
    expect(check.neededStepsPerSecond).toBeCloseTo(300, 9);
    expect(check.loadRatio).toBeCloseTo(0.5, 9);
    expect(check.steepestAtValue).toBe(60);
    // Following at V = 300 steps/s costs a braking distance V^2/2a = 15 steps = 1.25 degrees.
    expect(check.catchUpLagDegrees).toBeCloseTo(1.25, 9);
    expect(check.fallsBehindDegreesPerSecond).toBeNull();
  });

  it("limits the sum to the part of the scale the value moves over", () => {
    // Above 100 kt only the 1.7 deg/kt part counts: 30 kt/s is 51 deg/s, 612 steps/s > 600.
    const check = checkKeepUp(airspeed, microStepper, 30, { fromValue: 120, toValue: 180 });
    expect(check.neededStepsPerSecond).toBeCloseTo(612, 9);
    expect(check.keepsUp).toBe(false);
    // Flat out the motor turns 600 / 12 = 50 deg/s, so it loses 1 deg/s.
    expect(check.fallsBehindDegreesPerSecond).toBeCloseTo(1, 9);
    expect(check.catchUpLagDegrees).toBeNull();
  });

  it("tells when an altimeter's 100-ft pointer is too fast for a motor", () => {
    // 360 degrees per 1,000 ft (fact of the trade). A 20,000 ft/min dive is 1,000/3 ft/s: 120 deg/s.
    // A 1.8 degree stepper (200 full steps per turn, common practice) at 16 microsteps moves
    // 0.1125 degree per step: 1066.7 steps/s are needed; at 800 steps/s it turns 90 deg/s.
    const hundreds = gaugeScale.parse({ kind: "full-circle", period: 1000 });
    const stepper = motorProfile.parse({
      degreesPerFullStep: 1.8,
      microstepping: 16,
      sweep: { kind: "continuous" },
      maxStepsPerSecond: 800,
      accelerationStepsPerSecond2: 8000,
    });
    const check = checkKeepUp(hundreds, stepper, -20_000 / 60);
    expect(check.neededStepsPerSecond).toBeCloseTo(1066.67, 2);
    expect(check.keepsUp).toBe(false);
    expect(check.fallsBehindDegreesPerSecond).toBeCloseTo(30, 9);
  });
});

describe("motion demand over a recording", () => {
  const at60Hz = (seconds: number, valueAt: (t: number) => number) =>
    Array.from({ length: Math.round(seconds * 60) + 1 }, (_, i) => ({ time: i / 60, value: valueAt(i / 60) }));

  it("passes a gentle climb in speed", () => {
    const demand = motionDemand(
      at60Hz(10, (t) => 110 + 5 * t),
      airspeed,
      microStepper,
      { toleranceDegrees: 2 },
    );
    // 5 kt/s on 1.7 deg/kt: 8.5 deg/s.
    expect(demand.peakDegreesPerSecond).toBeCloseTo(8.5, 6);
    expect(demand.keepsUp).toBe(true);
    expect(demand.behind).toEqual([]);
    expect(demand.worstLagDegrees).toBeLessThan(2);
  });

  it("reports when and by how much the pointer falls behind a fast change", () => {
    // 70 to 90 kt in 0.25 s: 80 kt/s x 2.5 deg/kt = 200 deg/s, four times the motor's 50 deg/s.
    const samples = at60Hz(3, (t) => (t < 1 ? 70 : t < 1.25 ? 70 + 80 * (t - 1) : 90));
    const demand = motionDemand(samples, airspeed, microStepper, { toleranceDegrees: 2 });
    expect(demand.peakDegreesPerSecond).toBeCloseTo(200, 6);
    expect(demand.keepsUp).toBe(false);
    expect(demand.behind).toHaveLength(1);
    const [interval] = demand.behind;
    expect(interval.start).toBeGreaterThan(1);
    expect(interval.start).toBeLessThan(1.25);
    expect(interval.end).toBeGreaterThan(1.25);
    // The 50-degree move takes at least 50 / 50 = 1 s at top speed, so the lag lasts past 2 s.
    expect(interval.end).toBeGreaterThan(2);
    expect(interval.end).toBeLessThan(3);
    // The lag cannot exceed the whole move, and at 200 deg/s against 50 deg/s most of it opens up.
    expect(interval.worstLagDegrees).toBeLessThanOrEqual(50);
    expect(interval.worstLagDegrees).toBeGreaterThan(30);
    expect(interval.worstAt).toBeGreaterThanOrEqual(1.25 - 1e-9);
  });
});
