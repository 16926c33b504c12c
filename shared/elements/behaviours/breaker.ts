import { assign, setup } from "xstate";

/**
 * A circuit breaker: `in`, `pulled` (by hand) or `tripped` (by the aircraft). A tripped breaker
 * stays tripped when the fault clears, as a real one stays popped; it resets only by a pull and a
 * push. Pushing it back while the fault is still there trips it again at once (trip-free), and a
 * push without a pull first does nothing.
 */
export interface BreakerContext {
  /** The trip condition's last value. */
  fault: boolean;
}

export type BreakerEvent = { type: "TRIP"; on: boolean } | { type: "PULL"; on: boolean };

export const breakerMachine = setup({
  types: { context: {} as BreakerContext, events: {} as BreakerEvent },
  actions: {
    recordFault: assign({ fault: ({ context, event }) => (event.type === "TRIP" ? event.on : context.fault) }),
  },
  guards: {
    on: ({ event }) => event.on,
    off: ({ event }) => !event.on,
    faultPresent: ({ context }) => context.fault,
  },
}).createMachine({
  id: "breaker",
  context: { fault: false },
  initial: "in",
  on: { TRIP: { actions: "recordFault" } },
  states: {
    in: {
      on: {
        TRIP: { guard: "on", target: "tripped", actions: "recordFault" },
        PULL: { guard: "on", target: "pulled" },
      },
    },
    tripped: {
      on: { PULL: { guard: "on", target: "pulled" } },
    },
    pulled: {
      on: {
        PULL: [
          { guard: ({ context, event }) => !event.on && context.fault, target: "tripped" },
          { guard: "off", target: "in" },
        ],
      },
    },
  },
});

export type BreakerPosition = "in" | "pulled" | "tripped";
