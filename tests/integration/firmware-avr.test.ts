import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { cobsEncode } from "../../shared/link/cobs";
import { encodeLinkFrameBody } from "../../shared/link/codec";
import type { ChannelValue, LinkFrame, SeenEntry } from "../../shared/link/messages";
import { buildFirmware, EmulatedBoard, type HarnessState } from "../../firmware/sim/emulated-board";

/**
 * The real firmware (firmware/examples/bench-panel) built for an ATmega2560 with Debian's
 * avr-gcc, running on simavr behind a pseudo-terminal, driven from TypeScript through the bench's
 * serial transport and link codec on a direct link (address 0). What the board reports it shows
 * is compared with what its pins drive (from the harness) and with what the panel definition
 * (bench-panel.panel.json) says it should show for the values sent.
 *
 * The same board as a serial panel in a real bench run, replaying a demo recording and judged
 * by the bench, is tests/integration/firmware-run.test.ts.
 */

// Channel indices: the order the panel definition's elements first bind them (the sketch's table).
const CH = { gearUnsafe: 0, lampTest: 1, fuelLow: 2, masterCaution: 3, hydPressure: 4, fuelQty: 5, battery: 6, landingLights: 7, breakerTripped: 8, breakerPulled: 9, dimmerPct: 10 };
const kSweepSteps = 810;

function pointerSteps(v: ChannelValue | undefined): number {
  if (!v) return 0;
  const psi = Number(v.value);
  const steps = v.kind === "float" ? Math.trunc(Math.fround(psi) * kSweepSteps / 3000 + 0.5) : Math.trunc((psi * kSweepSteps + 1500) / 3000);
  return Math.min(kSweepSteps, Math.max(0, steps));
}

/** The readout's eight digits as the definition formats them (width 8, right-aligned); all blank is "". */
function readoutText(v: ChannelValue | undefined): string {
  if (!v) return "";
  let text: string;
  if (v.kind === "text") {
    // Code B shows digits, '-', E, H, L, P; anything else is a blank digit.
    text = [...v.value.slice(0, 8)].map((c) => (/[0-9\-EHLPehlp]/.test(c) ? c.toUpperCase() : " ")).join("");
  } else {
    const n = Number(v.value);
    // Half away from zero, as shared/elements/bindings.ts formatReadout rounds with 0 decimals.
    const digits = String(Math.sign(n) * Math.round(Math.abs(n)));
    text = digits.length > 8 ? "--------" : digits;
  }
  const shown = text.padStart(8, " ");
  return shown.trim() === "" ? "" : shown;
}

/**
 * What the board has been told, and what it should therefore show. The breaker latches: it trips
 * when its channel goes true and stays tripped until pulled and pushed in (docs/behaviours.md).
 */
class PanelModel {
  readonly values = new Map<number, ChannelValue>();
  private tripLatched = false;
  private pulled = false;

  apply(message: { keyframeBegin: boolean; values: ChannelValue[] }) {
    if (message.keyframeBegin) this.values.clear();
    for (const v of message.values) this.values.set(v.channel, v);
    if (this.on(CH.breakerTripped) && !this.pulled) this.tripLatched = true;
  }

  pullBreaker() {
    this.pulled = true;
    this.tripLatched = false;
  }

  pushBreaker() {
    this.pulled = false;
    this.tripLatched = this.on(CH.breakerTripped);
  }

  on(channel: number) {
    return Boolean(this.values.get(channel)?.value);
  }

