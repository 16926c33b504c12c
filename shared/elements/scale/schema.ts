import { z } from "zod";

/**
 * Angles throughout are dial degrees as seen from the front of the panel, clockwise positive,
 * measured from whatever reference the builder chose for the dial (usually 12 o'clock).
 */

const finiteNumber = z.number().refine(Number.isFinite, "must be a finite number");

export const scalePoint = z
  .object({
    value: finiteNumber,
    angle: finiteNumber,
  })
  .strict();
export type ScalePoint = z.infer<typeof scalePoint>;

export const INTERPOLATIONS = ["linear", "monotone-cubic"] as const;
export const interpolation = z.enum(INTERPOLATIONS);
export type Interpolation = z.infer<typeof interpolation>;

/** A single pointer cannot sweep more than a full turn between its stops without overlapping itself. */
export const MAX_SWEEP_SPAN_DEGREES = 360;

/**
 * A pointer that moves between two stops, following a table of value-to-angle points.
 * Values must strictly increase; angles may rise, fall, stay flat (a dead band, such as an airspeed
 * pointer resting on its stop below 40 kt) or even turn back, but turning back makes the reading
 * ambiguous, so such a scale cannot be inverted from an angle.
 */
export const sweepScale = z
  .object({
    kind: z.literal("sweep"),
    points: z.array(scalePoint).min(2, "needs at least 2 points"),
    interpolation: interpolation.default("linear"),
  })
  .strict()
  .superRefine((scale, ctx) => {
    const { points } = scale;
    let lowest = Infinity;
    let highest = -Infinity;
    for (let i = 0; i < points.length; i++) {
      const point = points[i];
      if (!Number.isFinite(point.value) || !Number.isFinite(point.angle)) continue;
      if (i > 0 && Number.isFinite(points[i - 1].value) && !(point.value > points[i - 1].value)) {
        ctx.addIssue({
          code: "custom",
          path: ["points", i, "value"],
          message: `point ${i}: value ${point.value} must be greater than point ${i - 1}'s value ${points[i - 1].value} (values must strictly increase)`,
        });
      }
      lowest = Math.min(lowest, point.angle);
      highest = Math.max(highest, point.angle);
      if (highest - lowest > MAX_SWEEP_SPAN_DEGREES) {
        ctx.addIssue({
          code: "custom",
          path: ["points", i, "angle"],
          message: `point ${i}: angle ${point.angle} makes the sweep span ${highest - lowest} degrees, more than a full turn (${MAX_SWEEP_SPAN_DEGREES}); use a full-circle scale for pointers that turn without stops`,
        });
        return;
      }
    }
  });
export type SweepScale = z.infer<typeof sweepScale>;
export type SweepScaleInput = z.input<typeof sweepScale>;

export const TURN_DIRECTIONS = ["clockwise", "counterclockwise"] as const;

/**
 * A pointer that turns without stops, once per `period` of value: an altimeter's 100-ft pointer has
 * a period of 1,000 ft, its 1,000-ft pointer 10,000 ft. The angle is (value mod period) mapped onto
 * 0..360 degrees, plus the angle at which value 0 points.
 */
export const fullCircleScale = z
  .object({
    kind: z.literal("full-circle"),
    period: z.number().refine((period) => Number.isFinite(period) && period > 0, "must be a finite number above 0"),
    angleAtZero: finiteNumber.default(0),
    turn: z.enum(TURN_DIRECTIONS).default("clockwise"),
  })
  .strict();
export type FullCircleScale = z.infer<typeof fullCircleScale>;
export type FullCircleScaleInput = z.input<typeof fullCircleScale>;

export const gaugeScale = z.discriminatedUnion("kind", [sweepScale, fullCircleScale]);
export type GaugeScale = z.infer<typeof gaugeScale>;
export type GaugeScaleInput = z.input<typeof gaugeScale>;

/** Microstepping ratios a stepper driver offers: a power of two from 1 (full steps) to 256. */
export const MICROSTEPPING_CHOICES = [1, 2, 4, 8, 16, 32, 64, 128, 256] as const;
export type Microstepping = (typeof MICROSTEPPING_CHOICES)[number];

const positiveNumber = z.number().refine((n) => Number.isFinite(n) && n > 0, "must be a finite number above 0");

/**
 * How a pointer's motor turns angles into steps. "Step" in positions and rates means one pulse to
 * the driver, a microstep (a full step when microstepping is 1), because that is what firmware counts.
 * Step size is given at the pointer shaft, after any gearing, either as degrees per full step or as
 * full steps per turn (1,080 full steps per turn is exactly 1/3 degree, which a decimal cannot spell).
 */
export const motorProfile = z
  .object({
    degreesPerFullStep: positiveNumber.optional(),
    fullStepsPerTurn: positiveNumber.optional(),
    microstepping: z
      .number()
      .refine(
        (n): n is Microstepping => (MICROSTEPPING_CHOICES as readonly number[]).includes(n),
        `must be one of ${MICROSTEPPING_CHOICES.join(", ")}`,
      ),
    /** Dial angles the pointer may reach; `continuous` for full-circle pointers without stops. */
    sweep: z.discriminatedUnion("kind", [
      z
        .object({ kind: z.literal("limited"), minDegrees: finiteNumber, maxDegrees: finiteNumber })
        .strict()
        .refine((sweep) => sweep.maxDegrees > sweep.minDegrees, {
          message: "maxDegrees must be greater than minDegrees",
          path: ["maxDegrees"],
        }),
      z.object({ kind: z.literal("continuous") }).strict(),
    ]),
    /** Fastest pulse rate the motor follows without losing steps, microsteps per second. */
    maxStepsPerSecond: positiveNumber,
    /** Largest change of pulse rate, microsteps per second squared. */
    accelerationStepsPerSecond2: positiveNumber,
    direction: z.enum(["normal", "reversed"]).default("normal"),
    /** Dial angle at which the motor's step 0 (its homed position) points. */
    zeroOffsetDegrees: finiteNumber.default(0),
  })
  .strict()
  .superRefine((profile, ctx) => {
    const given = [profile.degreesPerFullStep, profile.fullStepsPerTurn].filter((v) => v !== undefined).length;
    if (given !== 1) {
      ctx.addIssue({
        code: "custom",
        path: given === 0 ? ["degreesPerFullStep"] : ["fullStepsPerTurn"],
        message:
          given === 0
            ? "give the step size: degreesPerFullStep or fullStepsPerTurn"
            : "give only one of degreesPerFullStep and fullStepsPerTurn",
      });
    }
  });
export type MotorProfile = z.infer<typeof motorProfile>;
export type MotorProfileInput = z.input<typeof motorProfile>;
