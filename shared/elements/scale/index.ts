export * from "./schema";
export * from "./interpolate";
export * from "./scale";
export * from "./motor";
export * from "./move";
export * from "./demand";
