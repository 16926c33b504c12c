/** How long work may run before it gives the caller's event loop a turn, and how to wait for one. */
export interface TurnOptions {
  /** Milliseconds of work between turns (default 8). */
  sliceMs?: number;
  /** Waits for the next turn (default: a zero timeout; the server passes setImmediate). */
  turn?: () => Promise<void>;
}

/**
 * Long computations cut into slices (expected timelines, judging a stored run): call `due()`
 * between pieces of work, and `await take()` when it says so.
 */
export function workSlices(options: TurnOptions = {}) {
  const sliceMs = options.sliceMs ?? 8;
  const turn = options.turn ?? (() => new Promise<void>((resolve) => setTimeout(resolve, 0)));
  let sliceStart = performance.now();
  return {
    due: () => performance.now() - sliceStart >= sliceMs,
    async take() {
      await turn();
      sliceStart = performance.now();
    },
  };
}
