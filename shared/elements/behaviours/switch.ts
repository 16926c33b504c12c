import { assign, setup } from "xstate";

/**
 * A switch (or rotary selector) with named positions. Spring-loaded positions are `held`: the
 * switch leaves them for the rest position when the aircraft does, or after `holdMs` on the
 * recording's clock at the latest, because a hand cannot hold a spring-loaded switch forever even
 * when a simulator leaves the momentary value set.
 */
export interface SwitchContext {
  position: string;
  springFrom: readonly string[];
  springTo: string;
  holdMs: number;
}

export type SwitchEvent = { type: "POSITION"; name: string };

export interface SwitchInput {
  initial: string;
  springFrom?: readonly string[];
  springTo?: string;
  holdMs?: number;
}

export const switchMachine = setup({
  types: { context: {} as SwitchContext, events: {} as SwitchEvent, input: {} as SwitchInput },
  actions: {
    moveTo: assign({ position: ({ event }) => event.name }),
    springBack: assign({ position: ({ context }) => context.springTo }),
  },
  guards: {
    springLoaded: ({ context, event }) => context.springFrom.includes(event.name),
  },
  delays: {
    hold: ({ context }) => context.holdMs,
  },
}).createMachine({
  id: "switch",
  context: ({ input }) => ({
    position: input.initial,
    springFrom: input.springFrom ?? [],
    springTo: input.springTo ?? input.initial,
    holdMs: input.holdMs ?? 1_000,
  }),
  initial: "resting",
  states: {
    resting: {
      on: {
        POSITION: [{ guard: "springLoaded", target: "held", actions: "moveTo" }, { actions: "moveTo" }],
      },
    },
    held: {
      after: { hold: { target: "resting", actions: "springBack" } },
      on: {
        POSITION: [
          // Moving between two spring-loaded positions restarts the hold.
          { guard: "springLoaded", target: "held", reenter: true, actions: "moveTo" },
          { target: "resting", actions: "moveTo" },
        ],
      },
    },
  },
});
