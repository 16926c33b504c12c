import { describe, expect, it } from "vitest";
import { DiscreteTrackBuilder, flagKey, LinearTrackBuilder, textKey } from "../../../shared/expect/tracks";

describe("DiscreteTrackBuilder", () => {
  it("keeps real changes only: repeats dropped, the last change at one instant wins", () => {
    const b = new DiscreteTrackBuilder<string>(textKey);
    b.set(0, "off", "off");
    b.set(10, "off", "off"); // no change
    b.set(20, "on", "on");
    b.set(20, "dim", "dim"); // same instant: replaces "on"
    b.set(30, "dim", "dim");
    b.set(40, "off", "off");
    expect(b.changes).toEqual([
      { t: 0, shows: "off" },
      { t: 20, shows: "dim" },
      { t: 40, shows: "off" },
    ]);
    expect(b.lastKey).toBe("off");
  });

  it("drops a change undone at the same instant, and then knows the value showing before it", () => {
    const b = new DiscreteTrackBuilder<boolean>(flagKey);
    b.set(0, false, flagKey(false));
    b.set(5, true, flagKey(true));
    b.set(5, false, flagKey(false)); // back to what showed before: no change at 5 at all
    expect(b.changes).toEqual([{ t: 0, shows: false }]);
    expect(b.lastKey).toBe("0");
    b.set(6, false, flagKey(false)); // still no change
    b.set(7, true, flagKey(true));
    expect(b.changes).toEqual([
      { t: 0, shows: false },
      { t: 7, shows: true },
    ]);
  });

  it("replaces the only change at its instant", () => {
    const b = new DiscreteTrackBuilder<string>(textKey);
    b.set(0, "a", "a");
    b.set(0, "b", "b");
    expect(b.changes).toEqual([{ t: 0, shows: "b" }]);
    expect(b.lastKey).toBe("b");
  });
});

describe("LinearTrackBuilder", () => {
  /** A parabola: no three points in a line, so epsilon 0 keeps every one. */
  const parabola = (n: number, shift: number) => Array.from({ length: n }, (_, i) => [i * 10, (i - n / 2) ** 2 + shift] as const);

  it("keeps every point of a curve through growth, track after track (spare buffers reused)", () => {
    for (const [n, shift] of [
      [5000, 0],
      [3000, 7],
      [20000, -3],
      [10, 1],
    ] as const) {
      const points = parabola(n, shift);
      const line = new LinearTrackBuilder(0);
      for (const [t, a] of points) line.push(t, a);
      line.finish();
      line.finish(); // a second finish changes nothing (the buffers went back after the first)
      expect(line.t).toEqual(points.map(([t]) => t));
      expect(line.angle).toEqual(points.map(([, a]) => a));
    }
  });

  it("drops exactly collinear points with epsilon 0, keeping corners and both ends of a jump", () => {
    const line = new LinearTrackBuilder(0);
    for (const [t, a] of [
      [0, 0],
      [10, 5],
      [20, 10],
      [30, 10],
      [30, 40],
      [40, 40],
    ] as const)
      line.push(t, a);
    line.finish();
    expect(line.t).toEqual([0, 20, 30, 30, 40]);
    expect(line.angle).toEqual([0, 10, 10, 40, 40]);
  });
});
