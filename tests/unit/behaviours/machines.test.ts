import { describe, expect, it } from "vitest";
import { createActor, SimulatedClock } from "xstate";
import {
  advanceClockTo,
  breakerMachine,
  buttonMachine,
  lampMachine,
  latchMachine,
  leverMachine,
  nextDeadline,
  pointerMachine,
  readoutMachine,
  switchMachine,
} from "../../../shared/elements/behaviours";

function lamp(input = { alwaysPowered: true, flashes: false, alwaysFlashWhenLit: true }) {
  return createActor(lampMachine, { clock: new SimulatedClock(), input }).start();
}

describe("lamp behaviour", () => {
  it("starts off when always powered, dark when it has a power channel", () => {
    expect(lamp().getSnapshot().value).toBe("off");
    expect(lamp({ alwaysPowered: false, flashes: false, alwaysFlashWhenLit: true }).getSnapshot().value).toBe("dark");
  });

  it("goes off -> steady -> off with its drive", () => {
    const a = lamp();
    a.send({ type: "LIGHT", on: true });
    expect(a.getSnapshot().value).toBe("steady");
    a.send({ type: "LIGHT", on: false });
    expect(a.getSnapshot().value).toBe("off");
  });

  it("flashes when lit if it has a flash setting, and only while the flash condition holds when it has one", () => {
    const always = lamp({ alwaysPowered: true, flashes: true, alwaysFlashWhenLit: true });
    always.send({ type: "LIGHT", on: true });
    expect(always.getSnapshot().value).toBe("flashing");

    const conditional = lamp({ alwaysPowered: true, flashes: true, alwaysFlashWhenLit: false });
    conditional.send({ type: "LIGHT", on: true });
    expect(conditional.getSnapshot().value).toBe("steady");
    conditional.send({ type: "FLASH_WHEN", on: true });
    expect(conditional.getSnapshot().value).toBe("flashing");
    conditional.send({ type: "FLASH_WHEN", on: false });
    expect(conditional.getSnapshot().value).toBe("steady");
  });

  it("lights steadily in a lamp test whatever the drive says, and returns to the drive afterwards", () => {
    const a = lamp({ alwaysPowered: true, flashes: true, alwaysFlashWhenLit: true });
    a.send({ type: "TEST", on: true });
    expect(a.getSnapshot().value).toBe("testing");
    a.send({ type: "LIGHT", on: true }); // the drive changes during the test: still testing
    expect(a.getSnapshot().value).toBe("testing");
    a.send({ type: "TEST", on: false });
    expect(a.getSnapshot().value).toBe("flashing");
  });

  it("is dark without power, even in a lamp test, and resumes when power returns", () => {
    const a = lamp({ alwaysPowered: false, flashes: false, alwaysFlashWhenLit: true });
    a.send({ type: "LIGHT", on: true });
    a.send({ type: "TEST", on: true });
    expect(a.getSnapshot().value).toBe("dark");
    a.send({ type: "POWER", on: true });
    expect(a.getSnapshot().value).toBe("testing");
    a.send({ type: "TEST", on: false });
    expect(a.getSnapshot().value).toBe("steady");
    a.send({ type: "POWER", on: false });
    expect(a.getSnapshot().value).toBe("dark");
  });
});

