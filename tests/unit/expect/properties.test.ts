import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { angleAt, expectTimelines, LinearTrackBuilder, SlewFollower, type ExpectFrame } from "../../../shared/expect";
import { linearPointer, panelOf } from "./helpers";

/** Frames for channel "v": strictly increasing times (gaps 1..400 ms, so both ramps and steps occur). */
const valueFrames = (values: fc.Arbitrary<number>) =>
  fc.array(fc.tuple(fc.integer({ min: 1, max: 400 }), values), { minLength: 1, maxLength: 60 }).map((pairs) => {
    let t = 0;
    return pairs.map(([gap, v]) => ({ t: (t += gap), v: { v } }) as ExpectFrame);
  });

describe("pointer properties", () => {
  it("monotone in, monotone out: a rising value never makes the needle go back", () => {
    fc.assert(
      fc.property(
        valueFrames(fc.integer({ min: 0, max: 20 })).map((frames) => {
          let sum = 0;
          return frames.map((f) => ({ t: f.t, v: { v: Math.min(100, (sum += f.v.v as number)) } }));
        }),
        fc.option(fc.integer({ min: 10, max: 2000 }), { nil: undefined }),
        (frames, slew) => {
          const tl = expectTimelines(panelOf(linearPointer({ maxSlewDegPerSec: slew, parkAngle: 0 })), frames, { endMs: frames.at(-1)!.t + 50_000 });
          const angles = tl.elements[0].angle!.angle;
          for (let i = 1; i < angles.length; i++) expect(angles[i]).toBeGreaterThanOrEqual(angles[i - 1] - 1e-9);
        },
      ),
      { numRuns: 150 },
    );
  });

  it("never moves faster than its slew limit, and ends on the last target given time", () => {
    fc.assert(
      fc.property(valueFrames(fc.double({ min: 0, max: 100, noNaN: true })), fc.integer({ min: 5, max: 900 }), (frames, slew) => {
        const endMs = frames.at(-1)!.t + 100_000;
        const track = expectTimelines(panelOf(linearPointer({ maxSlewDegPerSec: slew })), frames, { endMs, angleResolutionDeg: 0 }).elements[0].angle!;
        for (let i = 1; i < track.t.length; i++) {
          const dt = track.t[i] - track.t[i - 1];
          expect(dt).toBeGreaterThan(0); // a limited needle never jumps
          // Allowed travel in dt, plus a billionth of a degree for rounding in the catch-up instants.
          expect(Math.abs(track.angle[i] - track.angle[i - 1])).toBeLessThanOrEqual((slew / 1000) * dt + 1e-9);
        }
        expect(track.angle.at(-1)).toBeCloseTo((frames.at(-1)!.v.v as number) * 3, 6);
      }),
      { numRuns: 150 },
    );
  });

  it("the compressed track stays within its resolution of the uncompressed one at every instant", () => {
    fc.assert(
      fc.property(valueFrames(fc.double({ min: 0, max: 100, noNaN: true })), fc.option(fc.integer({ min: 20, max: 900 }), { nil: undefined }), (frames, slew) => {
        const el = linearPointer({ maxSlewDegPerSec: slew });
        const exact = expectTimelines(panelOf(el), frames, { angleResolutionDeg: 0 }).elements[0].angle!;
        const coarse = expectTimelines(panelOf(el), frames, { angleResolutionDeg: 0.5 }).elements[0].angle!;
        expect(coarse.t.length).toBeLessThanOrEqual(exact.t.length);
        const end = frames.at(-1)!.t;
        for (let k = 0; k <= 200; k++) {
          const t = (end * k) / 200;
          // At a jump both tracks switch at the same instant; compare just after it.
          const a = angleAt(exact, t)!;
          const b = angleAt(coarse, t)!;
          expect(Math.abs(a - b)).toBeLessThanOrEqual(0.5 + 1e-9);
        }
      }),
      { numRuns: 100 },
    );
  });

  it("is deterministic: the same frames give byte-identical timelines", () => {
    fc.assert(
      fc.property(valueFrames(fc.double({ min: -50, max: 150, noNaN: true })), (frames) => {
        const p = panelOf(linearPointer({ maxSlewDegPerSec: 120, power: { channel: "v", op: "gt", value: 10 } }));
        expect(JSON.stringify(expectTimelines(p, frames))).toBe(JSON.stringify(expectTimelines(p, frames)));
      }),
      { numRuns: 50 },
    );
  });
});

describe("slew follower, directly", () => {
  it("catches a receding ramp at the hand-computed instant", () => {
    // Needle at 0, limit 100 deg/s; the target starts at 50 and rises at 50 deg/s (a ramp from
    // 50 at t=0 to 100 at t=1000). Closing speed 50 deg/s over a 50 degree gap: caught at 1000 ms, at 100.
    const out = new LinearTrackBuilder(0);
    const f = new SlewFollower(out, 100);
    f.start(0, 0);
    f.feed(0, 50, false);
    f.feed(1000, 100, true);
    f.finish(1000);
    expect(out.t).toEqual([0, 1000]);
    expect(out.angle).toEqual([0, 100]);
  });
});
