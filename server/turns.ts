/**
 * Waits for the event loop's next turn (after pending I/O): long computations on the server
 * (expected timelines over a recording, judging a run) call it between pieces of work, so a live
 * run's replay and other requests are never held for long.
 */
export const nextTurn = (): Promise<void> => new Promise<void>((resolve) => setImmediate(resolve));
