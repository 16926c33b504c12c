import { readFileSync } from "node:fs";
import { resolve } from "node:path";
import { describe, expect, it } from "vitest";
import type { ChannelDefinition } from "../../../shared/recording/channels";
import { importCsv } from "../../../shared/recording/csv-import";
import { stateAtFrames } from "../../../shared/recording/frames";
import { parseRecording } from "../../../shared/recording/recording-file";
import { generateScenario } from "../../../shared/recording/scenario";

const docs = resolve(__dirname, "../../../docs");

/** The first fenced block of a language in a markdown file, so the docs cannot drift from the code. */
function example(file: string, language: string): string {
  const text = readFileSync(resolve(docs, file), "utf8");
  const match = new RegExp("```" + language + "\\n([\\s\\S]*?)```").exec(text);
  if (!match) throw new Error(`no ${language} example in ${file}`);
  return match[1];
}

describe("the documented examples do what the docs say", () => {
  it("recording-format.md: the recording example", () => {
    const { header, frames } = parseRecording(example("recording-format.md", "jsonl"));
    expect(header.durationMs).toBe(4000);
    expect(frames).toHaveLength(4);
    expect({ ...stateAtFrames(frames, 2500) }).toEqual({
      "elec.master": true,
      "alt.baro_ft": 570,
      "gear.handle": "UP",
      "xpdr.code": "1200",
    });
  });

  it("recording-format.md: the CSV example with ';' and a decimal comma", () => {
    const channels = parseRecording(example("recording-format.md", "jsonl")).header.channels as ChannelDefinition[];
    const { frames } = importCsv(example("recording-format.md", "csv"), { delimiter: ";", decimalMark: ",", channels });
    expect(frames).toEqual([
      { t: 0, v: { "alt.baro_ft": 320, "gear.handle": "DOWN", "elec.master": true, "xpdr.code": "1200" } },
      { t: 1000, v: { "alt.baro_ft": 445 } },
      { t: 2000, v: { "alt.baro_ft": 570.5, "gear.handle": "UP" } },
      { t: 3500, v: { "xpdr.code": "4521" } },
    ]);
  });

  it("scenario-format.md: the scenario example", () => {
    const { header, frames } = generateScenario(example("scenario-format.md", "json"));
    const changes = (channel: string) => frames.filter((f) => channel in f.v).map((f) => [f.t, f.v[channel]]);
    expect(header.durationMs).toBe(12000);
    expect(changes("gear.handle")).toEqual([[0, "DOWN"], [1000, "UP"], [7000, "DOWN"]]);
    expect(changes("eng1.fire_warning")).toEqual([[0, false], [8000, true], [11000, false]]);
    expect(changes("annun.master_warning")).toEqual([
      [0, false],
      [8000, true],
      [8500, false],
      [9000, true],
      [9500, false],
      [10000, true],
      [10500, false],
    ]);
    expect(stateAtFrames(frames, 3500)["alt.baro_ft"]).toBe(1000);
    expect(stateAtFrames(frames, 12000)["ias_kt"]).toBe(100);
  });
});
