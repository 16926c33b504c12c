/**
 * Behaviours: one xstate machine per element kind, holding only discrete modes. They have no side
 * effects (context changes through `assign` only) and read time only through the actor's clock, so
 * the engine drives them on a recording's virtual clock (xstate's SimulatedClock).
 *
 * Encoders have no machine: an encoder has no modes, only a count of detents, which the engine
 * computes from the value it turns.
 */
export * from "./lamp";
export * from "./latch";
export * from "./pointer";
export * from "./readout";
export * from "./breaker";
export * from "./switch";
export * from "./lever";
export * from "./button";
export * from "./clock";
