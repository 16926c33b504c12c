import { describe, expect, it } from "vitest";
import { RunManager, type RunManagerDeps } from "../../../server/bench/run-manager";
import type { run } from "../../../server/db/schema";

type RunRow = typeof run.$inferSelect;

/** A manager holding one live session that reports `liveState`; nothing else of it is used. */
function managerWithSession(runId: string, liveState: string) {
  const deps = { db: null, auth: null, upgrades: { add() {} }, trustedOrigins: [] } as unknown as RunManagerDeps;
  const manager = new RunManager(deps);
  (manager as unknown as { sessions: Map<string, unknown> }).sessions.set(runId, { view: () => ({ state: liveState }) });
  return manager;
}

const rowIn = (state: RunRow["state"]) => ({ id: "run-1", state, heldBy: null, aliveAt: new Date() }) as RunRow;

describe("the state a run shows", () => {
  it("is the live session's while it plays", () => {
    expect(managerWithSession("run-1", "paused").effectiveState(rowIn("playing"))).toBe("paused");
  });

  it("is not 'finished' beside a row read before the results were stored (that row has no counts)", () => {
    expect(managerWithSession("run-1", "finished").effectiveState(rowIn("playing"))).toBe("playing");
  });

  it("is 'finished' once the row says so", () => {
    expect(managerWithSession("run-1", "finished").effectiveState(rowIn("finished"))).toBe("finished");
  });
});
