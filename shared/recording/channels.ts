import { z } from "zod";

/**
 * Channel catalogue: the named aircraft values an airframe exposes. Names are lowercase dotted
 * words (`gear.handle`, `alt.baro_ft`) so they read the same in files, URLs and code, and can never
 * collide with object internals such as `__proto__`.
 */

export const CHANNEL_KINDS = ["number", "boolean", "enum", "text"] as const;
export type ChannelKind = (typeof CHANNEL_KINDS)[number];

export type ChannelValue = number | boolean | string;

export const CHANNEL_NAME_PATTERN = /^[a-z][a-z0-9_]*(\.[a-z0-9_]+)*$/;
export const CHANNEL_NAME_MAX = 80;
/** Readouts are short; a cap keeps one runaway text channel from bloating every keyframe. */
export const TEXT_VALUE_MAX_DEFAULT = 256;

export const channelName = z
  .string({ error: "must be a string" })
  .max(CHANNEL_NAME_MAX, `must be at most ${CHANNEL_NAME_MAX} characters`)
  .regex(CHANNEL_NAME_PATTERN, "must be lowercase dotted words like gear.handle or alt.baro_ft");

const unit = z.string({ error: "must be a string" }).max(24, "must be at most 24 characters");
const description = z.string({ error: "must be a string" }).max(500, "must be at most 500 characters");
const finite = (what: string) => z.number({ error: `${what} must be a finite number` });

const common = {
  name: channelName,
  unit: unit.optional(),
  description: description.optional(),
  /** Set on channels first seen in an import, until a builder confirms them. */
  draft: z.boolean({ error: "must be true or false" }).optional(),
};

export const numberChannel = z
  .object({
    ...common,
    kind: z.literal("number"),
    min: finite("min").optional(),
    max: finite("max").optional(),
  })
  .strict()
  .refine((c) => c.min === undefined || c.max === undefined || c.min <= c.max, {
    message: "min must not be greater than max",
    path: ["min"],
  });

export const booleanChannel = z.object({ ...common, kind: z.literal("boolean") }).strict();

export const enumChannel = z
  .object({
    ...common,
    kind: z.literal("enum"),
    values: z
      .array(z.string({ error: "must be a string" }).min(1, "must not be empty").max(40, "must be at most 40 characters"), {
        error: "must be a list of named values",
      })
      .min(1, "must name at least one value")
      .refine((vs) => new Set(vs).size === vs.length, "must not repeat a value"),
  })
  .strict();

export const textChannel = z
  .object({
    ...common,
    kind: z.literal("text"),
    maxLength: z.number().int("must be a whole number").positive("must be positive").max(4096).optional(),
  })
  .strict();

export const channelDefinition = z.discriminatedUnion(
  "kind",
  [numberChannel, booleanChannel, enumChannel, textChannel],
  { error: `kind must be one of ${CHANNEL_KINDS.join(", ")}` },
);
export type ChannelDefinition = z.infer<typeof channelDefinition>;
export type NumberChannel = z.infer<typeof numberChannel>;
export type EnumChannel = z.infer<typeof enumChannel>;

/** A catalogue: channel definitions with unique names. */
export const channelList = z
  .array(channelDefinition, { error: "must be a list of channels" })
  .superRefine((channels, ctx) => {
    const seen = new Map<string, number>();
    channels.forEach((c, i) => {
      const earlier = seen.get(c.name);
      if (earlier !== undefined) {
        ctx.addIssue({
          code: "custom",
          message: `duplicate channel "${c.name}" (first at channels[${earlier}])`,
          path: [i, "name"],
        });
      } else seen.set(c.name, i);
    });
  });

/** Why a value does not fit its channel; `code` matches RecordingErrorCode. */
export interface ValueProblem {
  code: "not_finite" | "wrong_kind" | "out_of_range" | "unknown_enum_value";
  why: string;
}

function show(value: unknown): string {
  if (typeof value === "string") return JSON.stringify(value.length > 40 ? `${value.slice(0, 40)}…` : value);
  if (value === null) return "null";
  if (typeof value === "object") return Array.isArray(value) ? "a list" : "an object";
  return String(value);
}

function checkNumber(channel: NumberChannel, value: unknown): ValueProblem | null {
  if (typeof value !== "number") {
    if (typeof value === "string" && /^\s*[+-]?(nan|inf(inity)?)\s*$/i.test(value)) {
      return { code: "not_finite", why: `${show(value)} is not a finite number` };
    }
    return { code: "wrong_kind", why: `${show(value)} is not a number` };
  }
  if (!Number.isFinite(value)) return { code: "not_finite", why: `${value} is not a finite number` };
  if (channel.min !== undefined && value < channel.min) {
    return { code: "out_of_range", why: `${value} is below the channel's minimum ${channel.min}` };
  }
  if (channel.max !== undefined && value > channel.max) {
    return { code: "out_of_range", why: `${value} is above the channel's maximum ${channel.max}` };
  }
  return null;
}

function checkBoolean(_channel: ChannelDefinition, value: unknown): ValueProblem | null {
  return typeof value === "boolean" ? null : { code: "wrong_kind", why: `${show(value)} is not true or false` };
}

function checkEnum(channel: EnumChannel, value: unknown): ValueProblem | null {
  if (typeof value !== "string") return { code: "wrong_kind", why: `${show(value)} is not one of the named values` };
  if (!channel.values.includes(value)) {
    return { code: "unknown_enum_value", why: `${show(value)} is not one of ${channel.values.join(", ")}` };
  }
  return null;
}

function checkText(channel: ChannelDefinition & { kind: "text" }, value: unknown): ValueProblem | null {
  if (typeof value !== "string") return { code: "wrong_kind", why: `${show(value)} is not text` };
  const max = channel.maxLength ?? TEXT_VALUE_MAX_DEFAULT;
  if (value.length > max) return { code: "out_of_range", why: `text is ${value.length} characters, longer than ${max}` };
  return null;
}

/** Hand-written rather than zod so the per-value path stays fast on large files. */
export function checkChannelValue(channel: ChannelDefinition, value: unknown): ValueProblem | null {
  switch (channel.kind) {
    case "number":
      return checkNumber(channel, value);
    case "boolean":
      return checkBoolean(channel, value);
    case "enum":
      return checkEnum(channel, value);
    case "text":
      return checkText(channel, value);
  }
}

/** A zod schema for one channel's values, for forms and API bodies. Same rules as checkChannelValue. */
export function channelValueSchema(channel: ChannelDefinition): z.ZodType<ChannelValue> {
  return z.custom<ChannelValue>().superRefine((value, ctx) => {
    const problem = checkChannelValue(channel, value);
    if (problem) ctx.addIssue({ code: "custom", message: problem.why });
  });
}

export function channelIndex(channels: readonly ChannelDefinition[]): Map<string, ChannelDefinition> {
  return new Map(channels.map((c) => [c.name, c]));
}
