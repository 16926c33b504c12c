import { defineConfig } from "vitest/config";

/**
 * Tests that measure time against the wall clock (an emulated board keeping real time, replays
 * judged for lateness, a bus with modelled line time) are run on their own, one file at a time,
 * after the rest: on a two-core machine, sharing the CPU with other test files made them fail
 * for the machine's sake, not the product's. `npm test` runs the two phases (VITEST_PHASE);
 * plain `npx vitest run` runs everything together.
 */
export const TIMING_SENSITIVE = [
  "tests/integration/firmware-avr.test.ts",
  "tests/integration/firmware-run.test.ts",
  "tests/integration/runs.test.ts",
  "tests/integration/runs-cli.test.ts",
  "tests/integration/runs-transport.test.ts",
  "tests/integration/rs485-bus.test.ts",
  "tests/integration/replay-scheduler.test.ts",
];

const ALL = ["tests/unit/**/*.test.ts", "tests/integration/**/*.test.ts"];
const phase = process.env.VITEST_PHASE;

export default defineConfig({
  test: {
    include: phase === "timing" ? TIMING_SENSITIVE : ALL,
    exclude: phase === "parallel" ? [...TIMING_SENSITIVE, "**/node_modules/**"] : ["**/node_modules/**"],
    // Two cores here: keep it modest. Integration files share one database, each with its own people.
    maxWorkers: phase === "timing" ? 1 : 2,
    fileParallelism: phase !== "timing",
    // A wall-clock test can still lose to a stall of the machine itself; one that passes on a
    // second or third try is counted as passed (and Vitest's own output shows the retry).
    retry: phase === "timing" ? 2 : 0,
    testTimeout: 20_000,
    hookTimeout: 30_000,
  },
});
