import { assign, createActor, setup, type Actor } from "xstate";
import type { Element } from "../elements/kinds";
import { elementName } from "../expect/coverage";

/**
 * The input walk (issue 6): a guided pass over every input position of a panel. The console
 * asks for one position at a time ("Move the FLAPS lever to mid"), waits for the panel's input
 * event, and records pass, wrong position or timeout. The sequencer is an xstate machine that
 * only decides; its timers run on the clock the actor is given (the real one on the bench, a
 * simulated one in tests), so a walk can be tested without waiting.
 */

export type WalkKind = "switch" | "lever" | "breaker" | "button";
export type WalkOutcome = "pass" | "wrong_position" | "timeout" | "skipped";

export interface WalkPlanStep {
  panelId: string;
  elementId: string;
  label: string;
  kind: WalkKind;
  /** A position name; breakers "in" or "pulled"; buttons "pressed". */
  position: string;
  prompt: string;
}

export interface WalkStepResult {
  result: WalkOutcome;
  /** What the panel reported instead, for wrong_position. */
  seen: string | null;
  tookMs: number;
}

/** One input as the bench read it from the link: the element and where it now rests. */
export interface WalkInput {
  panelId: string;
  elementId: string;
  position: string;
}

/** How long a different position must rest before it counts as the wrong one (a three-way switch passes its middle). */
export const WALK_SETTLE_MS = 1500;

/** "Move the FLAPS lever to mid", "Pull the GEN breaker", "Press the TEST button". */
export function walkPrompt(el: Pick<Element, "label" | "kind">, position: string): string {
  const name = elementName(el);
  if (el.kind === "breaker") return position === "pulled" ? `Pull the ${name}` : `Push the ${name} in`;
  if (el.kind === "button") return `Press the ${name}`;
  return `Move the ${name} to ${position}`;
}

/**
 * Every input position of the panels, element by element in definition order. Each element
 * starts with the position after the one it is in now and ends where it was, so every step is
 * a real movement (an input event only comes on a change) and the walk leaves the panel as it
 * found it. Placeholders, encoders and analog inputs are left out.
 */
export function walkSteps(panels: readonly { panelId: string; elements: readonly Element[] }[], current: (panelId: string, elementId: string) => string | null | undefined): WalkPlanStep[] {
  const out: WalkPlanStep[] = [];
  for (const p of panels) {
    for (const el of p.elements) {
      if (el.placeholder) continue;
      let positions: string[];
      if (el.kind === "switch" || el.kind === "lever") positions = [...el.positions];
      else if (el.kind === "breaker") positions = ["in", "pulled"];
      else if (el.kind === "button") positions = ["pressed"];
      else continue;
      const now = current(p.panelId, el.id);
      const at = now ? positions.indexOf(now) : -1;
      const ordered = el.kind === "button" ? positions : at < 0 ? positions : [...positions.slice(at + 1), ...positions.slice(0, at + 1)];
      for (const position of ordered) out.push({ panelId: p.panelId, elementId: el.id, label: el.label, kind: el.kind, position, prompt: walkPrompt(el, position) });
    }
  }
  return out;
}

interface WalkContext {
  steps: WalkPlanStep[];
  results: WalkStepResult[];
  index: number;
  timeoutMs: number;
  settleMs: number;
  /** The clock the actor's timers run on, read for how long a step took. */
  now: () => number;
  stepStartedAt: number;
  /** A different position of the asked element, waiting to settle. */
  wrong: string | null;
}

type WalkEvent = { type: "INPUT"; input: WalkInput } | { type: "SKIP" } | { type: "CANCEL" };

const asked = (c: WalkContext) => c.steps[c.index];
const isAsked = (c: WalkContext, e: WalkEvent) => e.type === "INPUT" && e.input.panelId === asked(c).panelId && e.input.elementId === asked(c).elementId && e.input.position === asked(c).position;
const isAskedElement = (c: WalkContext, e: WalkEvent) => e.type === "INPUT" && e.input.panelId === asked(c).panelId && e.input.elementId === asked(c).elementId;

/** The context after a step is answered: its result kept, the next step asked from now. */
function recorded(context: WalkContext, result: WalkOutcome, seen: string | null): Partial<WalkContext> {
  const now = context.now();
  return { results: [...context.results, { result, seen, tookMs: now - context.stepStartedAt }], index: context.index + 1, wrong: null, stepStartedAt: now };
}