  expected(): Map<number, SeenEntry> {
    const test = this.on(CH.lampTest);
    const caution = Number(this.values.get(CH.masterCaution)?.value ?? 0);
    const pct = Number(this.values.get(CH.dimmerPct)?.value ?? 0);
    const out = new Map<number, SeenEntry>();
    out.set(0, { element: 0, kind: "lamp_state", state: test || this.on(CH.gearUnsafe) ? "on" : "off" });
    out.set(1, { element: 1, kind: "lamp_state", state: test || this.on(CH.fuelLow) ? "on" : "off" });
    out.set(2, { element: 2, kind: "lamp_state", state: !test && caution === 2 ? "flashing" : test || caution !== 0 ? "on" : "off" });
    out.set(3, { element: 3, kind: "pointer_angle", centidegrees: Math.trunc((pointerSteps(this.values.get(CH.hydPressure)) * 100) / 3) });
    out.set(4, { element: 4, kind: "readout", text: readoutText(this.values.get(CH.fuelQty)) });
    out.set(7, { element: 7, kind: "breaker", position: this.pulled ? "pulled" : this.tripLatched ? "tripped" : "in" });
    // The dimmer's percentage as the engine turns it into a level (shared/expect/engine.ts).
    out.set(8, { element: 8, kind: "lamp_level", level: Math.round(Math.min(1, Math.max(0, pct * 0.01)) * 255) });
    return out;
  }
}

/** Elements whose seen state differs from the expected one. */
function mismatches(board: EmulatedBoard, model: PanelModel): number[] {
  const bad: number[] = [];
  for (const [element, want] of model.expected()) {
    if (JSON.stringify(board.seen.get(element)) !== JSON.stringify(want)) bad.push(element);
  }
  return bad;
}

/** What the board says it shows must be what its pins drive. */
function checkAgainstPins(board: EmulatedBoard, pins: HarnessState) {
  const lamp = (e: number) => (board.seen.get(e) as { state?: string } | undefined)?.state;
  for (const e of [0, 1]) expect(lamp(e), `lamp ${e} vs pins ${pins.lamps}`).toBe(pins.lamps & (1 << e) ? "on" : "off");
  if (lamp(2) !== "flashing") expect(lamp(2)).toBe(pins.lamps & 4 ? "on" : "off");
  expect(board.seen.get(3)).toEqual({ element: 3, kind: "pointer_angle", centidegrees: Math.trunc((pins.steps * 100) / 3) });
  expect(board.seen.get(4)).toEqual({ element: 4, kind: "readout", text: pins.readout.trim() === "" ? "" : pins.readout });
  const breaker = (board.seen.get(7) as { position?: string } | undefined)?.position;
  if (breaker !== "pulled") expect(breaker).toBe(pins.trip ? "tripped" : "in");
}

async function waitUntil(what: string, check: () => boolean | Promise<boolean>, timeoutMs = 5000) {
  const deadline = performance.now() + timeoutMs;
  while (!(await check())) {
    if (performance.now() > deadline) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 20));
  }
}

const keyframe = (values: ChannelValue[]) => ({ type: "value_update" as const, keyframeBegin: true, keyframeEnd: true, values });
const delta = (values: ChannelValue[]) => ({ type: "value_update" as const, keyframeBegin: false, keyframeEnd: false, values });

const firstValues: ChannelValue[] = [
  { channel: CH.gearUnsafe, kind: "boolean", value: true },
  { channel: CH.lampTest, kind: "boolean", value: false },
  { channel: CH.fuelLow, kind: "boolean", value: false },
  { channel: CH.masterCaution, kind: "enum", value: 1 },
  { channel: CH.hydPressure, kind: "float", value: 1500 },
  { channel: CH.fuelQty, kind: "int", value: 1250 },
  { channel: CH.battery, kind: "boolean", value: true },
  { channel: CH.landingLights, kind: "enum", value: 2 },
  { channel: CH.breakerTripped, kind: "boolean", value: false },
  { channel: CH.breakerPulled, kind: "boolean", value: false },
  { channel: CH.dimmerPct, kind: "int", value: 50 },
];

/** Applies a value update to the board and to our model of it; waits for the acknowledgement. */
async function apply(board: EmulatedBoard, model: PanelModel, message: ReturnType<typeof keyframe>) {
  model.apply(message);
  const from = board.frames.length;
  const sequence = await board.send(message);
  const ack = await board.waitForApplied(sequence, from);
  // Every value the sketch takes is accepted: no error frame between the update and its report.
  const refused = board.frames.slice(from, board.frames.indexOf(ack)).filter((f) => f.frame.message.type === "error");
  expect(refused.map((f) => f.frame.message)).toEqual([]);
  // The needle takes time to get there; reports follow it every 20 ms until it rests.
  const target = (model.expected().get(3) as { centidegrees: number }).centidegrees;
  await waitUntil("the needle to reach its value", () => (board.seen.get(3) as { centidegrees?: number } | undefined)?.centidegrees === target);
}

