import { describe, expect, it } from "vitest";
import { gaugeScale, motorProfile } from "../../../shared/elements/scale";

function issuesOf(result: { success: boolean; error?: { issues: { path: PropertyKey[]; message: string }[] } }) {
  expect(result.success).toBe(false);
  return (result.error?.issues ?? []).map((issue) => ({ path: issue.path.join("."), message: issue.message }));
}

describe("gauge scale schema", () => {
  it("accepts a sweep table and fills in linear interpolation", () => {
    const scale = gaugeScale.parse({
      kind: "sweep",
      points: [
        { value: 0, angle: 0 },
        { value: 100, angle: 270 },
      ],
    });
    expect(scale.kind === "sweep" && scale.interpolation).toBe("linear");
  });

  it("names the point whose value does not increase, and why", () => {
    const issues = issuesOf(
      gaugeScale.safeParse({
        kind: "sweep",
        points: [
          { value: 0, angle: 0 },
          { value: 40, angle: 10 },
          { value: 40, angle: 20 },
          { value: 30, angle: 30 },
        ],
      }),
    );
    expect(issues).toEqual([
      { path: "points.2.value", message: expect.stringMatching(/^point 2: value 40 must be greater than point 1's value 40/) },
      { path: "points.3.value", message: expect.stringMatching(/^point 3: value 30 must be greater than point 2's value 40/) },
    ]);
  });

  it("accepts angles that fall, stay flat or turn back", () => {
    for (const angles of [
      [300, 200, 100],
      [0, 0, 90],
      [0, 180, 90],
    ]) {
      const result = gaugeScale.safeParse({ kind: "sweep", points: angles.map((angle, i) => ({ value: i * 10, angle })) });
      expect(result.success).toBe(true);
    }
  });

  it("names the point that makes a sweep span more than a full turn", () => {
    const issues = issuesOf(
      gaugeScale.safeParse({
        kind: "sweep",
        points: [
          { value: 0, angle: -10 },
          { value: 1, angle: 200 },
          { value: 2, angle: 355 },
        ],
      }),
    );
    expect(issues).toEqual([{ path: "points.2.angle", message: expect.stringMatching(/^point 2: angle 355 makes the sweep span 365 degrees/) }]);
  });

  it("rejects too few points, non-finite numbers and unknown fields", () => {
    expect(issuesOf(gaugeScale.safeParse({ kind: "sweep", points: [{ value: 0, angle: 0 }] }))[0]).toEqual({
      path: "points",
      message: "needs at least 2 points",
    });
    const infinite = issuesOf(
      gaugeScale.safeParse({
        kind: "sweep",
        points: [
          { value: 0, angle: 0 },
          { value: Infinity, angle: 10 },
        ],
      }),
    );
    expect(infinite.some((issue) => issue.path === "points.1.value")).toBe(true);
    const extra = issuesOf(
      gaugeScale.safeParse({ kind: "sweep", points: [{ value: 0, angle: 0 }, { value: 1, angle: 1 }], colour: "red" }),
    );
    expect(extra[0].message).toMatch(/colour/);
  });

  it("rejects an unknown interpolation", () => {
    const issues = issuesOf(
      gaugeScale.safeParse({ kind: "sweep", interpolation: "spline", points: [{ value: 0, angle: 0 }, { value: 1, angle: 1 }] }),
    );
    expect(issues[0].path).toBe("interpolation");
  });

  it("accepts a full-circle scale and requires a positive period", () => {
    expect(gaugeScale.parse({ kind: "full-circle", period: 1000 })).toEqual({
      kind: "full-circle",
      period: 1000,
      angleAtZero: 0,
      turn: "clockwise",
    });
    expect(issuesOf(gaugeScale.safeParse({ kind: "full-circle", period: 0 }))[0].path).toBe("period");
  });
});

describe("motor profile schema", () => {
  const base = {
    fullStepsPerTurn: 200,
    microstepping: 16,
    sweep: { kind: "limited", minDegrees: 0, maxDegrees: 300 },
    maxStepsPerSecond: 4000,
    accelerationStepsPerSecond2: 20_000,
  };

  it("accepts a profile and fills in direction and zero offset", () => {
    const profile = motorProfile.parse(base);
    expect(profile.direction).toBe("normal");
    expect(profile.zeroOffsetDegrees).toBe(0);
  });

  it("wants exactly one way of giving the step size", () => {
    const { fullStepsPerTurn: _omitted, ...withoutStepSize } = base;
    expect(issuesOf(motorProfile.safeParse(withoutStepSize))).toEqual([
      { path: "degreesPerFullStep", message: "give the step size: degreesPerFullStep or fullStepsPerTurn" },
    ]);
    expect(issuesOf(motorProfile.safeParse({ ...base, degreesPerFullStep: 1.8 }))).toEqual([
      { path: "fullStepsPerTurn", message: "give only one of degreesPerFullStep and fullStepsPerTurn" },
    ]);
  });

  it("takes only power-of-two microstepping up to 256", () => {
    expect(issuesOf(motorProfile.safeParse({ ...base, microstepping: 3 }))[0]).toEqual({
      path: "microstepping",
      message: "must be one of 1, 2, 4, 8, 16, 32, 64, 128, 256",
    });
    expect(motorProfile.safeParse({ ...base, microstepping: 256 }).success).toBe(true);
  });

  it("rejects a sweep whose limits are the wrong way round, and non-positive rates", () => {
    expect(issuesOf(motorProfile.safeParse({ ...base, sweep: { kind: "limited", minDegrees: 10, maxDegrees: 10 } }))[0].path).toBe(
      "sweep.maxDegrees",
    );
    expect(issuesOf(motorProfile.safeParse({ ...base, maxStepsPerSecond: 0 }))[0].path).toBe("maxStepsPerSecond");
    expect(issuesOf(motorProfile.safeParse({ ...base, accelerationStepsPerSecond2: -1 }))[0].path).toBe(
      "accelerationStepsPerSecond2",
    );
  });

  it("accepts a continuous motor for a full-circle pointer", () => {
    expect(motorProfile.safeParse({ ...base, sweep: { kind: "continuous" } }).success).toBe(true);
  });
});

describe("docs/scales.md examples", () => {
  it("parse with the schemas they document", async () => {
    const { readFile } = await import("node:fs/promises");
    const text = await readFile(new URL("../../../docs/scales.md", import.meta.url), "utf8");
    const blocks = [...text.matchAll(/```json\n([\s\S]*?)```/g)].map((match) => JSON.parse(match[1]) as Record<string, unknown>);
    expect(blocks).toHaveLength(3);
    for (const block of blocks) {
      const schema = "kind" in block ? gaugeScale : motorProfile;
      const result = schema.safeParse(block);
      expect(result.error?.issues ?? []).toEqual([]);
    }
  });
});