describe("master caution latch", () => {
  const start = () => createActor(latchMachine, { clock: new SimulatedClock(), input: { cautionCount: 2, alwaysPowered: true } }).start();

  it("alerts on a new caution and stays until acknowledged, even after the caution clears", () => {
    const a = start();
    expect(a.getSnapshot().value).toEqual({ alert: "quiet", supply: "normal" });
    a.send({ type: "CAUTION", index: 0, on: true });
    expect(a.getSnapshot().value.alert).toBe("alerting");
    a.send({ type: "CAUTION", index: 0, on: false });
    expect(a.getSnapshot().value.alert).toBe("alerting");
    a.send({ type: "ACKNOWLEDGE", on: true });
    expect(a.getSnapshot().value.alert).toBe("quiet");
  });

  it("does not re-alert for a caution still on after acknowledgement, but does for a second caution", () => {
    const a = start();
    a.send({ type: "CAUTION", index: 0, on: true });
    a.send({ type: "ACKNOWLEDGE", on: true });
    a.send({ type: "ACKNOWLEDGE", on: false });
    a.send({ type: "CAUTION", index: 0, on: true }); // the same caution, still on: not new
    expect(a.getSnapshot().value.alert).toBe("quiet");
    a.send({ type: "CAUTION", index: 1, on: true });
    expect(a.getSnapshot().value.alert).toBe("alerting");
  });

  it("treats a caution that clears and comes back as new", () => {
    const a = start();
    a.send({ type: "CAUTION", index: 0, on: true });
    a.send({ type: "ACKNOWLEDGE", on: true });
    a.send({ type: "ACKNOWLEDGE", on: false });
    a.send({ type: "CAUTION", index: 0, on: false });
    expect(a.getSnapshot().value.alert).toBe("quiet");
    a.send({ type: "CAUTION", index: 0, on: true });
    expect(a.getSnapshot().value.alert).toBe("alerting");
  });

  it("releasing the button does not acknowledge; pressing does", () => {
    const a = start();
    a.send({ type: "CAUTION", index: 1, on: true });
    a.send({ type: "ACKNOWLEDGE", on: false });
    expect(a.getSnapshot().value.alert).toBe("alerting");
  });

  it("keeps latching while unpowered and in test; the supply region shows dark and testing", () => {
    const a = createActor(latchMachine, { clock: new SimulatedClock(), input: { cautionCount: 1, alwaysPowered: false } }).start();
    expect(a.getSnapshot().value.supply).toBe("dark");
    a.send({ type: "CAUTION", index: 0, on: true });
    expect(a.getSnapshot().value).toEqual({ alert: "alerting", supply: "dark" });
    a.send({ type: "POWER", on: true });
    a.send({ type: "TEST", on: true });
    expect(a.getSnapshot().value).toEqual({ alert: "alerting", supply: "testing" });
    a.send({ type: "TEST", on: false });
    expect(a.getSnapshot().value.supply).toBe("normal");
  });
});

describe("pointer modes", () => {
  it("follows when always powered; parks without power and follows when it returns", () => {
    expect(createActor(pointerMachine, { input: { alwaysPowered: true } }).start().getSnapshot().value).toBe("following");
    const a = createActor(pointerMachine, { input: { alwaysPowered: false } }).start();
    expect(a.getSnapshot().value).toBe("parked");
    a.send({ type: "POWER", on: false });
    expect(a.getSnapshot().value).toBe("parked");
    a.send({ type: "POWER", on: true });
    expect(a.getSnapshot().value).toBe("following");
    a.send({ type: "POWER", on: false });
    expect(a.getSnapshot().value).toBe("parked");
  });
});

describe("readout modes", () => {
  it("goes dark without power, blank when blanked, testing in a test, showing otherwise", () => {
    const a = createActor(readoutMachine, { input: { alwaysPowered: false } }).start();
    expect(a.getSnapshot().value).toBe("dark");
    a.send({ type: "POWER", on: true });
    expect(a.getSnapshot().value).toBe("showing");
    a.send({ type: "BLANK", on: true });
    expect(a.getSnapshot().value).toBe("blank");
    a.send({ type: "TEST", on: true });
    expect(a.getSnapshot().value).toBe("testing");
    a.send({ type: "TEST", on: false });
    expect(a.getSnapshot().value).toBe("blank");
    a.send({ type: "BLANK", on: false });
    expect(a.getSnapshot().value).toBe("showing");
    a.send({ type: "POWER", on: false });
    expect(a.getSnapshot().value).toBe("dark");
  });
});

describe("breaker", () => {
  const start = () => createActor(breakerMachine).start();

  it("trips when the aircraft trips it and stays tripped when the fault clears", () => {
    const a = start();
    expect(a.getSnapshot().value).toBe("in");
    a.send({ type: "TRIP", on: true });
    expect(a.getSnapshot().value).toBe("tripped");
    a.send({ type: "TRIP", on: false });
    expect(a.getSnapshot().value).toBe("tripped");
  });

  it("resets only by a pull and a push", () => {
    const a = start();
    a.send({ type: "TRIP", on: true });
    a.send({ type: "TRIP", on: false });
    a.send({ type: "PULL", on: false }); // a push without a pull does nothing
    expect(a.getSnapshot().value).toBe("tripped");
    a.send({ type: "PULL", on: true });
    expect(a.getSnapshot().value).toBe("pulled");
    a.send({ type: "PULL", on: false });
    expect(a.getSnapshot().value).toBe("in");
  });

  it("trips again at once when pushed in while the fault is still there", () => {
    const a = start();
    a.send({ type: "TRIP", on: true });
    a.send({ type: "PULL", on: true });
    a.send({ type: "PULL", on: false });
    expect(a.getSnapshot().value).toBe("tripped");
  });

  it("can be pulled by hand from in, and a fault while pulled waits for the push", () => {
    const a = start();
    a.send({ type: "PULL", on: true });
    expect(a.getSnapshot().value).toBe("pulled");
    a.send({ type: "TRIP", on: true });
    expect(a.getSnapshot().value).toBe("pulled");
    a.send({ type: "PULL", on: false });
    expect(a.getSnapshot().value).toBe("tripped");
  });
});

