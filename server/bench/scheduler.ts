import type { Player } from "../../shared/replay/player";

/** Waits at least this long go to a timer; shorter ones are waited out on the spot. */
const TIMER_FROM_MS = 1.5;
/** A timer is asked to fire this much before the frame falls due (Node's timers promise about a millisecond). */
const TIMER_EARLY_MS = 1;

/** Nobody ever notifies it: `Atomics.wait` on it is a sleep that blocks only this thread. */
const SLEEP_CELL = new Int32Array(new SharedArrayBuffer(4));

/** Schedulers with a frame to wake for, across the process (one per playing run). */
const waiting = new Set<ReplayScheduler>();

/**
 * Wakes a player when its next frame falls due, not on a fixed interval. A timer covers the
 * bulk of the wait and fires a millisecond early, since Node's timers only promise "no earlier
 * than" with about a millisecond of slack; the rest (under 1.5 ms) is slept out on the spot with
 * `Atomics.wait`, then the frame goes. That last stretch is not handed back to the event loop:
 * turning the loop until the frame is due made an immediate per turn (thousands a second, for
 * the garbage collector to sweep) and any socket work that ran in a turn made the frame late
 * (the replay bench, DEVELOPERS.md "Speed"). Between two frames the loop always gets a turn, so
 * other work waits at most that last stretch. Only while this is the one run playing in the
 * process: a sleep would hold every other run's frames too, so with several the last stretch is
 * turned on the event loop and they interleave. Call `kick()` after any control (play, seek,
 * speed) so the next wake-up is recomputed.
 */
export class ReplayScheduler {
  private timer: NodeJS.Timeout | null = null;
  private immediate: NodeJS.Immediate | null = null;
  private stopped = false;

  constructor(
    private readonly player: Player,
    private readonly onTick: () => void = () => {},
  ) {}

  kick() {
    if (this.stopped) return;
    this.clear();
    const delay = this.player.wallDelayToNextFrame();
    if (delay === Infinity) return; // paused, finished or failed: a control will kick again
    waiting.add(this);
    // Even a frame due now waits for one turn of the event loop, so sockets and requests get
    // theirs between frames (at 16x, frames fall due about every millisecond).
    if (delay >= TIMER_FROM_MS) this.timer = setTimeout(this.wake, delay - TIMER_EARLY_MS);
    else this.immediate = setImmediate(this.wake);
  }

  private readonly wake = () => {
    this.timer = null;
    this.immediate = null;
    const left = this.player.wallDelayToNextFrame();
    if (left === Infinity) {
      waiting.delete(this);
      return;
    }
    if (left >= TIMER_FROM_MS) {
      // Woken well early (a timer that fired at once, or a speed change): sleep again.
      this.timer = setTimeout(this.wake, left - TIMER_EARLY_MS);
      return;
    }
    if (left > 0) {
      if (waiting.size > 1) {
        // Another run is playing: a sleep would hold its frames too, so turn the loop instead.
        this.immediate = setImmediate(this.wake);
        return;
      }
      // Under 1.5 ms left: sleep it out on the spot (a condition variable's timed wait, exact to
      // a tenth of a millisecond or two here, using no CPU and making no objects).
      Atomics.wait(SLEEP_CELL, 0, 0, left);
    }
    this.player.tick();
    this.onTick();
    this.kick();
  };

  private clear() {
    if (this.timer) clearTimeout(this.timer);
    if (this.immediate) clearImmediate(this.immediate);
    this.timer = null;
    this.immediate = null;
    waiting.delete(this);
  }

  stop() {
    this.stopped = true;
    this.clear();
  }
}
