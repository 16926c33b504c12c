import { describe, expect, it } from "vitest";
import { applyTransform, condition, conditionTest, formatReadout, positionResolver, readoutFormat, transform } from "../../../shared/elements/bindings";
import { element } from "../../../shared/elements/kinds";

function issuesOf(result: { success: boolean; error?: { issues: { path: PropertyKey[]; message: string }[] } }) {
  expect(result.success).toBe(false);
  return (result.error?.issues ?? []).map((issue) => ({ path: issue.path.join("."), message: issue.message }));
}

describe("conditions", () => {
  it("tests booleans, thresholds, equality and lists; no value yet is false", () => {
    const t = (c: unknown) => conditionTest(condition.parse(c));
    expect(t({ channel: "a.b" })(true)).toBe(true);
    expect(t({ channel: "a.b" })(false)).toBe(false);
    expect(t({ channel: "a.b" })(undefined)).toBe(false);
    expect(t({ channel: "a.b", op: "false" })(undefined)).toBe(false);
    expect(t({ channel: "a.b", op: "false" })(false)).toBe(true);
    expect(t({ channel: "a.b", op: "gt", value: 10 })(10)).toBe(false);
    expect(t({ channel: "a.b", op: "ge", value: 10 })(10)).toBe(true);
    expect(t({ channel: "a.b", op: "lt", value: 10 })("9")).toBe(false);
    expect(t({ channel: "a.b", op: "eq", value: "TRIPPED" })("TRIPPED")).toBe(true);
    expect(t({ channel: "a.b", op: "ne", value: "UP" })(undefined)).toBe(false);
    expect(t({ channel: "a.b", op: "in", values: ["UP", "TRANSIT"] })("TRANSIT")).toBe(true);
  });

  it("names the field that is wrong", () => {
    expect(issuesOf(condition.safeParse({ channel: "Gear Handle" }))[0].path).toBe("channel");
    expect(issuesOf(condition.safeParse({ channel: "a.b", op: "gt" }))).toEqual([{ path: "value", message: 'op "gt" needs a value to compare with' }]);
    expect(issuesOf(condition.safeParse({ channel: "a.b", op: "gt", value: "high" }))[0]).toEqual({
      path: "value",
      message: 'op "gt" compares numbers: value must be a number',
    });
    expect(issuesOf(condition.safeParse({ channel: "a.b", op: "in" }))[0].path).toBe("values");
    expect(issuesOf(condition.safeParse({ channel: "a.b", op: "between", value: 1 }))[0].path).toBe("op");
    expect(issuesOf(condition.safeParse({ channel: "a.b", script: "x > 1" }))[0].message).toMatch(/script/);
  });
});

describe("transforms", () => {
  it("scales, offsets and clamps", () => {
    const t = transform.parse({ scale: 0.01, offset: 0, min: 0, max: 1 });
    expect(applyTransform(t, 50)).toBe(0.5);
    expect(applyTransform(t, 150)).toBe(1);
    expect(applyTransform(t, -3)).toBe(0);
    expect(applyTransform(undefined, 7)).toBe(7);
    expect(issuesOf(transform.safeParse({ min: 5, max: 1 }))[0].path).toBe("min");
  });
});

describe("positions", () => {
  it("maps booleans, indices, names and renamed values; others are unknown", () => {
    const positions = ["up", "down"];
    const resolve = positionResolver({ channel: "gear.handle", map: { DN: "down" } }, positions);
    expect(resolve(false)).toBe("up");
    expect(resolve(true)).toBe("down");
    expect(resolve(1)).toBe("down");
    expect(resolve(2)).toBe("unknown");
    expect(resolve("DN")).toBe("down");
    expect(resolve("up")).toBe("up");
    expect(resolve("sideways")).toBe("unknown");
    expect(resolve(undefined)).toBe("unknown");
  });
});

