export * from "./airframe";
export * from "./panels";