describe("switch with spring return, on a simulated clock", () => {
  function start() {
    const clock = new SimulatedClock();
    const actor = createActor(switchMachine, { clock, input: { initial: "OFF", springFrom: ["START"], springTo: "ON", holdMs: 3000 } }).start();
    return { clock, actor };
  }

  it("moves between positions while resting", () => {
    const { actor } = start();
    actor.send({ type: "POSITION", name: "ON" });
    expect(actor.getSnapshot().context.position).toBe("ON");
    expect(actor.getSnapshot().value).toBe("resting");
  });

  it("is held at a spring-loaded position and springs back after the hold time", () => {
    const { clock, actor } = start();
    actor.send({ type: "POSITION", name: "START" });
    expect(actor.getSnapshot().value).toBe("held");
    advanceClockTo(clock, 2999);
    expect(actor.getSnapshot().context.position).toBe("START");
    advanceClockTo(clock, 3000);
    expect(actor.getSnapshot().value).toBe("resting");
    expect(actor.getSnapshot().context.position).toBe("ON");
  });

  it("leaves the spring position at once when the aircraft does, and the timer no longer fires", () => {
    const { clock, actor } = start();
    actor.send({ type: "POSITION", name: "START" });
    advanceClockTo(clock, 1000);
    actor.send({ type: "POSITION", name: "OFF" });
    expect(actor.getSnapshot().value).toBe("resting");
    advanceClockTo(clock, 10_000);
    expect(actor.getSnapshot().context.position).toBe("OFF");
    expect(nextDeadline(clock)).toBeNull();
  });
});

describe("advanceClockTo", () => {
  it("fires a chain of timers deadline by deadline, where one increment fires only the first", () => {
    // The trap from RECIPES.md: increment() fires only the timers due at the new time, once.
    const hops = (clock: SimulatedClock) => {
      const fired: number[] = [];
      const arm = () => clock.setTimeout(() => (fired.push(clock.now()), fired.length < 4 && arm()), 250);
      arm();
      return fired;
    };
    const plain = new SimulatedClock();
    const plainFired = hops(plain);
    plain.increment(1000);
    expect(plainFired).toEqual([1000]);

    const stepped = new SimulatedClock();
    const steppedFired = hops(stepped);
    advanceClockTo(stepped, 1000);
    expect(steppedFired).toEqual([250, 500, 750, 1000]);
  });
});

describe("lever with lock", () => {
  it("follows its position while free, holds it while locked, and takes the pending one on release", () => {
    const a = createActor(leverMachine, { input: { initial: "down" } }).start();
    a.send({ type: "POSITION", name: "up" });
    expect(a.getSnapshot().context.position).toBe("up");
    a.send({ type: "LOCK", on: true });
    expect(a.getSnapshot().value).toBe("locked");
    a.send({ type: "POSITION", name: "down" });
    expect(a.getSnapshot().context.position).toBe("up");
    a.send({ type: "LOCK", on: false });
    expect(a.getSnapshot().value).toBe("free");
    expect(a.getSnapshot().context.position).toBe("down");
  });
});

describe("button", () => {
  it("is pressed and released", () => {
    const a = createActor(buttonMachine).start();
    expect(a.getSnapshot().value).toBe("released");
    a.send({ type: "PRESS", on: true });
    expect(a.getSnapshot().value).toBe("pressed");
    a.send({ type: "PRESS", on: true });
    expect(a.getSnapshot().value).toBe("pressed");
    a.send({ type: "PRESS", on: false });
    expect(a.getSnapshot().value).toBe("released");
  });
});