beforeAll(() => {
  // Builds the three variants and the harness; fails (never skips) with what to install.
  buildFirmware();
}, 600_000);

describe("bench-panel firmware on an emulated ATmega2560, over a pty", () => {
  let board: EmulatedBoard;
  const model = new PanelModel();

  beforeAll(async () => {
    board = await EmulatedBoard.start("panel");
  }, 30_000);
  afterAll(async () => {
    await board?.stop();
  });

  it("says hello at power-up, and again with every input's state when identified", async () => {
    const power = await board.waitFor((f) => f.message.type === "hello", { timeoutMs: 5000, what: "power-up hello" });
    expect(power.frame.address).toBe(0);
    // A pointer must home against its stop before its angle is known.
    await waitUntil("the pointer to home", () => board.seen.get(3)?.kind === "pointer_angle", 5000);
    const from = board.frames.length;
    await board.send({ type: "identify" });
    const hello = await board.waitFor((f) => f.message.type === "hello", { from, what: "hello" });
    expect(hello.frame.message).toEqual({
      type: "hello",
      deviceId: "70616e656c000001",
      firmware: { major: 1, minor: 0, patch: 0 },
      protocolVersion: 1,
      capabilities: { valueUpdates: true, seenReports: true, inputEvents: true, waitsForPoll: false, textValues: true, floatValues: true },
      maxFrameBytes: 254,
      elementCount: 9,
      channelCount: 11,
      panel: "bench-panel",
    });
    const inputs = await board.waitFor((f) => f.message.type === "input_event", { from, what: "input event" });
    expect(inputs.frame.message).toEqual({
      type: "input_event",
      inputs: [
        { element: 5, kind: "position", position: 0 },
        { element: 6, kind: "position", position: 0 },
        { element: 7, kind: "position", position: 0 },
      ],
    });
  });

  it("applies a keyframe: seen reports match the pins and the panel definition", async () => {
    await apply(board, model, keyframe(firstValues));
    const pins = await board.state();
    checkAgainstPins(board, pins);
    expect(mismatches(board, model)).toEqual([]);
    expect(pins.lamps).toBe(0b101);
    expect(pins.steps).toBe(405);
    expect(pins.readout).toBe("    1250");
  });

  it("follows deltas: lamps, needle both ways, readout text and rounding, breaker trip and latch, lamp test, dimmer", async () => {
    const steps: ChannelValue[][] = [
      [{ channel: CH.gearUnsafe, kind: "boolean", value: false }, { channel: CH.fuelLow, kind: "boolean", value: true }, { channel: CH.hydPressure, kind: "int", value: 2900 }],
      [{ channel: CH.hydPressure, kind: "float", value: 250.5 }, { channel: CH.fuelQty, kind: "text", value: "HELP-12" }],
      [{ channel: CH.breakerTripped, kind: "boolean", value: true }, { channel: CH.fuelQty, kind: "int", value: -40 }],
      // The fault clears; the breaker stays tripped until it is pulled and pushed in.
      [{ channel: CH.breakerTripped, kind: "boolean", value: false }],
      [{ channel: CH.lampTest, kind: "boolean", value: true }],
      [{ channel: CH.lampTest, kind: "boolean", value: false }, { channel: CH.fuelQty, kind: "int", value: 123456789 }],
      [{ channel: CH.fuelQty, kind: "float", value: 1249.5 }, { channel: CH.dimmerPct, kind: "float", value: 33.3 }],
      [{ channel: CH.fuelQty, kind: "float", value: -0.4 }, { channel: CH.dimmerPct, kind: "int", value: 100 }],
    ];
    for (const change of steps) {
      await apply(board, model, delta(change));
      checkAgainstPins(board, await board.state());
      expect(mismatches(board, model), JSON.stringify(change)).toEqual([]);
    }
    expect(board.seen.get(7)).toEqual({ element: 7, kind: "breaker", position: "tripped" });
  });

  it("flashes a flashing lamp at its pin and reports it as flashing", async () => {
    await apply(board, model, delta([{ channel: CH.masterCaution, kind: "enum", value: 2 }]));
    expect(board.seen.get(2)).toEqual({ element: 2, kind: "lamp_state", state: "flashing" });
    const levels = new Set<number>();
    const end = performance.now() + 1200;
    while (performance.now() < end) {
      levels.add((await board.state()).lamps & 4);
      await new Promise((r) => setTimeout(r, 60));
    }
    expect([...levels].sort()).toEqual([0, 4]);
    await apply(board, model, delta([{ channel: CH.masterCaution, kind: "enum", value: 0 }]));
  });

  it("sends input events when a switch moves or the breaker is pulled", async () => {
    const from = board.frames.length;
    board.setPin("C0", 0); // battery switch closes: on
    const battery = await board.waitFor((f) => f.message.type === "input_event", { from, what: "battery switch event" });
    expect(battery.frame.message).toEqual({ type: "input_event", inputs: [{ element: 5, kind: "position", position: 1 }] });
    const from2 = board.frames.length;
    board.setPin("C2", 0); // landing lights to "land"
    board.setPin("C3", 1); // breaker pulled: its contact opens
    await waitUntil("both events", () =>
      board.frames.slice(from2).flatMap((f) => (f.frame.message.type === "input_event" ? f.frame.message.inputs : [])).length >= 2,
    );
    const events = board.frames.slice(from2).flatMap((f) => (f.frame.message.type === "input_event" ? f.frame.message.inputs : []));
    expect(events).toContainEqual({ element: 6, kind: "position", position: 2 });
    expect(events).toContainEqual({ element: 7, kind: "position", position: 1 });
    await waitUntil("the breaker reported pulled", () => (board.seen.get(7) as { position?: string } | undefined)?.position === "pulled");
    model.pullBreaker();
    expect(board.seen.get(5)).toEqual({ element: 5, kind: "switch", position: 1 });
    // Pulled and pushed in with the fault gone: the latch is reset, the trip lamp dark.
    board.setPin("C3", 0);
    model.pushBreaker();
    await waitUntil("the breaker back in", () => (board.seen.get(7) as { position?: string } | undefined)?.position === "in");
    expect((await board.state()).trip).toBe(0);
    expect(mismatches(board, model)).toEqual([]);
  });

  describe("bad input never hangs it or corrupts its state", () => {
    const heartbeat = async () => {
      const from = board.frames.length;
      await board.send({ type: "poll" });
      const beat = await board.waitFor((f) => f.message.type === "heartbeat", { from, what: "heartbeat" });
      if (beat.frame.message.type !== "heartbeat") throw new Error("not a heartbeat");
      return beat.frame.message;
    };
    const cases: { name: string; bytes: () => Uint8Array; code: string; counter: "truncated" | "badCrc" | "oversized" }[] = [
      { name: "garbage bytes", bytes: () => new Uint8Array([0x13, 0x37, 0x99, 0xfe, 0x00]), code: "truncated", counter: "truncated" },
      // The protocol's own truncated example: its COBS code byte points past the frame's end.
      { name: "a truncated frame", bytes: () => new Uint8Array([0x08, 0x01, 0x03, 0x84, 0x00]), code: "truncated", counter: "truncated" },
      {
        name: "a bad CRC",
        bytes: () => {
          const body = encodeLinkFrameBody({ address: 0, sequence: 201, message: delta([{ channel: 0, kind: "boolean", value: true }]) });
          body[4] ^= 0x01; // the flags byte, after the CRC was computed: now it says keyframeBegin
          return new Uint8Array([...cobsEncode(body), 0x00]);
        },
        code: "bad_crc",
        counter: "badCrc",
      },
      { name: "an oversized frame", bytes: () => new Uint8Array([...new Array(400).fill(0x41), 0x00]), code: "oversized", counter: "oversized" },
    ];

    for (const c of cases) {
      it(`${c.name}: counted, answered with ${c.code}, and the board carries on`, async () => {
        const before = await heartbeat();
        const pinsBefore = await board.state();
        const from = board.frames.length;
        await board.sendRaw(new Uint8Array([0x00])); // close anything half received, as after an idle line
        await board.sendRaw(c.bytes());
        const answer = await board.waitFor((f) => f.message.type === "error", { from, what: `${c.code} error` });
        expect(answer.frame.message).toMatchObject({ type: "error", from: "device", code: c.code });
        const after = await heartbeat();
        expect(after[c.counter]).toBe(before[c.counter] + 1);
        // Nothing the bad bytes said was applied: outputs as they were.
        const pinsAfter = await board.state();
        expect({ ...pinsAfter, ms: 0, behindMs: 0, worstBehindMs: 0 }).toEqual({ ...pinsBefore, ms: 0, behindMs: 0, worstBehindMs: 0 });
        expect(mismatches(board, model)).toEqual([]);
        // And the next good update is applied and acknowledged.
        await apply(board, model, delta([{ channel: CH.dimmerPct, kind: "int", value: (Number(model.values.get(CH.dimmerPct)?.value ?? 0) + 17) % 101 }]));
        expect(mismatches(board, model)).toEqual([]);
      });
    }

    it("a long burst of random bytes: no hang, state intact, link carries on", async () => {
      const pinsBefore = await board.state();
      let seed = 12345;
      const random = () => ((seed = (seed * 1103515245 + 12345) & 0x7fffffff) >> 16) & 0xff;
      const burst = new Uint8Array(3000).map(() => random());
      await board.sendRaw(burst);
      await board.sendRaw(new Uint8Array([0x00]));
      const beat = await heartbeat();
      expect(beat.badCrc + beat.truncated + beat.oversized + beat.rejected).toBeGreaterThan(4);
      const pinsAfter = await board.state();
      expect(pinsAfter.lamps).toBe(pinsBefore.lamps);
      expect(pinsAfter.readout).toBe(pinsBefore.readout);
      expect(pinsAfter.steps).toBe(pinsBefore.steps);
      await apply(board, model, delta([{ channel: CH.gearUnsafe, kind: "boolean", value: true }]));
      checkAgainstPins(board, await board.state());
      expect(mismatches(board, model)).toEqual([]);
    });
  });

  it("keeps emulated time with the wall clock (heartbeat uptime against our own clock)", async () => {
    const first = await board.waitFor((f) => f.message.type === "heartbeat", { from: board.frames.length, timeoutMs: 2500, what: "heartbeat" });
    const second = await board.waitFor((f) => f.message.type === "heartbeat", { from: board.frames.indexOf(first) + 1, timeoutMs: 2500, what: "heartbeat" });
    const uptime = (f: LinkFrame) => (f.message.type === "heartbeat" ? f.message.uptimeMs : NaN);
    const boardMs = uptime(second.frame) - uptime(first.frame);
    expect(Math.abs(boardMs - (second.at - first.at))).toBeLessThan(60);
  });
});

describe("an injected firmware fault (FUEL LOW driven inverted) on the emulated board", () => {
  let board: EmulatedBoard;
  beforeAll(async () => {
    board = await EmulatedBoard.start("fault");
  }, 30_000);
  afterAll(async () => {
    await board?.stop();
  });

  it("is reported on exactly that element", async () => {
    await board.waitFor((f) => f.message.type === "hello", { timeoutMs: 5000, what: "power-up hello" });
    await waitUntil("the pointer to home", () => board.seen.get(3)?.kind === "pointer_angle", 5000);
    const model = new PanelModel();
    await apply(board, model, keyframe(firstValues));
    expect(mismatches(board, model)).toEqual([1]);
    // The board tells the truth about its pin: the pin itself is inverted.
    const pins = await board.state();
    checkAgainstPins(board, pins);
    expect(pins.lamps & 0b010).toBe(0b010);
    await apply(board, model, delta([{ channel: CH.fuelLow, kind: "boolean", value: true }]));
    expect(mismatches(board, model)).toEqual([1]);
    expect((await board.state()).lamps & 0b010).toBe(0);
  });
});
