import { describe, expect, it } from "vitest";
import {
  accelerationDegreesPerSecond2,
  angleToSteps,
  degreesPerFullStep,
  degreesPerStep,
  maxDegreesPerSecond,
  maxFullStepsPerSecond,
  motorProfile,
  stepsPerTurn,
  stepsToAngle,
  type MotorProfileInput,
} from "../../../shared/elements/scale";

const hybrid = (overrides: Partial<MotorProfileInput> = {}) =>
  motorProfile.parse({
    degreesPerFullStep: 1.8,
    microstepping: 16,
    sweep: { kind: "limited", minDegrees: 0, maxDegrees: 300 },
    maxStepsPerSecond: 3200,
    accelerationStepsPerSecond2: 16_000,
    ...overrides,
  });

// Instrument-cluster micro stepper: about 1/3 degree per full step over about 315 degrees (from memory).
const instrumentStepper = (overrides: Partial<MotorProfileInput> = {}) =>
  motorProfile.parse({
    fullStepsPerTurn: 1080,
    microstepping: 1,
    sweep: { kind: "limited", minDegrees: 0, maxDegrees: 315 },
    maxStepsPerSecond: 600,
    accelerationStepsPerSecond2: 3000,
    ...overrides,
  });

describe("step size", () => {
  it("gives a 1.8-degree stepper 200 full steps per turn", () => {
    // A 1.8 degree hybrid stepper has 200 full steps per turn (common practice, no source).
    const profile = hybrid({ microstepping: 1 });
    expect(360 / degreesPerFullStep(profile)).toBeCloseTo(200, 12);
    expect(stepsPerTurn(profile)).toBeCloseTo(200, 12);
    expect(stepsPerTurn(hybrid())).toBeCloseTo(3200, 9);
    expect(degreesPerStep(hybrid())).toBeCloseTo(0.1125, 12);
  });

  it("sweeps an instrument micro stepper's 315 degrees in 945 full steps", () => {
    // About 1/3 degree per full step over about 315 degrees (from memory): 945 full steps.
    const profile = instrumentStepper();
    expect(degreesPerFullStep(profile)).toBeCloseTo(1 / 3, 12);
    expect(angleToSteps(profile, 315).steps).toBe(945);
    expect(angleToSteps(instrumentStepper({ microstepping: 4 }), 315).steps).toBe(3780);
  });

  it("turns rates into dial degrees and full steps", () => {
    const profile = hybrid();
    expect(maxDegreesPerSecond(profile)).toBeCloseTo(360, 9);
    expect(accelerationDegreesPerSecond2(profile)).toBeCloseTo(1800, 9);
    expect(maxFullStepsPerSecond(profile)).toBe(200);
  });
});

describe("angles to steps and back", () => {
  it("rounds to the nearest microstep and reports the error", () => {
    const profile = hybrid();
    const target = angleToSteps(profile, 100);
    // 100 / 0.1125 = 888.89 steps: 889 steps reach 100.0125 degrees.
    expect(target.exactSteps).toBeCloseTo(888.888_889, 5);
    expect(target.steps).toBe(889);
    expect(target.reachedAngle).toBeCloseTo(100.0125, 9);
    expect(target.quantisationErrorDegrees).toBeCloseTo(0.0125, 9);
    expect(target.clampedTo).toBeNull();
  });

  it("never errs by more than half a step, and stepsToAngle inverts whole steps exactly", () => {
    for (const profile of [hybrid(), instrumentStepper(), instrumentStepper({ microstepping: 8 })]) {
      const half = degreesPerStep(profile) / 2;
      for (let angle = 0; angle <= 300; angle += 0.37) {
        const target = angleToSteps(profile, angle);
        expect(Math.abs(target.quantisationErrorDegrees)).toBeLessThanOrEqual(half + 1e-9);
        expect(angleToSteps(profile, stepsToAngle(profile, target.steps)).steps).toBe(target.steps);
      }
    }
  });

  it("clamps to the sweep and never rounds past a limit", () => {
    const profile = hybrid({ sweep: { kind: "limited", minDegrees: 0, maxDegrees: 100.1 } });
    const beyond = angleToSteps(profile, 150);
    expect(beyond.clampedTo).toBe("max");
    // 100.1 / 0.1125 = 889.78 would round to 890 steps (100.125 degrees), past the limit: 889 instead.
    expect(beyond.steps).toBe(889);
    expect(beyond.reachedAngle).toBeLessThanOrEqual(100.1);
    expect(angleToSteps(profile, -5)).toMatchObject({ steps: 0, clampedTo: "min" });
  });

  it("applies the zero offset and a reversed direction", () => {
    // Homed at the low stop, 150 degrees anticlockwise of the dial's reference.
    const offset = instrumentStepper({ zeroOffsetDegrees: -150, sweep: { kind: "limited", minDegrees: -150, maxDegrees: 165 } });
    expect(angleToSteps(offset, 0).steps).toBe(450);
    expect(stepsToAngle(offset, 450)).toBeCloseTo(0, 9);
    const reversed = instrumentStepper({ direction: "reversed", sweep: { kind: "limited", minDegrees: -315, maxDegrees: 0 } });
    expect(angleToSteps(reversed, -90).steps).toBe(270);
    expect(stepsToAngle(reversed, 270)).toBeCloseTo(-90, 9);
  });

  it("counts whole turns on a continuous motor", () => {
    const profile = hybrid({ sweep: { kind: "continuous" } });
    expect(angleToSteps(profile, 720).steps).toBe(6400);
    expect(angleToSteps(profile, -360).steps).toBe(-3200);
  });
});
