import { setup } from "xstate";

/** A push button: pressed or released. A lit button's backlight is a lamp machine beside it. */
export type ButtonEvent = { type: "PRESS"; on: boolean };

export const buttonMachine = setup({
  types: { events: {} as ButtonEvent },
  guards: { down: ({ event }) => event.on, up: ({ event }) => !event.on },
}).createMachine({
  id: "button",
  initial: "released",
  states: {
    released: { on: { PRESS: { guard: "down", target: "pressed" } } },
    pressed: { on: { PRESS: { guard: "up", target: "released" } } },
  },
});
