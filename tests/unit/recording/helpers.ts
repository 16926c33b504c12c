import { RecordingError } from "../../../shared/recording/errors";
import { ScenarioError } from "../../../shared/recording/scenario";
import type { RecordingHeader } from "../../../shared/recording/recording-file";

/** Runs `fn` and returns the RecordingError it throws; fails the test when it throws nothing. */
export function recordingFailure(fn: () => unknown): RecordingError {
  try {
    fn();
  } catch (error) {
    if (error instanceof RecordingError) return error;
    throw error;
  }
  throw new Error("expected a RecordingError, but nothing was thrown");
}

export function scenarioFailure(fn: () => unknown): ScenarioError {
  try {
    fn();
  } catch (error) {
    if (error instanceof ScenarioError) return error;
    throw error;
  }
  throw new Error("expected a ScenarioError, but nothing was thrown");
}

/** A small invented catalogue used across the tests. */
export const testHeader: RecordingHeader = {
  format: "panelproof-recording",
  version: 1,
  airframe: "Test rig (invented)",
  channels: [
    { name: "alt.baro_ft", kind: "number", unit: "ft", min: -1000, max: 50000 },
    { name: "gear.handle", kind: "enum", values: ["UP", "DOWN"] },
    { name: "elec.master", kind: "boolean" },
    { name: "xpdr.code", kind: "text", maxLength: 4 },
  ],
  notes: "bench notes",
};

export const headerLine = JSON.stringify(testHeader);

export function file(...frames: string[]): string {
  return [headerLine, ...frames].join("\n") + "\n";
}
