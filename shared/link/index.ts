/** The Panelproof link protocol codec (docs/link-protocol.md): pure, for server, browser and tests alike. */
export * from "./protocol";
export * from "./messages";
export * from "./crc16";
export * from "./cobs";
export * from "./codec";
export * from "./stream";
export * from "./bus";
export * from "./pack";
export * from "./hex";
