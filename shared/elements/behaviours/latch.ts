import { assign, setup } from "xstate";

/**
 * A master-caution latch: the lamp alerts on any NEW caution (a caution condition turning true)
 * and stays alerting until its acknowledge button is pressed (turns true). A caution that stays on
 * after the acknowledgement does not re-alert; one that clears and comes back is new again.
 *
 * Two regions: `alert` is the latch's memory, `supply` is the lamp's power and lamp test. The latch
 * keeps latching while the lamp is unpowered or in test: the warning logic belongs to the
 * aircraft, the supply only to the bulb.
 */
export interface LatchContext {
  /** Each caution condition's last value, by index in the element's `cautions` list. */
  cautions: boolean[];
  powered: boolean;
  testing: boolean;
}

export type LatchEvent =
  | { type: "CAUTION"; index: number; on: boolean }
  | { type: "ACKNOWLEDGE"; on: boolean }
  | { type: "POWER"; on: boolean }
  | { type: "TEST"; on: boolean };

export interface LatchInput {
  cautionCount: number;
  alwaysPowered: boolean;
}

export const latchMachine = setup({
  types: { context: {} as LatchContext, events: {} as LatchEvent, input: {} as LatchInput },
  actions: {
    recordCaution: assign({
      cautions: ({ context, event }) => {
        if (event.type !== "CAUTION") return context.cautions;
        const next = context.cautions.slice();
        next[event.index] = event.on;
        return next;
      },
    }),
    applySupply: assign(({ event }) => {
      if (event.type === "POWER") return { powered: event.on };
      if (event.type === "TEST") return { testing: event.on };
      return {};
    }),
  },
  guards: {
    newCaution: ({ context, event }) => event.type === "CAUTION" && event.on && !context.cautions[event.index],
    pressed: ({ event }) => event.type === "ACKNOWLEDGE" && event.on,
    unpowered: ({ context }) => !context.powered,
    testing: ({ context }) => context.testing,
  },
}).createMachine({
  id: "latch",
  type: "parallel",
  context: ({ input }) => ({
    cautions: new Array<boolean>(input.cautionCount).fill(false),
    powered: input.alwaysPowered,
    testing: false,
  }),
  states: {
    alert: {
      initial: "quiet",
      states: {
        quiet: {
          on: {
            CAUTION: [{ guard: "newCaution", target: "alerting", actions: "recordCaution" }, { actions: "recordCaution" }],
          },
        },
        alerting: {
          on: {
            CAUTION: { actions: "recordCaution" },
            ACKNOWLEDGE: { guard: "pressed", target: "quiet" },
          },
        },
      },
    },
    supply: {
      initial: "resolve",
      on: {
        POWER: { target: ".resolve", actions: "applySupply" },
        TEST: { target: ".resolve", actions: "applySupply" },
      },
      states: {
        resolve: {
          always: [{ guard: "unpowered", target: "dark" }, { guard: "testing", target: "testing" }, { target: "normal" }],
        },
        dark: {},
        testing: {},
        normal: {},
      },
    },
  },
});
