import { z } from "zod";
import { condition, numericSource, positionSource, readoutFormat } from "./bindings";
import { gaugeScale, motorProfile } from "./scale/schema";

/**
 * Element schemas, one per kind. An element is one thing on a panel that shows or takes a
 * state: one lamp, one pointer (a dual-pointer gauge is two pointer elements sharing a `gauge`
 * name), one readout, breaker, switch, button, encoder or lever.
 *
 * Defaults per kind are chosen from what builders see on the bench: a lamp driver answers in a
 * few milliseconds but an incandescent bulb takes ~100 ms to glow; a stepper pointer needs time to
 * travel; a seven-segment driver multiplexes in a few ms. The lag budget is how long the panel may
 * take to follow a change before it counts as a mismatch.
 */

export const ELEMENT_KINDS = ["lamp", "pointer", "readout", "breaker", "switch", "button", "encoder", "lever"] as const;
export type ElementKind = (typeof ELEMENT_KINDS)[number];

export const ELEMENT_ID_PATTERN = /^[a-z][a-z0-9-]*$/;

export const elementId = z
  .string({ error: "must be a string" })
  .max(40, "must be at most 40 characters")
  .regex(ELEMENT_ID_PATTERN, "must be lowercase letters, digits and dashes, starting with a letter (e.g. fire-lamp)");

const positiveNumber = z.number().refine((n) => Number.isFinite(n) && n > 0, "must be a finite number above 0");
const finite = z.number().refine(Number.isFinite, "must be a finite number");
const lagBudget = (ms: number) => z.number().int("must be whole milliseconds").min(0, "must be 0 or more").max(60_000).default(ms);

const common = {
  id: elementId,
  label: z.string({ error: "must be a string" }).min(1, "must not be empty").max(60, "must be at most 60 characters"),
  /** Built but not interfaced: listed in reports, never judged. */
  placeholder: z.boolean().default(false),
  notes: z.string().max(500, "must be at most 500 characters").optional(),
};

const positionList = z
  .array(z.string().min(1, "must not be empty").max(24, "must be at most 24 characters"))
  .min(2, "needs at least 2 positions")
  .max(255, "at most 255 positions (the link protocol sends one byte)")
  .refine((ps) => new Set(ps).size === ps.length, "positions must not repeat")
  .refine((ps) => !ps.includes("unknown"), '"unknown" is reserved for values that name no position');

/** Flashing: the lamp blinks with this period (on for half, off for half) while it would be lit. */
export const flash = z
  .object({
    periodMs: z.number().int("must be whole milliseconds").min(50, "must be at least 50 ms").max(10_000, "must be at most 10,000 ms"),
    /** Flash only while this holds; lit steadily otherwise. Absent: always flash when lit. */
    when: condition.optional(),
  })
  .strict();

/**
 * What lights a lamp. `condition`: lit while `on` holds. `latch`: a master-caution style latch,
 * lit from any new caution (a caution condition turning true) until `acknowledge` turns true; a
 * caution that clears and comes back is new again.
 */
export const lampDrive = z.discriminatedUnion(
  "mode",
  [
    z.object({ mode: z.literal("condition"), on: condition }).strict(),
    z
      .object({
        mode: z.literal("latch"),
        cautions: z.array(condition).min(1, "needs at least one caution condition"),
        acknowledge: condition,
      })
      .strict(),
  ],
  { error: 'mode must be "condition" or "latch"' },
);
export type LampDrive = z.infer<typeof lampDrive>;

/** The output half shared by lamps and lit buttons. */
const lampOutput = {
  drive: lampDrive,
  flash: flash.optional(),
  /** A dimmable lamp's level: the transformed value is a fraction 0..1 of full brightness. */
  dimmer: numericSource.optional(),
  /** Lamp test: lit (at full level, steady) while this holds, whatever the drive says. */
  test: condition.optional(),
};

