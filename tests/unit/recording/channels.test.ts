import { describe, expect, it } from "vitest";
import {
  channelDefinition,
  channelList,
  channelValueSchema,
  checkChannelValue,
  type ChannelDefinition,
} from "../../../shared/recording/channels";

const altitude: ChannelDefinition = { name: "alt.baro_ft", kind: "number", unit: "ft", min: -1000, max: 50000 };
const gear: ChannelDefinition = { name: "gear.handle", kind: "enum", values: ["UP", "DOWN"] };
const master: ChannelDefinition = { name: "elec.master", kind: "boolean" };
const code: ChannelDefinition = { name: "xpdr.code", kind: "text", maxLength: 4 };

describe("channel definitions", () => {
  it("accepts each kind with its own fields", () => {
    for (const channel of [altitude, gear, master, code]) {
      expect(channelDefinition.parse(channel)).toEqual(channel);
    }
  });

  it("refuses names that are not lowercase dotted words", () => {
    for (const name of ["Gear.Handle", "gear handle", ".gear", "gear.", "1gear", "__proto__", ""]) {
      const result = channelDefinition.safeParse({ name, kind: "boolean" });
      expect(result.success, name).toBe(false);
    }
    expect(channelDefinition.safeParse({ name: "eng2.n1_pct", kind: "number" }).success).toBe(true);
  });

  it("refuses an unknown kind, min above max, an empty or repeated enum list, and fields of another kind", () => {
    expect(channelDefinition.safeParse({ name: "a", kind: "colour" }).success).toBe(false);
    expect(channelDefinition.safeParse({ name: "a", kind: "number", min: 5, max: 1 }).success).toBe(false);
    expect(channelDefinition.safeParse({ name: "a", kind: "enum", values: [] }).success).toBe(false);
    expect(channelDefinition.safeParse({ name: "a", kind: "enum", values: ["UP", "UP"] }).success).toBe(false);
    expect(channelDefinition.safeParse({ name: "a", kind: "boolean", values: ["UP"] }).success).toBe(false);
  });

  it("refuses a catalogue that repeats a channel name, pointing at the second one", () => {
    const result = channelList.safeParse([master, gear, { ...master, description: "again" }]);
    expect(result.success).toBe(false);
    const issue = result.error!.issues[0];
    expect(issue.path).toEqual([2, "name"]);
    expect(issue.message).toContain("duplicate channel");
  });
});

describe("value validation per kind", () => {
  it("numbers: finite and inside the range", () => {
    expect(checkChannelValue(altitude, 1200.5)).toBeNull();
    expect(checkChannelValue(altitude, 60000)).toEqual({
      code: "out_of_range",
      why: "60000 is above the channel's maximum 50000",
    });
    expect(checkChannelValue(altitude, -2000)?.code).toBe("out_of_range");
    expect(checkChannelValue(altitude, Number.NaN)?.code).toBe("not_finite");
    expect(checkChannelValue(altitude, Number.POSITIVE_INFINITY)?.code).toBe("not_finite");
    expect(checkChannelValue(altitude, "NaN")?.code).toBe("not_finite");
    expect(checkChannelValue(altitude, "-Infinity")?.code).toBe("not_finite");
    expect(checkChannelValue(altitude, "1200")?.code).toBe("wrong_kind");
    expect(checkChannelValue(altitude, true)?.code).toBe("wrong_kind");
  });

  it("booleans: only true and false", () => {
    expect(checkChannelValue(master, false)).toBeNull();
    expect(checkChannelValue(master, 1)?.code).toBe("wrong_kind");
    expect(checkChannelValue(master, "true")?.code).toBe("wrong_kind");
  });

  it("enums: only the named values, listed in the message", () => {
    expect(checkChannelValue(gear, "DOWN")).toBeNull();
    expect(checkChannelValue(gear, "down")).toEqual({
      code: "unknown_enum_value",
      why: '"down" is not one of UP, DOWN',
    });
    expect(checkChannelValue(gear, 1)?.code).toBe("wrong_kind");
  });

  it("text: strings up to the channel's length", () => {
    expect(checkChannelValue(code, "7000")).toBeNull();
    expect(checkChannelValue(code, "70000")?.code).toBe("out_of_range");
    expect(checkChannelValue(code, 7000)?.code).toBe("wrong_kind");
  });

  it("offers the same rules as a zod schema for forms", () => {
    expect(channelValueSchema(gear).safeParse("UP").success).toBe(true);
    const result = channelValueSchema(gear).safeParse("SIDEWAYS");
    expect(result.success).toBe(false);
    expect(result.error!.issues[0].message).toBe('"SIDEWAYS" is not one of UP, DOWN');
  });
});
