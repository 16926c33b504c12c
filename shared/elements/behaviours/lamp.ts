import { assign, setup } from "xstate";

/**
 * A lamp's discrete modes. The machine only decides which mode the lamp is in; brightness (a
 * dimmer value that may change every frame) is data the engine reads beside it, because machines
 * hold discrete modes and never receive one event per sample.
 *
 * Priority, highest first: no power (dark, even in a lamp test, as the bulb has no supply), lamp
 * test (lit steady), then the drive: off, lit steady, or flashing.
 */
export interface LampContext {
  powered: boolean;
  testing: boolean;
  lit: boolean;
  /** The flash condition holds (or the lamp has no condition and flashes whenever lit). */
  flashWhen: boolean;
  flashes: boolean;
}

export type LampEvent =
  | { type: "POWER"; on: boolean }
  | { type: "TEST"; on: boolean }
  | { type: "LIGHT"; on: boolean }
  | { type: "FLASH_WHEN"; on: boolean };

export interface LampInput {
  /** False when the lamp has a power channel: it starts dark until the channel says powered. */
  alwaysPowered: boolean;
  /** Whether the lamp has a flash setting at all. */
  flashes: boolean;
  /** False when flashing depends on a condition (starts false until it holds). */
  alwaysFlashWhenLit: boolean;
}

export const lampMachine = setup({
  types: { context: {} as LampContext, events: {} as LampEvent, input: {} as LampInput },
  actions: {
    applyInput: assign(({ event }) => {
      switch (event.type) {
        case "POWER":
          return { powered: event.on };
        case "TEST":
          return { testing: event.on };
        case "LIGHT":
          return { lit: event.on };
        case "FLASH_WHEN":
          return { flashWhen: event.on };
      }
    }),
  },
  guards: {
    unpowered: ({ context }) => !context.powered,
    testing: ({ context }) => context.testing,
    unlit: ({ context }) => !context.lit,
    flashing: ({ context }) => context.flashes && context.flashWhen,
  },
}).createMachine({
  id: "lamp",
  context: ({ input }) => ({
    powered: input.alwaysPowered,
    testing: false,
    lit: false,
    flashWhen: input.alwaysFlashWhenLit,
    flashes: input.flashes,
  }),
  initial: "resolve",
  on: {
    POWER: { target: ".resolve", actions: "applyInput" },
    TEST: { target: ".resolve", actions: "applyInput" },
    LIGHT: { target: ".resolve", actions: "applyInput" },
    FLASH_WHEN: { target: ".resolve", actions: "applyInput" },
  },
  states: {
    /** Transient: picks the mode from the inputs after every change. */
    resolve: {
      always: [
        { guard: "unpowered", target: "dark" },
        { guard: "testing", target: "testing" },
        { guard: "unlit", target: "off" },
        { guard: "flashing", target: "flashing" },
        { target: "steady" },
      ],
    },
    dark: {},
    testing: {},
    off: {},
    steady: {},
    flashing: {},
  },
});

export type LampMode = "dark" | "testing" | "off" | "steady" | "flashing";
