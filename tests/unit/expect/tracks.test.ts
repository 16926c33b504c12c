import { describe, expect, it } from "vitest";
import fc from "fast-check";
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

describe("LinearTrackBuilder's spare buffers", () => {
  it("keeps every point whatever spare buffers the tracks before it handed back (property)", () => {
    // Builders made, fed and finished in random interleavings, with zigzag points (never collinear,
    // so with epsilon 0 every point is kept): each track must come out exactly as it went in. Spare
    // buffers come in any size at least the one asked for, so a track's two buffers can differ;
    // checking only the times' length once silently dropped angles past the shorter one's end.
    const op = fc.oneof(
      fc.record({ kind: fc.constant("new" as const) }),
      fc.record({ kind: fc.constant("push" as const), which: fc.nat(9), count: fc.integer({ min: 1, max: 6000 }) }),
      fc.record({ kind: fc.constant("finish" as const), which: fc.nat(9) }),
    );
    fc.assert(
      fc.property(fc.array(op, { minLength: 1, maxLength: 80 }), (ops) => {
        const open: { builder: LinearTrackBuilder; t: number[]; angle: number[] }[] = [];
        const check = (k: number) => {
          const [track] = open.splice(k, 1);
          track.builder.finish();
          expect(track.builder.t).toEqual(track.t);
          expect(track.builder.angle).toEqual(track.angle);
        };
        for (const o of ops) {
          if (o.kind === "new") open.push({ builder: new LinearTrackBuilder(0), t: [], angle: [] });
          else if (open.length === 0) continue;
          else if (o.kind === "finish") check(o.which % open.length);
          else {
            const track = open[o.which % open.length];
            for (let i = 0; i < o.count; i++) {
              const t = track.t.length;
              const a = t % 2 ? 10 + (t % 7) : -(t % 5);
              track.builder.push(t, a);
              track.t.push(t);
              track.angle.push(a);
            }
          }
        }
        while (open.length) check(open.length - 1);
      }),
      { numRuns: 400 },
    );
  });
});
