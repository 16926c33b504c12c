import type { SimulatedClock } from "xstate";

/**
 * Moves a SimulatedClock to `t`, firing every timer due on the way at its own deadline.
 * `clock.increment` alone fires only the timers already due at the new time, once, so a timer
 * set by a timer (or two deadlines inside one step) would fire late or not at all.
 * `onDeadline` runs after the timers of each deadline fired, with the clock at that deadline.
 */
export function advanceClockTo(clock: SimulatedClock, t: number, onDeadline?: (at: number) => void): void {
  for (;;) {
    const next = nextDeadline(clock);
    if (next === null || next > t) break;
    clock.set(Math.max(next, clock.now()));
    onDeadline?.(clock.now());
  }
  if (t > clock.now()) clock.set(t);
}

/** The earliest pending timer's deadline, or null. Reads the clock's public timeout table. */
export function nextDeadline(clock: SimulatedClock): number | null {
  let best: number | null = null;
  for (const timeout of (clock as unknown as { timeouts: Map<number, { start: number; timeout: number }> }).timeouts.values()) {
    const due = timeout.start + timeout.timeout;
    if (best === null || due < best) best = due;
  }
  return best;
}
