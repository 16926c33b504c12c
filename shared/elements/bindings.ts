import { z } from "zod";
import { channelName } from "../recording/channels";

/**
 * Bindings: how an element reads the aircraft's channels. They are plain data validated by zod,
 * never code, so a panel definition can be shared, stored and checked without running anything a
 * stranger wrote. Each schema's error messages say what is wrong; zod's issue path names the field.
 */

/** A channel value as it arrives in a frame. */
export type BoundValue = number | boolean | string;

const finite = z.number({ error: "must be a finite number" }).refine(Number.isFinite, "must be a finite number");
const scalarValue = z.union([finite, z.boolean(), z.string().max(80, "must be at most 80 characters")], {
  error: "must be a number, true/false or a text value",
});

export const CONDITION_OPS = ["true", "false", "eq", "ne", "gt", "ge", "lt", "le", "in"] as const;
export type ConditionOp = (typeof CONDITION_OPS)[number];

/**
 * A test on one channel: `true`/`false` for boolean channels (a number counts as true when not 0,
 * a text when not empty), `eq`/`ne` against one value, `gt`/`ge`/`lt`/`le` against a number
 * (a threshold), `in` against a list of values. A channel with no value yet makes every condition
 * false, so a lamp stays dark until the recording says otherwise.
 */
export const condition = z
  .object({
    channel: channelName,
    op: z.enum(CONDITION_OPS, { error: `op must be one of ${CONDITION_OPS.join(", ")}` }).default("true"),
    value: scalarValue.optional(),
    values: z.array(scalarValue).min(1, "must list at least one value").optional(),
  })
  .strict()
  .superRefine((c, ctx) => {
    const needsValue = c.op === "eq" || c.op === "ne" || c.op === "gt" || c.op === "ge" || c.op === "lt" || c.op === "le";
    if (needsValue && c.value === undefined) {
      ctx.addIssue({ code: "custom", path: ["value"], message: `op "${c.op}" needs a value to compare with` });
    }
    if (needsValue && c.op !== "eq" && c.op !== "ne" && c.value !== undefined && typeof c.value !== "number") {
      ctx.addIssue({ code: "custom", path: ["value"], message: `op "${c.op}" compares numbers: value must be a number` });
    }
    if (c.op === "in" && c.values === undefined) {
      ctx.addIssue({ code: "custom", path: ["values"], message: 'op "in" needs a list of values' });
    }
    if (!needsValue && c.value !== undefined) {
      ctx.addIssue({ code: "custom", path: ["value"], message: `op "${c.op}" takes no value` });
    }
    if (c.op !== "in" && c.values !== undefined) {
      ctx.addIssue({ code: "custom", path: ["values"], message: `only op "in" takes a list of values` });
    }
  });
export type Condition = z.infer<typeof condition>;
export type ConditionInput = z.input<typeof condition>;

/** Compiles a condition to a predicate over the channel's current value (undefined: no value yet). */
export function conditionTest(c: Condition): (value: BoundValue | undefined) => boolean {
  switch (c.op) {
    case "true":
      return (v) => v !== undefined && v !== false && v !== 0 && v !== "";
    case "false":
      return (v) => v === false || v === 0 || v === "";
    case "eq":
      return (v) => v !== undefined && v === c.value;
    case "ne":
      return (v) => v !== undefined && v !== c.value;
    case "gt": {
      const k = c.value as number;
      return (v) => typeof v === "number" && v > k;
    }
    case "ge": {
      const k = c.value as number;
      return (v) => typeof v === "number" && v >= k;
    }
    case "lt": {
      const k = c.value as number;
      return (v) => typeof v === "number" && v < k;
    }
    case "le": {
      const k = c.value as number;
      return (v) => typeof v === "number" && v <= k;
    }
    case "in": {
      const set = new Set<BoundValue>(c.values);
      return (v) => v !== undefined && set.has(v);
    }
  }
}

/**
 * A numeric transform applied to a channel's value before it reaches the element:
 * `clamp(value * scale + offset, min, max)`. Used to turn a channel's unit into the gauge's unit
 * (fuel in kg to a dial in tonnes) or a dimmer's 0..100 % into a lamp level.
 */
export const transform = z
  .object({
    scale: finite.default(1),
    offset: finite.default(0),
    min: finite.optional(),
    max: finite.optional(),
  })
  .strict()
  .refine((t) => t.min === undefined || t.max === undefined || t.min <= t.max, {
    message: "min must not be greater than max",
    path: ["min"],
  });
export type Transform = z.infer<typeof transform>;

export function applyTransform(t: Transform | undefined, value: number): number {
  if (!t) return value;
  let out = value * t.scale + t.offset;
  if (t.min !== undefined && out < t.min) out = t.min;
  if (t.max !== undefined && out > t.max) out = t.max;
  return out;
}

