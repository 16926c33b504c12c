import { describe, expect, it } from "vitest";
import { stateAtFrames } from "../../../shared/recording/frames";
import { parseRecording, writeRecording } from "../../../shared/recording/recording-file";
import { generateScenario, parseScenario } from "../../../shared/recording/scenario";
import { scenarioFailure } from "./helpers";

function scenario(tracks: unknown[], extra: Record<string, unknown> = {}) {
  return {
    format: "panelproof-scenario",
    version: 1,
    name: "bench",
    airframe: "Test rig (invented)",
    sampleRateHz: 10,
    channels: [
      { name: "alt.baro_ft", kind: "number", unit: "ft", min: 0, max: 10000 },
      { name: "gear.handle", kind: "enum", values: ["UP", "DOWN"] },
      { name: "lamp.fire", kind: "boolean" },
      { name: "xpdr.code", kind: "text" },
    ],
    initial: { "alt.baro_ft": 100, "gear.handle": "DOWN", "lamp.fire": false, "xpdr.code": "1200" },
    tracks,
    ...extra,
  };
}

function valuesOf(frames: { t: number; v: Record<string, unknown> }[], channel: string): [number, unknown][] {
  return frames.filter((f) => channel in f.v).map((f) => [f.t, f.v[channel]]);
}

describe("scenario generation", () => {
  it("starts with a keyframe of every initial value at 0 ms", () => {
    const { frames, header } = generateScenario(scenario([]));
    expect(frames).toEqual([{ t: 0, v: { "alt.baro_ft": 100, "gear.handle": "DOWN", "lamp.fire": false, "xpdr.code": "1200" } }]);
    expect(header).toMatchObject({ format: "panelproof-recording", version: 1, source: "scenario", sampleRateHz: 10, durationMs: 0 });
  });

  it("set and hold run one after another; `at` jumps ahead to an absolute time", () => {
    const { frames, header } = generateScenario(
      scenario([
        { channel: "gear.handle", steps: [{ at: 1000, set: "UP" }, { hold: 2500 }, { set: "DOWN" }, { hold: 1000 }] },
        { channel: "xpdr.code", steps: [{ at: 2000, set: "7000" }] },
      ]),
    );
    expect(valuesOf(frames, "gear.handle")).toEqual([[0, "DOWN"], [1000, "UP"], [3500, "DOWN"]]);
    expect(valuesOf(frames, "xpdr.code")).toEqual([[0, "1200"], [2000, "7000"]]);
    // The trailing hold keeps the recording running past its last change.
    expect(header.durationMs).toBe(4500);
  });

  it("ramp is linear from-to on the sample grid and ends exactly on its target", () => {
    const { frames } = generateScenario(
      scenario([{ channel: "alt.baro_ft", steps: [{ at: 500, ramp: { from: 0, to: 1000, durationMs: 1000 } }, { ramp: { to: 500, durationMs: 250 } }] }]),
    );
    expect(valuesOf(frames, "alt.baro_ft")).toEqual([
      [0, 100],
      [500, 0],
      [600, 100],
      [700, 200],
      [800, 300],
      [900, 400],
      [1000, 500],
      [1100, 600],
      [1200, 700],
      [1300, 800],
      [1400, 900],
      [1500, 1000],
      [1600, 800],
      [1700, 600],
      [1750, 500],
    ]);
  });

  it("pulse sets a value for its duration then returns to the one before", () => {
    const { frames } = generateScenario(scenario([{ channel: "lamp.fire", steps: [{ at: 2000, pulse: { value: true, durationMs: 750 } }] }]));
    expect(valuesOf(frames, "lamp.fire")).toEqual([[0, false], [2000, true], [2750, false]]);
  });

  it("repeat runs a block n times (a flashing lamp)", () => {
    const { frames } = generateScenario(
      scenario([{ channel: "lamp.fire", steps: [{ at: 1000, repeat: { times: 3, steps: [{ pulse: { value: true, durationMs: 250 } }, { hold: 250 }] } }] }]),
    );
    expect(valuesOf(frames, "lamp.fire")).toEqual([
      [0, false],
      [1000, true],
      [1250, false],
      [1500, true],
      [1750, false],
      [2000, true],
      [2250, false],
    ]);
  });

  it("oscillate: a square wave changes at its half periods, a sine follows sin() on the grid", () => {
    const square = generateScenario(
      scenario([{ channel: "alt.baro_ft", steps: [{ oscillate: { wave: "square", periodMs: 1000, amplitude: 50, durationMs: 2000 } }] }]),
    );
    expect(valuesOf(square.frames, "alt.baro_ft")).toEqual([[0, 150], [500, 50], [1000, 150], [1500, 50], [2000, 100]]);

    const sine = generateScenario(
      scenario([{ channel: "alt.baro_ft", steps: [{ oscillate: { wave: "sine", periodMs: 2000, amplitude: 50, center: 500, durationMs: 2000 } }] }]),
    );
    const values = new Map(valuesOf(sine.frames, "alt.baro_ft"));
    expect(values.get(0)).toBe(500);
    expect(values.get(500)).toBe(550); // a quarter period: sin(pi/2) = 1
    expect(values.get(1500)).toBe(450);
    expect(values.get(300)).toBe(Math.round((500 + 50 * Math.sin(0.3 * Math.PI)) * 1000) / 1000);
    expect(values.get(2000)).toBe(500);
  });

  it("noise is seeded: the same seed repeats exactly, another seed differs, values stay in the band", () => {
    const make = (seed: string | number) =>
      generateScenario(scenario([{ channel: "alt.baro_ft", steps: [{ noise: { amplitude: 20, seed, center: 5000, durationMs: 10000 } }] }]));
    const a = valuesOf(make("gusty").frames, "alt.baro_ft");
    const b = valuesOf(make("gusty").frames, "alt.baro_ft");
    const c = valuesOf(make(42).frames, "alt.baro_ft");
    expect(a).toEqual(b);
    expect(a).not.toEqual(c);
    expect(a.length).toBeGreaterThan(90);
    for (const [, value] of a.slice(1)) {
      expect(value as number).toBeGreaterThanOrEqual(4980);
      expect(value as number).toBeLessThanOrEqual(5020);
    }
    expect(a[a.length - 1]).toEqual([10000, 5000]);
  });

  it("is deterministic: the same scenario gives identical frames and file text", () => {
    const input = scenario([
      { channel: "alt.baro_ft", steps: [{ ramp: { to: 3000, durationMs: 5000 } }, { noise: { amplitude: 5, seed: "s", durationMs: 3000 } }] },
      { channel: "lamp.fire", steps: [{ repeat: { times: 4, steps: [{ pulse: { value: true, durationMs: 300 } }, { hold: 200 }] } }] },
    ]);
    const first = generateScenario(input);
    const second = generateScenario(structuredClone(input));
    expect(second.frames).toEqual(first.frames);
    expect(writeRecording(second.header, second.frames)).toBe(writeRecording(first.header, first.frames));
    // And the generated file passes the recording parser unchanged.
    expect(parseRecording(writeRecording(first.header, first.frames)).frames).toEqual(first.frames);
  });
});

