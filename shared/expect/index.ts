/** The expected side: recording + panel -> what every element should show, when; and coverage. */
export * from "./types";
export * from "./engine";
export * from "./lookup";
export * from "./coverage";
export * from "./tracks";
export * from "./slew";
export { FRAMES_PER_CHUNK } from "./columns";
export * from "./window";
export { RecordingColumns } from "./recording-columns";
