export * from "./constants";
export * from "./convert";
export * from "./isa";
