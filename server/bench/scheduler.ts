import type { Player } from "../../shared/replay/player";

/**
 * Wakes a player when its next frame falls due, not on a fixed interval: a timer for the
 * bulk of the wait, then setImmediate for the last millisecond, since Node's timers only
 * promise "no earlier than" with about a millisecond of slack. Call `kick()` after any
 * control (play, seek, speed) so the next wake-up is recomputed.
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
    const wake = () => {
      this.timer = null;
      this.immediate = null;
      const left = this.player.wallDelayToNextFrame();
      if (left > 0.25 && left !== Infinity) {
        // Woken early: wait out the remainder without burning a core.
        if (left >= 1.5) this.timer = setTimeout(wake, left - 1);
        else this.immediate = setImmediate(wake);
        return;
      }
      this.player.tick();
      this.onTick();
      this.kick();
    };
    if (delay >= 1.5) this.timer = setTimeout(wake, delay - 1);
    else this.immediate = setImmediate(wake);
  }

  private clear() {
    if (this.timer) clearTimeout(this.timer);
    if (this.immediate) clearImmediate(this.immediate);
    this.timer = null;
    this.immediate = null;
  }

  stop() {
    this.stopped = true;
    this.clear();
  }
}
