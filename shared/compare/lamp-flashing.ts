import type { LampShows } from "../expect/types";
import { forgetFront, shouldForget } from "./seen-memory";

/**
 * A panel that cannot say "flashing" reports a flashing lamp as on, off, on, off. This turns
 * such runs back into one flashing state, so flashing is judged as a state with a period
 * tolerance, never sample by sample. A sample's fate depends only on its neighbours, so the
 * live judge can release samples as soon as the next one arrives or can no longer be a toggle.
 */
export class FlashingDetector {
  private readonly raw: { t: number; lamp: LampShows }[] = [];
  /** Index of the first raw sample not yet released. */
  private next = 0;
  private inRun: { periodMs: number; lastT: number; lastLamp: LampShows } | null = null;
  private readonly maxHalf: number;

  constructor(
    private readonly periods: readonly number[],
    private readonly tolerance: number,
    /** Where released samples go, in time order (the lamp's judge). */
    private readonly deliver: (t: number, lamp: LampShows) => void,
  ) {
    this.maxHalf = periods.length ? (Math.max(...periods) * (1 + tolerance)) / 2 : 0;
  }

  push(t: number, lamp: LampShows) {
    this.raw.push({ t, lamp });
  }

  private isToggle(a: LampShows, b: LampShows) {
    return (a.state === "on" && b.state === "off") || (a.state === "off" && b.state === "on");
  }

  /** The flashing period a half-period gap matches, or null. */
  private flashPeriod(i: number): number | null {
    const a = this.raw[i];
    const b = this.raw[i + 1];
    if (!a || !b || !this.isToggle(a.lamp, b.lamp)) return null;
    const measured = 2 * (b.t - a.t);
    for (const p of this.periods) if (Math.abs(measured - p) <= this.tolerance * p) return measured;
    return null;
  }

  /**
   * Delivers the samples whose meaning is settled once time has reached `now`, translated;
   * everything when `now` is Infinity. Delivered straight to the judge, not returned as a list:
   * a live run releases at every frame for every lamp, and a list per call (even one list
   * emptied and refilled, whose storage is given back when emptied) was most of what live
   * judging left for the garbage collector.
   */
  release(now: number): void {
    if (this.next >= this.raw.length) return;
    while (this.next < this.raw.length) {
      const i = this.next;
      const s = this.raw[i];
      const hasNext = i + 1 < this.raw.length;
      // Not settled until the following sample is in, or can no longer arrive as a toggle.
      if (!hasNext && now !== Infinity && now <= s.t + this.maxHalf) break;
      const forward = this.periods.length ? this.flashPeriod(i) : null;
      if (forward !== null) {
        if (!this.inRun) this.deliver(s.t, { state: "flashing", periodMs: forward, level: s.lamp.state === "on" ? s.lamp.level : 255 });
        this.inRun = { periodMs: forward, lastT: s.t, lastLamp: s.lamp };
      } else if (this.inRun) {
        // The run's last toggle: it still flashes for half a period, then shows what it holds.
        const endT = s.t + this.inRun.periodMs / 2;
        this.inRun = null;
        const nextT = this.raw[i + 1]?.t;
        if (nextT === undefined || nextT > endT) this.deliver(endT, s.lamp);
      } else {
        this.deliver(s.t, s.lamp);
      }
      this.next++;
    }
    // Released samples are never read again (a run in progress keeps what it needs in inRun).
    if (shouldForget(this.next, this.raw.length)) {
      forgetFront(this.raw, this.next);
      this.next = 0;
    }
  }

  /** The earliest instant whose seen value may still change: the judge must not settle past it. */
  settledUntil(now: number): number {
    return this.next < this.raw.length ? Math.min(now, this.raw[this.next].t) : now;
  }
}
