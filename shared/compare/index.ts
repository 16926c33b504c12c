/** Judging: expected timelines against what panels report (docs/judging.md). Pure, live and offline alike. */
export * from "./types";
export * from "./statistics";
export * from "./sweep";
export * from "./discrete";
export * from "./angle";
export * from "./lamp-flashing";
export * from "./judge";
