import seedrandom from "seedrandom";
import { describe, expect, it } from "vitest";
import { followTargets, planMove, positionAt, velocityAt, type MovePlan } from "../../../shared/elements/scale";

/*
 * Checks against the closed-form kinematics of constant acceleration (any mechanics textbook):
 * v = a t, s = a t^2 / 2, s = v^2 / 2a; a rest-to-rest move of distance d with top speed V and
 * acceleration a takes d / V + V / a when d >= V^2 / a (trapezoid), else 2 sqrt(d / a) (triangle).
 */

function checkContinuity(plan: MovePlan, maxSpeed: number, acceleration: number): string[] {
  const problems: string[] = [];
  let position = plan.from;
  let velocity = plan.initialVelocity;
  for (const [i, phase] of plan.phases.entries()) {
    if (Math.abs(phase.startPosition - position) > 1e-6) problems.push(`phase ${i} starts at ${phase.startPosition}, not ${position}`);
    if (Math.abs(phase.startVelocity - velocity) > 1e-6) problems.push(`phase ${i} starts at speed ${phase.startVelocity}, not ${velocity}`);
    if (Math.abs(phase.acceleration) > acceleration * (1 + 1e-12)) problems.push(`phase ${i} accelerates at ${phase.acceleration}`);
    position = phase.startPosition + phase.startVelocity * phase.duration + 0.5 * phase.acceleration * phase.duration ** 2;
    velocity = phase.startVelocity + phase.acceleration * phase.duration;
    const startsAboveLimit = i === 0 && Math.abs(plan.initialVelocity) > maxSpeed;
    if (!startsAboveLimit && Math.abs(velocity) > maxSpeed * (1 + 1e-9)) problems.push(`phase ${i} ends at speed ${velocity}`);
  }
  if (Math.abs(position - plan.to) > 1e-6 * Math.max(1, Math.abs(plan.to))) problems.push(`ends at ${position}, not ${plan.to}`);
  if (Math.abs(velocity) > 1e-6 * Math.max(1, maxSpeed)) problems.push(`ends moving at ${velocity}`);
  return problems;
}

describe("moves from rest", () => {
  it("plans a trapezoid when the move is long enough to reach top speed", () => {
    // d = 2000 steps, V = 1000 steps/s, a = 4000 steps/s^2: V^2/2a = 125 steps each to speed up and
    // slow down, taking V/a = 0.25 s each; the remaining 1750 steps cruise for 1.75 s: 2.25 s in all.
    const plan = planMove(0, 2000, { maxSpeed: 1000, acceleration: 4000 });
    expect(plan.duration).toBeCloseTo(2000 / 1000 + 1000 / 4000, 12);
    expect(plan.peakSpeed).toBeCloseTo(1000, 9);
    expect(plan.phases.map((p) => p.acceleration)).toEqual([4000, 0, -4000]);
    expect(positionAt(plan, 0.1)).toBeCloseTo(0.5 * 4000 * 0.1 ** 2, 9); // s = a t^2 / 2 = 20
    expect(positionAt(plan, 0.25)).toBeCloseTo(125, 9); // s = v^2 / 2a
    expect(positionAt(plan, 1)).toBeCloseTo(125 + 1000 * 0.75, 9);
    expect(positionAt(plan, 1.125)).toBeCloseTo(1000, 9); // symmetric: half way at half time
    expect(positionAt(plan, 2.25 - 0.1)).toBeCloseTo(2000 - 20, 9);
    expect(velocityAt(plan, 0.1)).toBeCloseTo(400, 9); // v = a t
    expect(velocityAt(plan, 1)).toBeCloseTo(1000, 9);
    expect(positionAt(plan, 10)).toBe(2000);
    expect(velocityAt(plan, 10)).toBe(0);
  });

  it("plans a triangle when the move is too short to reach top speed", () => {
    // d = 100 < V^2/a = 250: peak sqrt(a d) = 632.46 steps/s, time 2 sqrt(d/a) = 0.3162 s.
    const plan = planMove(0, 100, { maxSpeed: 1000, acceleration: 4000 });
    expect(plan.duration).toBeCloseTo(2 * Math.sqrt(100 / 4000), 12);
    expect(plan.peakSpeed).toBeCloseTo(Math.sqrt(4000 * 100), 9);
    expect(plan.phases.map((p) => p.acceleration)).toEqual([4000, -4000]);
    expect(positionAt(plan, plan.duration / 2)).toBeCloseTo(50, 9);
  });

  it("joins the two shapes where the move just reaches top speed", () => {
    // d = V^2 / a exactly: the triangle's peak is V and both formulas give 2 V / a.
    const plan = planMove(0, 250, { maxSpeed: 1000, acceleration: 4000 });
    expect(plan.duration).toBeCloseTo(0.5, 12);
    expect(plan.peakSpeed).toBeCloseTo(1000, 9);
  });

  it("moves backwards the same way, and not at all when already there", () => {
    const plan = planMove(500, -1500, { maxSpeed: 1000, acceleration: 4000 });
    expect(plan.duration).toBeCloseTo(2.25, 12);
    expect(positionAt(plan, 0.25)).toBeCloseTo(500 - 125, 9);
    const still = planMove(42, 42, { maxSpeed: 1000, acceleration: 4000 });
    expect(still.duration).toBe(0);
    expect(positionAt(still, 1)).toBe(42);
  });

  it("refuses limits that are not positive", () => {
    expect(() => planMove(0, 1, { maxSpeed: 0, acceleration: 1 })).toThrow(/maxSpeed/);
    expect(() => planMove(0, 1, { maxSpeed: 1, acceleration: Number.NaN })).toThrow(/acceleration/);
  });
});