export const lampElement = z
  .object({
    kind: z.literal("lamp"),
    ...common,
    ...lampOutput,
    /** The lamp's supply: dark while this does not hold, even in a lamp test. */
    power: condition.optional(),
    lagBudgetMs: lagBudget(150),
    tolerance: z
      .object({
        /** Brightness difference (0..255) still counted equal, for dimmable lamps. */
        level: z.number().int().min(0).max(255).default(24),
        /** Relative flash period error still counted equal (0.2 = 20 %). */
        period: z.number().min(0).max(1).default(0.2),
      })
      .strict()
      .prefault({}),
  })
  .strict();

export const pointerElement = z
  .object({
    kind: z.literal("pointer"),
    ...common,
    /** Pointers sharing a gauge name are drawn on one dial (a dual-pointer gauge). */
    gauge: z.string().max(40).optional(),
    value: numericSource,
    scale: gaugeScale,
    motor: motorProfile.optional(),
    /** The real instrument's fastest needle speed. Absent: the needle jumps to each new value. */
    maxSlewDegPerSec: positiveNumber.optional(),
    power: condition.optional(),
    /** Where the needle rests unpowered. Absent: the scale's first angle (full circle: its zero). */
    parkAngle: finite.optional(),
    /** Whether the instrument shows an OFF flag when unpowered. */
    offFlag: z.boolean().default(true),
    lagBudgetMs: lagBudget(300),
    tolerance: z.object({ degrees: positiveNumber.default(2) }).strict().prefault({}),
  })
  .strict();

export const readoutElement = z
  .object({
    kind: z.literal("readout"),
    ...common,
    display: z.enum(["seven-segment", "text"]).default("seven-segment"),
    value: z.object({ channel: condition.shape.channel, transform: numericSource.shape.transform }).strict(),
    format: readoutFormat.prefault({}),
    power: condition.optional(),
    /** Blank (shows nothing) while this holds, e.g. a display the aircraft switches off. */
    blankWhen: condition.optional(),
    /** Display test: every digit lit ("8" in every place of `format.width`). */
    test: condition.optional(),
    lagBudgetMs: lagBudget(250),
  })
  .strict()
  .superRefine((r, ctx) => {
    if (r.test && r.format.width === undefined) {
      ctx.addIssue({ code: "custom", path: ["format", "width"], message: "a readout with a display test needs a width (how many digits to light)" });
    }
  });

export const breakerElement = z
  .object({
    kind: z.literal("breaker"),
    ...common,
    /** The aircraft trips the breaker when this turns true. */
    trip: condition,
    /** The builder's hand: true while the breaker is pulled out. Pull then push resets a trip. */
    pulled: condition.optional(),
    lagBudgetMs: lagBudget(200),
  })
  .strict();

export const switchElement = z
  .object({
    kind: z.literal("switch"),
    ...common,
    positions: positionList,
    position: positionSource,
    /**
     * Spring-loaded positions: the switch leaves `from` positions for `to` when the aircraft leaves
     * them, or after `holdMs` at the latest (a simulator may keep a momentary position set after
     * the hand lets go; the physical switch springs back anyway).
     */
    springReturn: z
      .object({
        from: z.array(z.string().min(1)).min(1, "needs at least one spring-loaded position"),
        to: z.string().min(1),
        holdMs: z.number().int().min(1, "must be at least 1 ms").max(60_000).default(1_000),
      })
      .strict()
      .optional(),
    lagBudgetMs: lagBudget(200),
  })
  .strict()
  .superRefine((s, ctx) => {
    checkPositionNames(s.positions, s.position.map, ctx);
    if (!s.springReturn) return;
    s.springReturn.from.forEach((name, i) => {
      if (!s.positions.includes(name)) {
        ctx.addIssue({ code: "custom", path: ["springReturn", "from", i], message: `"${name}" is not one of the positions ${s.positions.join(", ")}` });
      }
      if (name === s.springReturn!.to) {
        ctx.addIssue({ code: "custom", path: ["springReturn", "from", i], message: `"${name}" cannot spring back to itself` });
      }
    });
    if (!s.positions.includes(s.springReturn.to)) {
      ctx.addIssue({ code: "custom", path: ["springReturn", "to"], message: `"${s.springReturn.to}" is not one of the positions ${s.positions.join(", ")}` });
    }
  });