export const inputWalkMachine = setup({
  types: {
    context: {} as WalkContext,
    events: {} as WalkEvent,
    input: {} as { steps: WalkPlanStep[]; timeoutMs: number; settleMs?: number; now: () => number },
  },
  delays: {
    stepTimeout: ({ context }) => context.timeoutMs,
    settle: ({ context }) => context.settleMs,
  },
  guards: {
    isAsked: ({ context, event }) => isAsked(context, event),
    isAskedElement: ({ context, event }) => isAskedElement(context, event),
    sawWrong: ({ context }) => context.wrong !== null,
    more: ({ context }) => context.index < context.steps.length,
  },
  actions: {
    pass: assign(({ context }) => recorded(context, "pass", null)),
    skipped: assign(({ context }) => recorded(context, "skipped", null)),
    timedOut: assign(({ context }) => recorded(context, "timeout", null)),
    wrongPosition: assign(({ context }) => recorded(context, "wrong_position", context.wrong)),
    noteWrong: assign({ wrong: ({ event }) => (event.type === "INPUT" ? event.input.position : null) }),
  },
}).createMachine({
  id: "inputWalk",
  initial: "next",
  context: ({ input }) => ({
    steps: input.steps,
    results: [],
    index: 0,
    timeoutMs: input.timeoutMs,
    settleMs: input.settleMs ?? WALK_SETTLE_MS,
    now: input.now,
    stepStartedAt: input.now(),
    wrong: null,
  }),
  on: { CANCEL: ".cancelled" },
  states: {
    next: { always: [{ guard: "more", target: "asking" }, { target: "done" }] },
    /** Waiting for the asked position; the step times out as a whole. */
    asking: {
      after: { stepTimeout: [{ guard: "sawWrong", target: "next", actions: "wrongPosition" }, { target: "next", actions: "timedOut" }] },
      on: {
        INPUT: [
          { guard: "isAsked", target: "next", actions: "pass" },
          { guard: "isAskedElement", target: "settling", actions: "noteWrong" },
        ],
        SKIP: { target: "next", actions: "skipped" },
      },
    },
    /** The asked element rests somewhere else: the right position may still follow (a switch passing its middle). */
    settling: {
      after: { settle: { target: "next", actions: "wrongPosition" }, stepTimeout: { target: "next", actions: "wrongPosition" } },
      on: {
        INPUT: [
          { guard: "isAsked", target: "next", actions: "pass" },
          { guard: "isAskedElement", target: "settling", reenter: true, actions: "noteWrong" },
        ],
        SKIP: { target: "next", actions: "skipped" },
      },
    },
    done: { type: "final" },
    cancelled: { type: "final" },
  },
});

/** The clock an input walk's timers run on: xstate's clock plus a reading (xstate's SimulatedClock fits). */
export interface WalkClock {
  now(): number;
  setTimeout(fn: (...args: unknown[]) => void, timeout: number): unknown;
  clearTimeout(id: unknown): void;
}

export const systemWalkClock: WalkClock = {
  now: () => performance.now(),
  setTimeout: (fn, ms) => setTimeout(fn, ms),
  clearTimeout: (id) => clearTimeout(id as ReturnType<typeof setTimeout>),
};

export type WalkState = "running" | "done" | "cancelled";

export interface WalkSnapshot {
  state: WalkState;
  current: number;
  steps: (WalkPlanStep & { result: WalkOutcome | null; seen: string | null; tookMs: number | null })[];
}

/** One input walk: the machine on a clock, told about inputs, skips and cancels; `onChange` after each. */
export class InputWalk {
  private readonly actor: Actor<typeof inputWalkMachine>;

  constructor(
    steps: WalkPlanStep[],
    options: { timeoutMs: number; settleMs?: number; clock?: WalkClock; onChange?: (snapshot: WalkSnapshot) => void },
  ) {
    const clock = options.clock ?? systemWalkClock;
    this.actor = createActor(inputWalkMachine, { input: { steps, timeoutMs: options.timeoutMs, settleMs: options.settleMs, now: () => clock.now() }, clock });
    let last = -1;
    let lastState = "";
    this.actor.subscribe((s) => {
      // Told once per step answered and once at the end, not for the machine's inner moves.
      const key = `${s.context.results.length}`;
      const state = this.state;
      if (Number(key) === last && state === lastState) return;
      last = Number(key);
      lastState = state;
      options.onChange?.(this.snapshot());
    });
    this.actor.start();
  }

  get state(): WalkState {
    const v = this.actor.getSnapshot().value;
    return v === "done" ? "done" : v === "cancelled" ? "cancelled" : "running";
  }

  /** The step being asked, or null once the walk is over. */
  get asked(): WalkPlanStep | null {
    const c = this.actor.getSnapshot().context;
    return this.state === "running" ? (c.steps[c.index] ?? null) : null;
  }

  input(input: WalkInput) {
    this.actor.send({ type: "INPUT", input });
  }

  skip() {
    this.actor.send({ type: "SKIP" });
  }

  cancel() {
    this.actor.send({ type: "CANCEL" });
    this.actor.stop();
  }

  snapshot(): WalkSnapshot {
    const c = this.actor.getSnapshot().context;
    return {
      state: this.state,
      current: c.index,
      steps: c.steps.map((s, i) => ({ ...s, result: c.results[i]?.result ?? null, seen: c.results[i]?.seen ?? null, tookMs: c.results[i]?.tookMs ?? null })),
    };
  }
}
