import { readFileSync } from "node:fs";
import { resolve } from "node:path";
import { describe, expect, it } from "vitest";
import { stateAtFrames } from "../../../shared/recording/frames";
import { parseRecording, RecordingParser, writeRecording } from "../../../shared/recording/recording-file";
import { generateScenario } from "../../../shared/recording/scenario";
import { segmentFrames, stateAt } from "../../../shared/recording/segments";

const recordings = resolve(__dirname, "../../../recordings");

function changesOf(frames: { t: number; v: Record<string, unknown> }[], channel: string): [number, unknown][] {
  return frames.filter((f) => channel in f.v).map((f) => [f.t, f.v[channel]]);
}

describe("demo recording: demo-pattern-flight.ppr.jsonl", () => {
  const text = readFileSync(resolve(recordings, "demo-pattern-flight.ppr.jsonl"), "utf8");

  it("parses, holds a few dozen frames and sets every channel in its first frame", () => {
    const { header, frames } = parseRecording(text);
    expect(header.airframe).toBe("Marlin TX-2 (invented twin)");
    expect(frames.length).toBeGreaterThanOrEqual(30);
    expect(Object.keys(frames[0].v).sort()).toEqual(header.channels.map((c) => c.name).sort());
    expect(changesOf(frames, "gear.position")).toEqual([
      [0, "DOWN"],
      [17000, "TRANSIT"],
      [21000, "UP"],
      [55000, "TRANSIT"],
      [61000, "DOWN"],
    ]);
    expect(stateAtFrames(frames, 41000)["annun.master_caution"]).toBe(true);
  });

  it("streams in small chunks to the same frames and writes back to the same values", () => {
    const parser = new RecordingParser();
    const streamed = [];
    for (let i = 0; i < text.length; i += 17) streamed.push(...parser.push(text.slice(i, i + 17)));
    streamed.push(...parser.end());
    const whole = parseRecording(text);
    expect(streamed).toEqual(whole.frames);
    expect(parseRecording(writeRecording(whole.header, whole.frames))).toEqual(whole);
  });
});

describe("demo scenario: demo-engine-fire-drill.scenario.json", () => {
  const source = readFileSync(resolve(recordings, "demo-engine-fire-drill.scenario.json"), "utf8");
  const { header, frames } = generateScenario(source);

  it("generates the drill: gear cycle, fire warning pulse, flashing master warning, breaker trip, climb", () => {
    expect(header.durationMs).toBe(120000);
    expect(changesOf(frames, "gear.handle")).toEqual([[0, "DOWN"], [30000, "UP"], [100000, "DOWN"]]);
    expect(changesOf(frames, "gear.position")).toEqual([
      [0, "DOWN"],
      [30500, "TRANSIT"],
      [36500, "UP"],
      [100500, "TRANSIT"],
      [107500, "DOWN"],
    ]);
    expect(changesOf(frames, "eng2.fire_warning")).toEqual([[0, false], [60000, true], [70000, false]]);
    expect(changesOf(frames, "annun.master_warning").filter(([, on]) => on === true)).toHaveLength(10);
    expect(changesOf(frames, "cb.fuel_pump_l")).toEqual([[0, "IN"], [75000, "TRIPPED"], [96000, "IN"]]);
    expect(changesOf(frames, "annun.test")).toEqual([[0, false], [3000, true], [6000, false]]);
    expect(stateAtFrames(frames, 58000)["alt.baro_ft"]).toBe(3500);
    expect(stateAtFrames(frames, 120000)["eng2.rpm_pct"]).toBe(0);
  });

  it("is identical on every generation and survives the file format and segmenting", () => {
    const again = generateScenario(JSON.parse(source));
    expect(again.frames).toEqual(frames);
    const text = writeRecording(header, frames);
    expect(parseRecording(text).frames).toEqual(frames);
    const segments = segmentFrames(frames);
    for (const t of [0, 30000, 60250, 75000, 119999]) {
      expect({ ...stateAt(segments, t) }).toEqual({ ...stateAtFrames(frames, t) });
    }
  });
});
