/** Panel definitions: schema, JSON import and export, mirrored pairs, device headers, demo panels. */
export * from "./schema";
export * from "./mirror";
export * from "./device-header";
export * from "./channel-check";