describe("scenario errors point at the step", () => {
  it("a wrong type inside a step", () => {
    const error = scenarioFailure(() =>
      parseScenario(
        scenario([
          {
            channel: "alt.baro_ft",
            steps: [{ set: 10 }, { hold: 100 }, { hold: 100 }, { ramp: { to: "high", durationMs: 100 } }],
          },
        ]),
      ),
    );
    expect(error.issues).toEqual([{ path: "tracks[0].steps[3].ramp.to", message: "must be a number" }]);
    expect(error.message).toBe("tracks[0].steps[3].ramp.to: must be a number");
  });

  it("collects every issue, each with its own path", () => {
    const error = scenarioFailure(() =>
      parseScenario(
        scenario(
          [
            { channel: "gear.handle", steps: [{ set: "SIDEWAYS" }, { jump: 3 }, { set: "UP", hold: 5 }, {}] },
            { channel: "lamp.fire", steps: [{ ramp: { to: 1, durationMs: 10 } }, { pulse: { value: "yes", durationMs: 0 } }] },
            { channel: "alt.baro_ft", steps: [{ ramp: { to: 20000, durationMs: 1000, speed: 2 } }] },
            { channel: "alt.baro_ft", steps: [] },
            { channel: "flaps.deg", steps: [] },
            { channel: "xpdr.code", steps: [{ repeat: { times: 0, steps: [{ at: 5, set: "1" }] } }] },
          ],
          { initial: { "alt.baro_ft": 100, "gear.handle": "DOWN", "lamp.fire": false, "extra.thing": 1 } },
        ),
      ),
    );
    expect(error.issues).toEqual([
      { path: 'initial["xpdr.code"]', message: "every channel needs an initial value" },
      { path: 'initial["extra.thing"]', message: "not a channel of this scenario" },
      { path: "tracks[0].steps[0].set", message: '"SIDEWAYS" is not one of UP, DOWN' },
      { path: "tracks[0].steps[1].jump", message: "unknown step field; a step is one of set, hold, ramp, pulse, oscillate, noise, repeat" },
      { path: "tracks[0].steps[1]", message: "a step needs one of set, hold, ramp, pulse, oscillate, noise, repeat" },
      { path: "tracks[0].steps[2]", message: "a step has one action, found set and hold" },
      { path: "tracks[0].steps[3]", message: "a step needs one of set, hold, ramp, pulse, oscillate, noise, repeat" },
      { path: "tracks[1].steps[0].ramp", message: "ramp needs a number channel; lamp.fire is boolean" },
      { path: "tracks[1].steps[1].pulse.durationMs", message: "must be more than 0 ms" },
      { path: "tracks[2].steps[0].ramp.speed", message: "unknown field" },
      { path: "tracks[3].channel", message: "alt.baro_ft already has a track (tracks[2])" },
      { path: "tracks[4].channel", message: '"flaps.deg" is not a channel of this scenario' },
      { path: "tracks[5].steps[0].repeat.times", message: "must be at least 1" },
      { path: "tracks[5].steps[0].repeat.steps[0].at", message: "at is not allowed inside repeat (each pass would jump back)" },
    ]);
  });

  it("values outside the channel, found while validating or generating", () => {
    const to = scenarioFailure(() => generateScenario(scenario([{ channel: "alt.baro_ft", steps: [{ ramp: { to: 20000, durationMs: 10 } }] }])));
    expect(to.message).toBe("tracks[0].steps[0].ramp.to: 20000 is above the channel's maximum 10000");

    const band = scenarioFailure(() =>
      generateScenario(scenario([{ channel: "alt.baro_ft", steps: [{ oscillate: { wave: "sine", periodMs: 100, amplitude: 500, durationMs: 1000 } }] }])),
    );
    expect(band.message).toBe("tracks[0].steps[0].oscillate.amplitude: center 100 ± amplitude 500 leaves the channel's range 0 to 10000");

    const missing = scenarioFailure(() => generateScenario(scenario([{ channel: "alt.baro_ft", steps: [{ ramp: { durationMs: 10 } }] }])));
    expect(missing.message).toBe("tracks[0].steps[0].ramp.to: is required");
  });

  it("time that goes back, and a duration shorter than the tracks", () => {
    const back = scenarioFailure(() =>
      generateScenario(scenario([{ channel: "gear.handle", steps: [{ at: 5000, set: "UP" }, { hold: 1000 }, { at: 3000, set: "DOWN" }] }])),
    );
    expect(back.message).toBe("tracks[0].steps[2].at: 3000 ms is before the end of the previous step (6000 ms)");

    const short = scenarioFailure(() =>
      generateScenario(scenario([{ channel: "gear.handle", steps: [{ at: 5000, set: "UP" }] }], { durationMs: 1000 })),
    );
    expect(short.issues).toEqual([{ path: "durationMs", message: "the tracks run to 5000 ms, longer than durationMs" }]);
  });

  it("the top level: format, version, sample rate, malformed JSON text", () => {
    const top = scenarioFailure(() => parseScenario({ ...scenario([]), version: 2, sampleRateHz: 0, colour: "red" }));
    expect(top.issues).toEqual(
      expect.arrayContaining([
        { path: "version", message: "must be 1 (the version this build reads)" },
        { path: "sampleRateHz", message: "must be more than 0" },
        { path: "colour", message: "unknown field" },
      ]),
    );
    const text = scenarioFailure(() => parseScenario('{"format": "panelproof-scenario",'));
    expect(text.issues[0].path).toBe("");
    expect(text.issues[0].message).toMatch(/^malformed JSON/);
  });

  it("refuses a scenario that would generate too many samples", () => {
    const huge = scenarioFailure(() =>
      generateScenario(
        scenario([{ channel: "alt.baro_ft", steps: [{ noise: { amplitude: 1, seed: 1, center: 500, durationMs: 3_600_000 } }] }], {
          sampleRateHz: 1000,
        }),
      ),
    );
    expect(huge.issues[0].path).toBe("tracks[0].steps[0]");
    expect(huge.issues[0].message).toContain("more than 2000000 samples");
  });

  it("state at an instant of a generated scenario reflects every track", () => {
    const { frames } = generateScenario(
      scenario([
        { channel: "gear.handle", steps: [{ at: 1000, set: "UP" }] },
        { channel: "lamp.fire", steps: [{ at: 1500, pulse: { value: true, durationMs: 1000 } }] },
      ]),
    );
    expect({ ...stateAtFrames(frames, 2000) }).toEqual({ "alt.baro_ft": 100, "gear.handle": "UP", "lamp.fire": true, "xpdr.code": "1200" });
  });
});
