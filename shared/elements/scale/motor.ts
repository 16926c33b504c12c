import type { MotorProfile } from "./schema";

/**
 * Angles to driver steps and back for one pointer's motor. "Steps" are the pulses the firmware
 * sends: microsteps when the driver microsteps.
 */

/** Dial degrees the pointer turns per full step of the motor (after any gearing). */
export function degreesPerFullStep(profile: MotorProfile): number {
  if (profile.degreesPerFullStep !== undefined) return profile.degreesPerFullStep;
  // The schema guarantees one of the two is present.
  return 360 / (profile.fullStepsPerTurn as number);
}

/** Dial degrees per step (microstep): the finest angle the pointer can take. */
export function degreesPerStep(profile: MotorProfile): number {
  return degreesPerFullStep(profile) / profile.microstepping;
}

/** Steps (microsteps) per full turn of the pointer. */
export function stepsPerTurn(profile: MotorProfile): number {
  return (360 / degreesPerFullStep(profile)) * profile.microstepping;
}

/** The profile's top speed in dial degrees per second. */
export function maxDegreesPerSecond(profile: MotorProfile): number {
  return profile.maxStepsPerSecond * degreesPerStep(profile);
}

/** The profile's acceleration in dial degrees per second squared. */
export function accelerationDegreesPerSecond2(profile: MotorProfile): number {
  return profile.accelerationStepsPerSecond2 * degreesPerStep(profile);
}

/** The profile's top speed in full steps per second: the figure a motor's datasheet speaks of. */
export function maxFullStepsPerSecond(profile: MotorProfile): number {
  return profile.maxStepsPerSecond / profile.microstepping;
}

function directionSign(profile: MotorProfile): 1 | -1 {
  return profile.direction === "reversed" ? -1 : 1;
}

export interface StepTarget {
  /** Whole steps from the motor's zero to send the pointer to. */
  steps: number;
  /** The exact (fractional) step count the angle asks for, before rounding. */
  exactSteps: number;
  /** The dial angle those whole steps actually reach. */
  reachedAngle: number;
  /**
   * reachedAngle minus the angle asked for (after clamping to the sweep): the quantisation error,
   * never more than half a step in magnitude.
   */
  quantisationErrorDegrees: number;
  /** Which sweep limit the asked angle was clamped to, or null. */
  clampedTo: "min" | "max" | null;
}

/** Rounds half away from zero so that angle and -angle land on mirrored steps. */
function roundHalfAwayFromZero(x: number): number {
  return x < 0 ? -Math.round(-x) : Math.round(x);
}

/** The whole step count that puts the pointer closest to a dial angle, within the sweep limits. */
export function angleToSteps(profile: MotorProfile, angle: number): StepTarget {
  let target = angle;
  let clampedTo: StepTarget["clampedTo"] = null;
  if (profile.sweep.kind === "limited") {
    if (target < profile.sweep.minDegrees) {
      target = profile.sweep.minDegrees;
      clampedTo = "min";
    } else if (target > profile.sweep.maxDegrees) {
      target = profile.sweep.maxDegrees;
      clampedTo = "max";
    }
  }
  const exactSteps = (directionSign(profile) * (target - profile.zeroOffsetDegrees)) / degreesPerStep(profile);
  let steps = roundHalfAwayFromZero(exactSteps);
  // Rounding must not carry the pointer past a sweep limit: step back inside.
  if (profile.sweep.kind === "limited") {
    const reached = stepsToAngle(profile, steps);
    if (reached > profile.sweep.maxDegrees || reached < profile.sweep.minDegrees) {
      steps += exactSteps > steps ? 1 : -1;
    }
  }
  const reachedAngle = stepsToAngle(profile, steps);
  return { steps: steps + 0, exactSteps, reachedAngle, quantisationErrorDegrees: reachedAngle - target, clampedTo };
}

/** The dial angle the pointer shows after `steps` steps from the motor's zero. */
export function stepsToAngle(profile: MotorProfile, steps: number): number {
  return profile.zeroOffsetDegrees + directionSign(profile) * steps * degreesPerStep(profile);
}
