import { describe, expect, it } from "vitest";
import { angleAt, expectedAt, expectTimelines, panelCoverage, timelinesWithin, type ExpectFrame } from "../../../shared/expect";
import { linearPointer, panelOf } from "./helpers";

describe("timelines within a run's window (a segment, or where a stopped run got)", () => {
  const p = panelOf(
    { kind: "lamp", id: "fire", label: "FIRE", drive: { mode: "condition", on: { channel: "fire" } } },
    linearPointer({ id: "asi", label: "airspeed pointer", value: { channel: "ias" } }),
    linearPointer({ id: "alt", label: "altimeter pointer", value: { channel: "alt" }, scale: { kind: "full-circle", period: 1000 } }),
  );
  // FIRE lights only at 50 s; airspeed climbs 0 -> 100 over 0..100 s; the altimeter turns twice.
  const frames: ExpectFrame[] = [{ t: 0, v: { fire: false, ias: 0, alt: 0 } }];
  for (let s = 1; s <= 100; s++) frames.push({ t: s * 1000, v: { ias: s, alt: s * 20, ...(s === 50 ? { fire: true } : {}), ...(s === 60 ? { fire: false } : {}) } });
  const whole = expectTimelines(p, frames, { rampGapMs: 1500 });

  it("shows the same thing at every instant inside the window, and starts at its edge", () => {
    const part = timelinesWithin(whole, 10_000, 30_000);
    expect(part.startMs).toBe(10_000);
    expect(part.endMs).toBe(30_000);
    for (const t of [10_000, 12_345, 20_000, 29_999]) {
      for (let i = 0; i < whole.elements.length; i++) {
        const { angle, ...rest } = expectedAt(part.elements[i], t);
        const { angle: wholeAngle, ...wholeRest } = expectedAt(whole.elements[i], t);
        expect(rest).toEqual(wholeRest);
        // Read between the window's first point (interpolated at its edge) and the next: rounding only.
        if (wholeAngle !== undefined) expect(angle).toBeCloseTo(wholeAngle, 9);
      }
    }
    const asi = part.elements[1].angle!;
    expect(asi.t[0]).toBe(10_000);
    expect(asi.t.at(-1)).toBe(30_000);
    expect(asi.angle[0]).toBeCloseTo(30, 9);
    expect(asi.angle.at(-1)).toBeCloseTo(90, 9);
    // A full-circle pointer keeps its turns counted (travel angles), so motion stays linear.
    const alt = part.elements[2].angle!;
    expect(alt.wrap).toBe(true);
    expect(alt.angle.at(-1)! - alt.angle[0]).toBeCloseTo(360 * 0.4, 6);
    expect(angleAt(alt, 25_000)).toBeCloseTo(angleAt(whole.elements[2].angle!, 25_000)!, 9);
  });

  it("coverage says what the window never did, not what the whole recording did", () => {
    const early = panelCoverage(p, timelinesWithin(whole, 0, 40_000));
    expect(early.messages).toContain("FIRE lamp never lit");
    expect(early.messages).toContain("airspeed pointer never above 40% of its scale");
    const all = panelCoverage(p, whole);
    expect(all.messages).not.toContain("FIRE lamp never lit");
  });

  it("a window covering the whole recording gives the timelines back unchanged", () => {
    expect(timelinesWithin(whole, 0, whole.endMs)).toBe(whole);
  });
});
