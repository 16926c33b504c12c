import { expect, it as test } from "vitest";
import { formatBytes, formatDuration, parseDuration, percent } from "../../../src/features/recordings/format";
import { findPlace, parentPath, scanJsonPlaces } from "../../../src/features/recordings/json-lines";
import { extendToEnd, framesToSeries, stepValueAt } from "../../../src/features/recordings/series";
import { formatFromFileName, nameFromFileName, uploadSearch } from "../../../src/features/recordings/upload";
import { ScenarioError, parseScenario } from "../../../shared/recording/scenario";

/**
 * The recordings screens' pure helpers (formats, step series, upload query, scenario text places).
 */

test("durations read as mm:ss.s and back", () => {
  expect(formatDuration(0)).toBe("00:00.0");
  expect(formatDuration(83_450)).toBe("01:23.5");
  expect(formatDuration(3_723_000)).toBe("1:02:03.0");
  expect(parseDuration("01:23.5")).toBe(83_500);
  expect(parseDuration("83.5")).toBe(83_500);
  expect(parseDuration("1:02:03")).toBe(3_723_000);
  expect(parseDuration("1.5:00")).toBeNull();
  expect(parseDuration("soon")).toBeNull();
  expect(formatBytes(512)).toBe("512 B");
  expect(formatBytes(1536)).toBe("1.5 KB");
  expect(formatBytes(300 * 1024 * 1024)).toBe("300 MB");
  expect(percent(999, 1000)).toBe(99);
  expect(percent(5, 0)).toBe(0);
});

test("step series give the last value at or before an instant", () => {
  const s = { t: [0, 1000, 5000], v: [1, 2, 3] };
  expect(stepValueAt(s, -1)).toBeNull();
  expect(stepValueAt(s, 0)).toBe(1);
  expect(stepValueAt(s, 4999)).toBe(2);
  expect(stepValueAt(s, 9000)).toBe(3);
  expect(extendToEnd(s, 8000)).toEqual({ t: [0, 1000, 5000, 8000], v: [1, 2, 3, 3] });
  const series = framesToSeries(
    [
      { t: 0, v: { "gear.handle": "DOWN", "lamp.on": false } },
      { t: 500, v: { "lamp.on": true } },
      { t: 900, v: { "gear.handle": "UP" } },
    ],
    [
      { name: "gear.handle", kind: "enum", values: ["UP", "DOWN"] },
      { name: "lamp.on", kind: "boolean" },
    ],
    ["gear.handle", "lamp.on"],
  );
  expect(series.series["gear.handle"]).toEqual({ t: [0, 900], v: [1, 0] });
  expect(series.series["lamp.on"]).toEqual({ t: [0, 500], v: [0, 1] });
});

test("upload choices become the upload route's query", () => {
  const q = new URLSearchParams(
    uploadSearch({ name: " Flight ", airframeId: "af1", format: "csv", addDraftChannels: true, csv: { delimiter: "semicolon", decimalMark: "comma", timeColumn: "", timeUnit: "s" } }),
  );
  expect(Object.fromEntries(q)).toEqual({ name: "Flight", airframeId: "af1", format: "csv", delimiter: "semicolon", decimalMark: "comma", timeUnit: "s", addDraftChannels: "true" });
  expect(formatFromFileName("log.CSV.gz")).toBe("csv");
  expect(formatFromFileName("circuit.ppr.jsonl")).toBe("ppr");
  expect(nameFromFileName("C:\\logs\\evening_circuit.ppr.jsonl.gz")).toBe("evening circuit");
});

test("a scenario problem's path is found on its line", () => {
  const text = [
    "{",
    '  "initial": { "gear.handle": "SIDEWAYS" },',
    '  "tracks": [',
    '    { "channel": "alt.baro_ft", "steps": [',
    '      { "hold": 1000 },',
    '      { "ramp": { "to": "high", "durationMs": 10 } }',
    "    ] }",
    "  ]",
    "}",
  ].join("\n");
  const { places, malformedAt } = scanJsonPlaces(text);
  expect(malformedAt).toBeNull();
  expect(findPlace(places, "tracks[0].steps[1].ramp.to")?.line).toBe(6);
  expect(findPlace(places, 'initial["gear.handle"]')?.line).toBe(2);
  // A missing field points at the object that lacks it.
  expect(findPlace(places, "tracks[0].steps[0].hold.missing")?.line).toBe(5);
  expect(parentPath('initial["gear.handle"]')).toBe("initial");
  expect(parentPath("tracks[0].steps[1]")).toBe("tracks[0].steps");
  expect(scanJsonPlaces('{\n  "a": [1,\n  }').malformedAt?.line).toBe(3);

  // The paths shared/recording reports are the ones the scanner records.
  const scenario = {
    format: "panelproof-scenario",
    version: 1,
    name: "x",
    airframe: "y",
    sampleRateHz: 10,
    channels: [{ name: "alt.baro_ft", kind: "number", min: 0, max: 100 }],
    initial: { "alt.baro_ft": 0 },
    tracks: [{ channel: "alt.baro_ft", steps: [{ hold: 10 }, { ramp: { to: 500, durationMs: 100 } }] }],
  };
  const json = JSON.stringify(scenario, null, 2);
  let issuePath = "";
  try {
    parseScenario(json);
  } catch (error) {
    issuePath = (error as ScenarioError).issues[0].path;
  }
  expect(issuePath).toBe("tracks[0].steps[1].ramp.to");
  const line = json.split("\n").findIndex((l) => l.includes('"to": 500')) + 1;
  expect(scanJsonPlaces(json).places.get(issuePath)?.line).toBe(line);
});
