import { angleToSteps, degreesPerStep, maxDegreesPerSecond } from "./motor";
import { followTargets } from "./move";
import { steepestSlope, valueToTravelAngle } from "./scale";
import type { GaugeScale, MotorProfile } from "./schema";

/**
 * Whether a pointer's motor can follow its value: from a steady ramp (a quick sum a builder can do
 * before buying a motor) or from a whole recording (where it falls behind, and by how much).
 */

export interface KeepUpRange {
  fromValue?: number;
  toValue?: number;
}

export interface KeepUpCheck {
  keepsUp: boolean;
  /** Steps per second the steepest part of the scale needs at this ramp rate. */
  neededStepsPerSecond: number;
  maxStepsPerSecond: number;
  /** needed / max: above 1 the motor falls behind. */
  loadRatio: number;
  /** Pointer speed needed on the steepest part, degrees per second. */
  neededDegreesPerSecond: number;
  /** Where on the scale that steepest part is. */
  steepestAtValue: number;
  /**
   * When it keeps up: the largest lag while the motor, starting from rest, accelerates to the ramp's
   * speed V. The gap grows as V t - a t^2 / 2 and peaks at t = V / a, at V^2 / 2a.
   */
  catchUpLagDegrees: number | null;
  /** When it does not: how fast the lag grows once the motor runs flat out, degrees per second. */
  fallsBehindDegreesPerSecond: number | null;
}

/**
 * Can this motor keep up with a value changing at `valueRatePerSecond` (units of the scale's value
 * per second), anywhere in the given range of the scale (by default the whole table)?
 */
export function checkKeepUp(
  scale: GaugeScale,
  profile: MotorProfile,
  valueRatePerSecond: number,
  range: KeepUpRange = {},
): KeepUpCheck {
  const steepest = steepestSlope(scale, range.fromValue, range.toValue);
  const neededDegreesPerSecond = steepest.degreesPerUnit * Math.abs(valueRatePerSecond);
  const stepDegrees = degreesPerStep(profile);
  const neededStepsPerSecond = neededDegreesPerSecond / stepDegrees;
  const keepsUp = neededStepsPerSecond <= profile.maxStepsPerSecond;
  const catchUpLagSteps = (neededStepsPerSecond * neededStepsPerSecond) / (2 * profile.accelerationStepsPerSecond2);
  return {
    keepsUp,
    neededStepsPerSecond,
    maxStepsPerSecond: profile.maxStepsPerSecond,
    loadRatio: neededStepsPerSecond / profile.maxStepsPerSecond,
    neededDegreesPerSecond,
    steepestAtValue: steepest.atValue,
    catchUpLagDegrees: keepsUp ? catchUpLagSteps * stepDegrees : null,
    fallsBehindDegreesPerSecond: keepsUp ? null : neededDegreesPerSecond - maxDegreesPerSecond(profile),
  };
}

export interface ValueSample {
  /** Seconds, non-decreasing. */
  time: number;
  value: number;
}

export interface LagInterval {
  start: number;
  end: number;
  /** Largest lag in the interval, dial degrees (magnitude). */
  worstLagDegrees: number;
  worstAt: number;
}

export interface MotionDemand {
  /** Fastest pointer speed the value asks for between two samples, degrees per second. */
  peakDegreesPerSecond: number;
  /** Largest change of that speed between neighbouring sample intervals, degrees per second squared. */
  peakDegreesPerSecond2: number;
  keepsUp: boolean;
  /** Stretches where the predicted pointer lags its target by more than the tolerance. */
  behind: LagInterval[];
  worstLagDegrees: number;
}

export interface MotionDemandOptions {
  /** Lag the builder accepts, dial degrees. */
  toleranceDegrees: number;
}

/**
 * Replays a value stream through the scale and the motor profile: the speed and acceleration the
 * pointer must reach, and the intervals where the motor, re-planning a time-optimal move at every
 * sample, falls behind by more than the tolerance ("falls behind by N degrees during t1 to t2").
 */
export function motionDemand(
  samples: readonly ValueSample[],
  scale: GaugeScale,
  profile: MotorProfile,
  options: MotionDemandOptions,
): MotionDemand {
  const stepDegrees = degreesPerStep(profile);
  const angles = samples.map((sample) => valueToTravelAngle(scale, sample.value));
  let peakDegreesPerSecond = 0;
  let peakDegreesPerSecond2 = 0;
  let previousSpeed: number | null = null;
  let previousMidTime = 0;
  for (let i = 1; i < samples.length; i++) {
    const dt = samples[i].time - samples[i - 1].time;
    if (!(dt > 0)) continue;
    const speed = (angles[i] - angles[i - 1]) / dt;
    const midTime = (samples[i].time + samples[i - 1].time) / 2;
    peakDegreesPerSecond = Math.max(peakDegreesPerSecond, Math.abs(speed));
    if (previousSpeed !== null && midTime > previousMidTime) {
      peakDegreesPerSecond2 = Math.max(peakDegreesPerSecond2, Math.abs(speed - previousSpeed) / (midTime - previousMidTime));
    }
    previousSpeed = speed;
    previousMidTime = midTime;
  }

  const targets = samples.map((sample, i) => ({ time: sample.time, target: angleToSteps(profile, angles[i]).steps }));
  const track = followTargets(targets, {
    maxSpeed: profile.maxStepsPerSecond,
    acceleration: profile.accelerationStepsPerSecond2,
  });

  const behind: LagInterval[] = [];
  let open: LagInterval | null = null;
  let worstLagDegrees = 0;
  for (const point of track) {
    const lagDegrees = Math.abs(point.lag) * stepDegrees;
    worstLagDegrees = Math.max(worstLagDegrees, lagDegrees);
    if (lagDegrees > options.toleranceDegrees) {
      if (!open) open = { start: point.time, end: point.time, worstLagDegrees: lagDegrees, worstAt: point.time };
      open.end = point.time;
      if (lagDegrees > open.worstLagDegrees) {
        open.worstLagDegrees = lagDegrees;
        open.worstAt = point.time;
      }
    } else if (open) {
      behind.push(open);
      open = null;
    }
  }
  if (open) behind.push(open);
  return { peakDegreesPerSecond, peakDegreesPerSecond2, keepsUp: behind.length === 0, behind, worstLagDegrees };
}
