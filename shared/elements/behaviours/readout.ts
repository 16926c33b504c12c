import { assign, setup } from "xstate";

/**
 * A readout's discrete modes: dark (unpowered), testing (every digit lit), blank (the aircraft
 * blanks it), showing. The text it shows while `showing` is the formatted value, computed by the
 * engine on each change of the value channel, outside the machine.
 */
export interface ReadoutContext {
  powered: boolean;
  testing: boolean;
  blanked: boolean;
}

export type ReadoutEvent = { type: "POWER"; on: boolean } | { type: "TEST"; on: boolean } | { type: "BLANK"; on: boolean };

export interface ReadoutInput {
  alwaysPowered: boolean;
}

export const readoutMachine = setup({
  types: { context: {} as ReadoutContext, events: {} as ReadoutEvent, input: {} as ReadoutInput },
  actions: {
    applyInput: assign(({ event }) => {
      switch (event.type) {
        case "POWER":
          return { powered: event.on };
        case "TEST":
          return { testing: event.on };
        case "BLANK":
          return { blanked: event.on };
      }
    }),
  },
  guards: {
    unpowered: ({ context }) => !context.powered,
    testing: ({ context }) => context.testing,
    blanked: ({ context }) => context.blanked,
  },
}).createMachine({
  id: "readout",
  context: ({ input }) => ({ powered: input.alwaysPowered, testing: false, blanked: false }),
  initial: "resolve",
  on: {
    POWER: { target: ".resolve", actions: "applyInput" },
    TEST: { target: ".resolve", actions: "applyInput" },
    BLANK: { target: ".resolve", actions: "applyInput" },
  },
  states: {
    resolve: {
      always: [
        { guard: "unpowered", target: "dark" },
        { guard: "testing", target: "testing" },
        { guard: "blanked", target: "blank" },
        { target: "showing" },
      ],
    },
    dark: {},
    testing: {},
    blank: {},
    showing: {},
  },
});
