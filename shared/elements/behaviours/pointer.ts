import { setup } from "xstate";

/**
 * A gauge pointer's discrete modes: `following` its value, or `parked` at its park angle with the
 * OFF flag showing while unpowered. The motion itself (a needle chasing its value under a slew
 * limit) is continuous and is computed by a plain loop over samples in shared/expect, never one
 * machine event per sample.
 */
export type PointerEvent = { type: "POWER"; on: boolean };

export interface PointerInput {
  /** True when the pointer has no power channel; otherwise it starts parked until powered. */
  alwaysPowered: boolean;
}

export const pointerMachine = setup({
  types: { context: {} as PointerInput, events: {} as PointerEvent, input: {} as PointerInput },
  guards: {
    alwaysPowered: ({ context }) => context.alwaysPowered,
    powerOn: ({ event }) => event.on,
    powerOff: ({ event }) => !event.on,
  },
}).createMachine({
  id: "pointer",
  context: ({ input }) => ({ alwaysPowered: input.alwaysPowered }),
  initial: "start",
  states: {
    start: { always: [{ guard: "alwaysPowered", target: "following" }, { target: "parked" }] },
    parked: { on: { POWER: { guard: "powerOn", target: "following" } } },
    following: { on: { POWER: { guard: "powerOff", target: "parked" } } },
  },
});
