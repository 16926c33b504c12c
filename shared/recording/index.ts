/** Pure recording core: channels, the Panelproof file, CSV import, frames, segments, scenarios. */
export * from "./channels";
export * from "./errors";
export * from "./frames";
export * from "./text-input";
export * from "./gzip";
export * from "./recording-file";
export * from "./csv-import";
export * from "./segments";
export * from "./scenario";
