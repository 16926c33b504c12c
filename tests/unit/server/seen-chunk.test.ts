import { describe, expect, it } from "vitest";
import { decodeSeenChunk, deflateSeenChunk, encodeSeenChunk, SeenChunkBuilder, type SeenRecord } from "../../../server/bench/seen-log";

const records: SeenRecord[] = [
  { elementId: "gear-lamp", sample: { t: 0, shows: { track: "lamp", lamp: { state: "off" } } } },
  { elementId: "gear-lamp", sample: { t: 40, shows: { track: "lamp", lamp: { state: "on", level: 180 } } } },
  { elementId: "beacon", sample: { t: 41, shows: { track: "lamp", lamp: { state: "flashing", level: 255, periodMs: 500 } } } },
  { elementId: "oil-needle", sample: { t: 50, shows: { track: "angle", angle: 123.4567 } } },
  { elementId: "com-readout", sample: { t: 51, shows: { track: "text", text: 'Ü "1 18.5\\' } } },
  { elementId: "pump-breaker", sample: { t: 60, shows: { track: "breaker", breaker: "pulled" } } },
  { elementId: "flap-lever", sample: { t: 61, shows: { track: "position", position: "takeoff" } } },
  { elementId: "gear-lamp", sample: { t: 70, shows: { track: "lamp", lamp: { state: "off" } } } },
];
// What comes back: angles to a thousandth of a degree.
const expected = records.map((r) => (r.sample.shows.track === "angle" ? { ...r, sample: { ...r.sample, shows: { track: "angle" as const, angle: 123.457 } } } : r));

describe("seen log chunks built as reports arrive", () => {
  it("hold the same JSON as the whole chunk encoded at once", () => {
    const builder = new SeenChunkBuilder();
    for (const r of records) builder.add(r.elementId, r.sample);
    const doc = JSON.parse(builder.json());
    expect(doc.v).toBe(1);
    expect(doc.e).toEqual(["gear-lamp", "beacon", "oil-needle", "com-readout", "pump-breaker", "flap-lever"]);
    expect(doc.s).toHaveLength(records.length);
    expect([builder.count, builder.fromMs, builder.toMs]).toEqual([8, 0, 70]);
    expect(decodeSeenChunk(encodeSeenChunk(records))).toEqual(expected);
  });

  it("deflated on the thread pool, read back by the same reader as before", async () => {
    const builder = new SeenChunkBuilder();
    for (const r of records) builder.add(r.elementId, r.sample);
    expect(decodeSeenChunk(await deflateSeenChunk(builder))).toEqual(expected);
  });

  it("an empty builder is an empty chunk", async () => {
    const builder = new SeenChunkBuilder();
    expect(builder.count).toBe(0);
    expect(decodeSeenChunk(await deflateSeenChunk(builder))).toEqual([]);
  });
});