describe("readout format", () => {
  const f = (input: unknown, value: number | string) => formatReadout(readoutFormat.parse(input), value);

  it("pads with zeros after the sign, with spaces before it", () => {
    expect(f({ width: 4, pad: "zero" }, 7)).toBe("0007");
    expect(f({ width: 4, pad: "zero" }, -7)).toBe("-007");
    expect(f({ width: 4 }, -7)).toBe("  -7");
    expect(f({ width: 3, pad: "zero", prefix: "FL" }, 85)).toBe("FL085");
  });

  it("rounds half away from zero and never shows -0", () => {
    expect(f({}, 2.5)).toBe("3");
    expect(f({}, -2.5)).toBe("-3");
    expect(f({ decimals: 1 }, -0.04)).toBe("0.0");
    expect(f({ decimals: 2 }, 29.921)).toBe("29.92");
    expect(f({ decimals: 2 }, 0.05)).toBe("0.05");
  });

  it("prints a plus when asked, drops the sign when asked, and shows overflow when too wide", () => {
    expect(f({ sign: "always" }, 3)).toBe("+3");
    expect(f({ sign: "never" }, -3)).toBe("3");
    expect(f({ width: 3 }, 12345)).toBe("---");
    expect(f({ width: 2, overflow: "E" }, -100)).toBe("EE");
  });

  it("shows text and enum values through an optional map", () => {
    expect(f({ width: 4 }, "12")).toBe("  12");
    expect(f({ map: { ARC: "Arc" } }, "ARC")).toBe("Arc");
    expect(f({ map: { "0": "OFF" } }, 0)).toBe("OFF");
  });
});

describe("element schemas", () => {
  it("fills per-kind defaults: lag budget, tolerances, placeholder", () => {
    const lamp = element.parse({ kind: "lamp", id: "fire", label: "FIRE", drive: { mode: "condition", on: { channel: "eng.fire" } } });
    expect(lamp).toMatchObject({ placeholder: false, lagBudgetMs: 150, tolerance: { level: 24, period: 0.2 } });
    const pointer = element.parse({
      kind: "pointer",
      id: "asi",
      label: "airspeed",
      value: { channel: "ias_kt" },
      scale: { kind: "full-circle", period: 1000 },
    });
    expect(pointer).toMatchObject({ lagBudgetMs: 300, tolerance: { degrees: 2 }, offFlag: true });
  });

  it("rejects invalid bindings with the path of the wrong field", () => {
    expect(
      issuesOf(element.safeParse({ kind: "lamp", id: "fire", label: "FIRE", drive: { mode: "condition", on: { channel: "eng.fire", op: "gt" } } })),
    ).toEqual([{ path: "drive.on.value", message: 'op "gt" needs a value to compare with' }]);
    expect(issuesOf(element.safeParse({ kind: "lamp", id: "Fire Lamp", label: "FIRE", drive: { mode: "condition", on: { channel: "eng.fire" } } }))[0].path).toBe("id");
    expect(
      issuesOf(element.safeParse({ kind: "lamp", id: "mc", label: "MC", drive: { mode: "latch", cautions: [], acknowledge: { channel: "a.b" } } }))[0].path,
    ).toBe("drive.cautions");
    expect(
      issuesOf(
        element.safeParse({
          kind: "switch",
          id: "start",
          label: "START",
          positions: ["OFF", "ON", "START"],
          position: { channel: "eng.start", map: { S: "STRT" } },
          springReturn: { from: ["BOOST"], to: "ON" },
        }),
      ).map((i) => i.path),
    ).toEqual(["position.map.S", "springReturn.from.0"]);
    expect(
      issuesOf(
        element.safeParse({
          kind: "pointer",
          id: "asi",
          label: "airspeed",
          value: { channel: "ias_kt", transform: { scale: "x" } },
          scale: { kind: "sweep", points: [{ value: 0, angle: 0 }, { value: 0, angle: 10 }] },
        }),
      ).map((i) => i.path),
    ).toEqual(["value.transform.scale", "scale.points.1.value"]);
    expect(issuesOf(element.safeParse({ kind: "gauge", id: "x", label: "x" }))[0].message).toMatch(/kind must be one of lamp, pointer/);
    expect(
      issuesOf(element.safeParse({ kind: "readout", id: "r", label: "r", value: { channel: "a.b" }, test: { channel: "lamp.test" } }))[0].path,
    ).toBe("format.width");
  });
});
