import { describe, expect, it } from "vitest";
import { ManualClock, VirtualClock } from "../../../shared/replay/virtual-clock";

describe("virtual clock", () => {
  it("advances by wall time elapsed times speed, and stands still when paused", () => {
    const wall = new ManualClock(1000);
    const clock = new VirtualClock(wall);
    expect(clock.now()).toBe(0);
    clock.start();
    wall.advance(500);
    expect(clock.now()).toBe(500);
    clock.setSpeed(4);
    wall.advance(250);
    expect(clock.now()).toBe(1500);
    clock.pause();
    wall.advance(10_000);
    expect(clock.now()).toBe(1500);
    clock.start();
    wall.advance(100);
    expect(clock.now()).toBe(1900);
  });

  it("never drifts however often the speed changes", () => {
    // 10,000 speed changes alternating 0.5x and 2x, 3 ms each: exactly 5,000 * 1.5 + 5,000 * 6 ms.
    const wall = new ManualClock();
    const clock = new VirtualClock(wall);
    clock.start();
    for (let i = 0; i < 10_000; i++) {
      clock.setSpeed(i % 2 === 0 ? 0.5 : 2);
      wall.advance(3);
    }
    expect(clock.now()).toBeCloseTo(5_000 * 1.5 + 5_000 * 6, 6);
  });

  it("seeks and reports the wall delay until a virtual instant", () => {
    const wall = new ManualClock();
    const clock = new VirtualClock(wall);
    clock.seek(60_000);
    expect(clock.wallDelayUntil(61_000)).toBe(Infinity); // paused
    clock.start();
    clock.setSpeed(8);
    expect(clock.wallDelayUntil(61_000)).toBe(125);
    expect(clock.wallDelayUntil(59_000)).toBe(0);
  });

  it("refuses speeds outside 0.1x to 16x", () => {
    const clock = new VirtualClock(new ManualClock());
    for (const bad of [0, 0.09, 16.5, -1, Number.NaN, Infinity]) expect(() => clock.setSpeed(bad)).toThrow(RangeError);
    clock.setSpeed(0.1);
    clock.setSpeed(16);
  });
});
