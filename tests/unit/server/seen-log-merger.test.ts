import { describe, expect, it } from "vitest";
import { SeenLogMerger, type SeenRecord } from "../../../server/bench/seen-log";

const at = (t: number, elementId = "fire", text = `${t}`): SeenRecord => ({ elementId, sample: { t, shows: { track: "text", text } } });
const times = (records: SeenRecord[]) => records.map((r) => `${r.elementId}@${r.sample.t}`);

describe("a panel's seen log put back together from its chunks", () => {
  it("keeps one pass as it came, in order, without sorting", () => {
    const merged = new SeenLogMerger([]);
    const first = [at(0), at(10, "gear"), at(10, "fire")];
    merged.add(0, first);
    merged.add(0, [at(20), at(35)]);
    const out = merged.result();
    expect(times(out)).toEqual(["fire@0", "gear@10", "fire@10", "fire@20", "fire@35"]);
    expect(out[0]).toBe(first[0]);
  });

  it("drops what a later pass replaced: an earlier epoch keeps only what came before the first later cut", () => {
    const merged = new SeenLogMerger([
      { epoch: 1, atMs: 30 },
      { epoch: 2, atMs: 25 },
    ]);
    merged.add(0, [at(10), at(24), at(26), at(40)]); // pass 0: cut back to 25 by epoch 2 (the earliest later cut)
    merged.add(1, [at(30), at(33)]); // pass 1: cut at 25 by epoch 2: nothing kept
    merged.add(2, [at(25), at(27)]);
    expect(times(merged.result())).toEqual(["fire@10", "fire@24", "fire@25", "fire@27"]);
  });

  it("sorts chunks that overlap in time, keeping the order of reports at one instant (stable)", () => {
    const merged = new SeenLogMerger([]);
    merged.add(0, [at(50, "a"), at(60, "a")]);
    merged.add(0, [at(10, "b"), at(50, "b"), at(55, "b")]);
    expect(times(merged.result())).toEqual(["b@10", "a@50", "b@50", "b@55", "a@60"]);
  });
});