export const buttonElement = z
  .object({
    kind: z.literal("button"),
    ...common,
    pressed: condition,
    /** A button lit from within: its lamp, with the same drive, flash, dimmer and test as a lamp. */
    backlight: z.object(lampOutput).strict().optional(),
    power: condition.optional(),
    lagBudgetMs: lagBudget(150),
  })
  .strict();

export const encoderElement = z
  .object({
    kind: z.literal("encoder"),
    ...common,
    detentsPerTurn: z.number().int("must be a whole number").min(1, "must be at least 1").max(1024),
    /** The channel the encoder turns, and how much one detent changes it. */
    value: numericSource,
    valuePerDetent: positiveNumber,
    /** Values that wrap (a heading bug: 360) so 359 -> 1 is two detents clockwise, not 358 back. */
    wrap: positiveNumber.optional(),
    lagBudgetMs: lagBudget(200),
    tolerance: z.object({ detents: z.number().int().min(0).default(0) }).strict().prefault({}),
  })
  .strict();

export const leverElement = z
  .object({
    kind: z.literal("lever"),
    ...common,
    positions: positionList,
    position: positionSource,
    /** While the lock holds the lever cannot leave its position (a gear lever locked on the ground). */
    lock: condition.optional(),
    lagBudgetMs: lagBudget(250),
  })
  .strict()
  .superRefine((l, ctx) => checkPositionNames(l.positions, l.position.map, ctx));

function checkPositionNames(positions: readonly string[], map: Record<string, string> | undefined, ctx: z.RefinementCtx) {
  if (!map) return;
  for (const [from, to] of Object.entries(map)) {
    if (!positions.includes(to)) {
      ctx.addIssue({ code: "custom", path: ["position", "map", from], message: `"${to}" is not one of the positions ${positions.join(", ")}` });
    }
  }
}

export const element = z.discriminatedUnion(
  "kind",
  [lampElement, pointerElement, readoutElement, breakerElement, switchElement, buttonElement, encoderElement, leverElement],
  { error: `kind must be one of ${ELEMENT_KINDS.join(", ")}` },
);
export type Element = z.infer<typeof element>;
export type ElementInput = z.input<typeof element>;
export type LampElement = z.infer<typeof lampElement>;
export type PointerElement = z.infer<typeof pointerElement>;
export type ReadoutElement = z.infer<typeof readoutElement>;
export type BreakerElement = z.infer<typeof breakerElement>;
export type SwitchElement = z.infer<typeof switchElement>;
export type ButtonElement = z.infer<typeof buttonElement>;
export type EncoderElement = z.infer<typeof encoderElement>;
export type LeverElement = z.infer<typeof leverElement>;
export type LampOutput = Pick<LampElement, "drive" | "flash" | "dimmer" | "test">;

/** Every channel an element reads, in a fixed order (the order the fields are declared). */
export function elementChannels(el: Element): string[] {
  const out: string[] = [];
  const add = (c: { channel: string } | undefined) => {
    if (c && !out.includes(c.channel)) out.push(c.channel);
  };
  const addLamp = (l: LampOutput) => {
    if (l.drive.mode === "condition") add(l.drive.on);
    else {
      l.drive.cautions.forEach(add);
      add(l.drive.acknowledge);
    }
    add(l.flash?.when);
    add(l.dimmer);
    add(l.test);
  };
  switch (el.kind) {
    case "lamp":
      addLamp(el);
      add(el.power);
      break;
    case "pointer":
      add(el.value);
      add(el.power);
      break;
    case "readout":
      add(el.value);
      add(el.power);
      add(el.blankWhen);
      add(el.test);
      break;
    case "breaker":
      add(el.trip);
      add(el.pulled);
      break;
    case "switch":
      add(el.position);
      break;
    case "button":
      add(el.pressed);
      if (el.backlight) addLamp(el.backlight);
      add(el.power);
      break;
    case "encoder":
      add(el.value);
      break;
    case "lever":
      add(el.position);
      add(el.lock);
      break;
  }
  return out;
}
