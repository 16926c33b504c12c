import { assign, setup } from "xstate";

/**
 * A lever with named positions and an optional lock. While the lock holds, the lever cannot leave
 * its position: a recorded position change is kept as `pending` and taken when the lock releases.
 */
export interface LeverContext {
  position: string;
  pending: string | null;
}

export type LeverEvent = { type: "POSITION"; name: string } | { type: "LOCK"; on: boolean };

export const leverMachine = setup({
  types: { context: {} as LeverContext, events: {} as LeverEvent, input: {} as { initial: string } },
  actions: {
    moveTo: assign({ position: ({ context, event }) => (event.type === "POSITION" ? event.name : context.position) }),
    holdPending: assign({ pending: ({ context, event }) => (event.type === "POSITION" ? event.name : context.pending) }),
    takePending: assign(({ context }) => ({ position: context.pending ?? context.position, pending: null })),
  },
  guards: {
    locking: ({ event }) => event.type === "LOCK" && event.on,
    unlocking: ({ event }) => event.type === "LOCK" && !event.on,
  },
}).createMachine({
  id: "lever",
  context: ({ input }) => ({ position: input.initial, pending: null }),
  initial: "free",
  states: {
    free: {
      on: {
        POSITION: { actions: "moveTo" },
        LOCK: { guard: "locking", target: "locked" },
      },
    },
    locked: {
      on: {
        POSITION: { actions: "holdPending" },
        LOCK: { guard: "unlocking", target: "free", actions: "takePending" },
      },
    },
  },
});