describe("moves that start in motion", () => {
  const limits = { maxSpeed: 1000, acceleration: 4000 };

  it("speeds up from its current speed when there is room", () => {
    // v0 = 400 toward a target 200 away: peak^2 = a d + v0^2 / 2 = 880,000; peak 938.1 < V.
    const plan = planMove(0, 200, limits, 400);
    const peak = Math.sqrt(4000 * 200 + 400 ** 2 / 2);
    expect(plan.peakSpeed).toBeCloseTo(peak, 9);
    expect(plan.duration).toBeCloseTo((peak - 400) / 4000 + peak / 4000, 12);
  });

  it("overshoots and comes back when it cannot stop in time", () => {
    // v0 = 1000 toward a target 50 away: braking takes v0^2/2a = 125 steps, so it stops 75 past the
    // target after v0/a = 0.25 s, then returns 75 steps from rest: triangle of 2 sqrt(75/4000).
    const plan = planMove(0, 50, limits, 1000);
    expect(positionAt(plan, 0.25)).toBeCloseTo(125, 9);
    expect(plan.duration).toBeCloseTo(0.25 + 2 * Math.sqrt(75 / 4000), 12);
    expect(positionAt(plan, plan.duration)).toBe(50);
  });

  it("brakes first when moving away from the target", () => {
    // v0 = -400 away from a target 1000 ahead: 0.1 s and 20 steps to stop, then 1020 from rest.
    const plan = planMove(0, 1000, limits, -400);
    expect(positionAt(plan, 0.1)).toBeCloseTo(-20, 9);
    expect(plan.duration).toBeCloseTo(0.1 + 1020 / 1000 + 1000 / 4000, 12);
  });

  it("sheds speed above the limit first", () => {
    const plan = planMove(0, 10_000, limits, 1400);
    expect(plan.phases[0]).toMatchObject({ acceleration: -4000, duration: 0.1 });
    expect(checkContinuity(plan, limits.maxSpeed, limits.acceleration)).toEqual([]);
  });

  it("obeys the limits and ends at rest on the target in every random case (seeded)", () => {
    const random = seedrandom("panelproof-move-planner");
    for (let trial = 0; trial < 2000; trial++) {
      const maxSpeed = 10 + random() * 5000;
      const acceleration = 10 + random() * 50_000;
      const from = (random() - 0.5) * 10_000;
      const to = random() < 0.05 ? from : (random() - 0.5) * 10_000;
      const initialVelocity = random() < 0.3 ? 0 : (random() - 0.5) * 2 * maxSpeed;
      const plan = planMove(from, to, { maxSpeed, acceleration }, initialVelocity);
      expect(checkContinuity(plan, maxSpeed, acceleration), `case ${trial}`).toEqual([]);
      if (initialVelocity === 0) {
        // Lower bounds for any motion: no faster than top speed, no faster than full thrust.
        const distance = Math.abs(to - from);
        expect(plan.duration).toBeGreaterThanOrEqual(distance / maxSpeed - 1e-9);
        expect(plan.duration).toBeGreaterThanOrEqual(2 * Math.sqrt(distance / acceleration) - 1e-9);
      }
    }
  });
});

describe("following a stream of targets", () => {
  const dt = 1 / 60;
  const limits = { maxSpeed: 1000, acceleration: 2000 };

  it("settles on a step change in the time the closed form gives", () => {
    const samples = [{ time: 0, target: 0 }, ...Array.from({ length: 120 }, (_, i) => ({ time: (i + 1) * dt, target: 400 }))];
    const track = followTargets(samples, limits);
    // 400 steps with V^2/a = 500: a triangle of 2 sqrt(400/2000) = 0.894 s after the step at 1/60 s.
    const settled = track.find((p) => p.position === 400);
    expect(settled).toBeDefined();
    expect(settled!.time - dt).toBeGreaterThanOrEqual(2 * Math.sqrt(400 / 2000) - 1e-9);
    expect(settled!.time - dt).toBeLessThan(2 * Math.sqrt(400 / 2000) + dt);
  });

  it("lags a ramp it can follow by about its braking distance V^2 / 2a", () => {
    // A motor that must always be able to stop on its target can run at the ramp's speed V only
    // with a gap of at least V^2 / 2a; sampled once per 1/60 s, the gap seen at samples sits within
    // one sample's travel (V dt) below that.
    const speed = 500;
    const samples = Array.from({ length: 300 }, (_, i) => ({ time: i * dt, target: speed * i * dt }));
    const track = followTargets(samples, limits);
    const brakingDistance = speed ** 2 / (2 * limits.acceleration);
    for (const point of track.slice(200)) {
      expect(point.lag).toBeLessThanOrEqual(brakingDistance + 1e-9);
      expect(point.lag).toBeGreaterThanOrEqual(brakingDistance - speed * dt);
    }
  });

  it("falls further behind at V - vmax when the ramp is faster than the motor", () => {
    const samples = Array.from({ length: 300 }, (_, i) => ({ time: i * dt, target: 1500 * i * dt }));
    const track = followTargets(samples, limits);
    const late = track.slice(200);
    const growth = (late[late.length - 1].lag - late[0].lag) / (late[late.length - 1].time - late[0].time);
    expect(growth).toBeCloseTo(1500 - 1000, 6);
    expect(late.every((p) => Math.abs(p.velocity - 1000) < 1e-9)).toBe(true);
  });

  it("rejects samples that go back in time", () => {
    expect(() =>
      followTargets(
        [
          { time: 1, target: 0 },
          { time: 0.5, target: 1 },
        ],
        limits,
      ),
    ).toThrow(/sample 1/);
  });
});