/** A numeric channel read through an optional transform. */
export const numericSource = z
  .object({
    channel: channelName,
    transform: transform.optional(),
  })
  .strict();
export type NumericSource = z.infer<typeof numericSource>;

/**
 * Where a positioned element (switch, lever, selector) reads its position. A boolean channel gives
 * the first position for false and the second for true; a number gives the position index; an
 * enum or text value gives the position of the same name, unless `map` renames it
 * (`{ "DN": "down" }`). Values that name no position show as "unknown".
 */
export const positionSource = z
  .object({
    channel: channelName,
    map: z.record(z.string(), z.string().min(1, "must name a position")).optional(),
  })
  .strict();
export type PositionSource = z.infer<typeof positionSource>;

export const UNKNOWN_POSITION = "unknown";

export function positionResolver(source: PositionSource, positions: readonly string[]): (value: BoundValue | undefined) => string {
  const map = source.map;
  return (value) => {
    if (value === undefined) return UNKNOWN_POSITION;
    if (typeof value === "boolean") return positions[value ? 1 : 0] ?? UNKNOWN_POSITION;
    if (typeof value === "number") {
      if (map && Object.hasOwn(map, String(value))) return map[String(value)];
      return Number.isInteger(value) && value >= 0 && value < positions.length ? positions[value] : UNKNOWN_POSITION;
    }
    if (map && Object.hasOwn(map, value)) return map[value];
    return positions.includes(value) ? value : UNKNOWN_POSITION;
  };
}

// ---------------------------------------------------------------------------------------------
// Readout format templates

export const READOUT_PADS = ["zero", "space"] as const;
export const READOUT_SIGNS = ["negative", "always", "never"] as const;

/**
 * How a readout turns a value into the characters it shows. Numbers: `decimals` places, rounded
 * half away from zero; `sign` "negative" (default) prints a minus for negative values, "always"
 * also a plus, "never" drops it; `width` right-aligns in that many characters padded by `pad`
 * (zero padding goes after the sign: "-007"); a number too wide for `width` shows `overflow`
 * repeated (default "-"). Text and enum values are shown as they are, through `map` when given.
 * `prefix` and `suffix` are added around the padded number ("FL" + "085").
 */
export const readoutFormat = z
  .object({
    width: z.number().int("must be a whole number").min(1, "must be at least 1").max(32, "must be at most 32").optional(),
    pad: z.enum(READOUT_PADS).default("space"),
    decimals: z.number().int("must be a whole number").min(0, "must be 0 or more").max(6, "must be at most 6").default(0),
    sign: z.enum(READOUT_SIGNS).default("negative"),
    prefix: z.string().max(8, "must be at most 8 characters").default(""),
    suffix: z.string().max(8, "must be at most 8 characters").default(""),
    overflow: z.string().length(1, "must be one character").default("-"),
    map: z.record(z.string(), z.string().max(32, "must be at most 32 characters")).optional(),
  })
  .strict();
export type ReadoutFormat = z.infer<typeof readoutFormat>;
export type ReadoutFormatInput = z.input<typeof readoutFormat>;

/**
 * Formats one value. Rounding works on the decimal digits (integer arithmetic on value * 10^d),
 * so 2.5 shows "3" and -2.5 shows "-3", and a value that rounds to zero never shows "-0".
 */
export function formatReadout(format: ReadoutFormat, value: BoundValue): string {
  if (typeof value !== "number") {
    const text = typeof value === "boolean" ? (value ? "1" : "0") : value;
    const shown = format.map && Object.hasOwn(format.map, text) ? format.map[text] : text;
    const body = format.width !== undefined ? shown.padStart(format.width, " ") : shown;
    return format.prefix + body + format.suffix;
  }
  if (format.map && Object.hasOwn(format.map, String(value))) return format.prefix + format.map[String(value)] + format.suffix;
  const factor = 10 ** format.decimals;
  const units = Math.round(Math.abs(value) * factor); // half away from zero on the magnitude
  const negative = value < 0 && units !== 0;
  let digits = String(units);
  if (format.decimals > 0) {
    digits = digits.padStart(format.decimals + 1, "0");
    digits = `${digits.slice(0, -format.decimals)}.${digits.slice(-format.decimals)}`;
  }
  const sign = format.sign === "never" ? "" : negative ? "-" : format.sign === "always" ? "+" : "";
  let body = sign + digits;
  if (format.width !== undefined) {
    if (body.length > format.width) body = format.overflow.repeat(format.width);
    else if (format.pad === "zero") body = sign + digits.padStart(format.width - sign.length, "0");
    else body = body.padStart(format.width, " ");
  }
  return format.prefix + body + format.suffix;
}
