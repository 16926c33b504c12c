import { describe, expect, it } from "vitest";
import { encodeLinkFrame } from "../../../shared/link/codec";
import type { LinkFrame, LinkMessage } from "../../../shared/link/messages";
import { PanelValueMap } from "../../../shared/link/panel-values";
import { LinkStreamDecoder } from "../../../shared/link/stream";
import { panel as panelSchema, panelChannels } from "../../../shared/panel/schema";
import type { ChannelValue } from "../../../shared/recording/channels";
import { VirtualPanelDevice } from "../../../shared/virtual/panel-device";
import { flightGauges } from "../../../shared/panel/demo/panels";

/**
 * The one virtual panel shared by the browser, the device emulator and the tests, driven on an
 * injected clock through the real link codec: what a healthy one reports, how faults change it
 * (also while it runs), speed changes without jumps, and inputs moved by hand.
 */
const definition = panelSchema.parse({
  id: "test-bench",
  name: "Test bench",
  airframe: "test",
  elements: [
    { kind: "lamp", id: "gear-lamp", label: "GEAR", drive: { mode: "condition", on: { channel: "gear.unsafe" } } },
    { kind: "lamp", id: "fuel-lamp", label: "FUEL", drive: { mode: "condition", on: { channel: "fuel.low" } } },
    { kind: "switch", id: "beacon", label: "BEACON", positions: ["off", "on"], position: { channel: "lights.beacon" } },
    { kind: "breaker", id: "cb-pitot", label: "PITOT", trip: { channel: "cb.pitot" }, pulled: { channel: "cb.pitot_pulled" } },
    { kind: "readout", id: "code", label: "CODE", display: "seven-segment", value: { channel: "xpdr.code" }, format: { width: 4 } },
    { kind: "button", id: "ack", label: "ACK", pressed: { channel: "annun.ack" } },
  ],
});

function bench(device: VirtualPanelDevice) {
  const map = new PanelValueMap(panelChannels(definition), []);
  const decoder = new LinkStreamDecoder({ acceptFrom: "device" });
  let sequence = 0;
  const heard = (chunks: Uint8Array[]): LinkMessage[] =>
    chunks.flatMap((c) => decoder.push(c)).flatMap((e) => (e.ok ? [e.frame.message] : []));
  return {
    send(values: Record<string, ChannelValue>) {
      const frame: LinkFrame = { address: 0, sequence: sequence++ & 0xff, message: { type: "value_update", keyframeBegin: false, keyframeEnd: false, values: map.valuesOf(values) } };
      return heard(device.receiveBytes(encodeLinkFrame(frame)));
    },
    heard,
  };
}

const seenOf = (messages: LinkMessage[]) => messages.flatMap((m) => (m.type === "seen_report" ? m.seen : []));

describe("the shared virtual panel", () => {
  it("says hello at power-up and reports what its behaviours show for the values it got", () => {
    const device = new VirtualPanelDevice({ panel: definition, clock: () => 0 });
    const b = bench(device);
    expect(b.heard(device.powerUp()).map((m) => m.type)).toEqual(["hello"]);
    const seen = seenOf(b.send({ "gear.unsafe": true, "fuel.low": false, "lights.beacon": "on", "cb.pitot": false, "cb.pitot_pulled": false, "xpdr.code": 4321 }));
    expect(seen).toEqual(
      expect.arrayContaining([
        { element: 0, kind: "lamp_state", state: "on" },
        { element: 1, kind: "lamp_state", state: "off" },
        { element: 2, kind: "switch", position: 1 },
        { element: 3, kind: "breaker", position: "in" },
        { element: 4, kind: "readout", text: "4321" },
      ]),
    );
  });

  it("shows a fault set while it runs on exactly the element it names, and heals when it is lifted", () => {
    const device = new VirtualPanelDevice({ panel: definition, clock: () => 0 });
    const b = bench(device);
    b.send({ "gear.unsafe": false, "fuel.low": false });
    device.setFaults([{ kind: "lamp_inverted", element: "fuel-lamp" }]);
    const faulty = seenOf(b.send({ "gear.unsafe": true }));
    // The core reports only what changed: the inverted lamp now shows lit, the gear lamp too.
    expect(faulty).toEqual(expect.arrayContaining([{ element: 1, kind: "lamp_state", state: "on" }, { element: 0, kind: "lamp_state", state: "on" }]));
    device.setFaults([]);
    expect(seenOf(b.send({ "gear.unsafe": false }))).toEqual(expect.arrayContaining([{ element: 1, kind: "lamp_state", state: "off" }]));
  });

  it("runs device time at the replay speed and never jumps when the speed changes", () => {
    let now = 1000;
    const device = new VirtualPanelDevice({ panel: definition, clock: () => now, speed: 2 });
    const b = bench(device);
    b.send({ "gear.unsafe": false });
    now += 500; // 1000 ms of device time at 2x
    expect(device.deviceTime()).toBe(1000);
    device.speed = 0.5;
    expect(device.deviceTime()).toBe(1000);
    now += 1000; // 500 more at 0.5x
    expect(device.deviceTime()).toBe(1500);
  });

  it("drops off the line for a disconnect fault's window, counted from the first update", () => {
    let now = 0;
    const device = new VirtualPanelDevice({ panel: definition, clock: () => now, faults: [{ kind: "disconnect", fromMs: 100, toMs: 300 }] });
    expect(device.disconnectedNow()).toBe(false);
    bench(device).send({ "gear.unsafe": false });
    now = 50;
    expect(device.disconnectedNow()).toBe(false);
    now = 150;
    expect(device.disconnectedNow()).toBe(true);
    now = 300;
    expect(device.disconnectedNow()).toBe(false);
  });

  it("keeps an input where a hand put it, says so with an input event, and follows again when released", () => {
    const device = new VirtualPanelDevice({ panel: definition, clock: () => 0 });
    const b = bench(device);
    b.send({ "lights.beacon": "on", "cb.pitot": false, "cb.pitot_pulled": false });
    device.moveInput("beacon", { kind: "position", position: "off" });
    device.moveInput("cb-pitot", { kind: "breaker", position: "pulled" });
    const said = b.heard(device.takeOutgoing());
    expect(said).toEqual([
      { type: "input_event", inputs: [{ element: 2, kind: "position", position: 0 }] },
      { type: "input_event", inputs: [{ element: 3, kind: "position", position: 1 }] },
    ]);
    expect(device.takeOutgoing()).toEqual([]);
    expect(device.shown()["beacon"].position).toBe("off");
    expect(device.shown()["cb-pitot"].breaker).toBe("pulled");
    // The periodic report carries the hand-moved positions.
    expect(seenOf(b.heard([device.periodic()!]))).toEqual(expect.arrayContaining([{ element: 2, kind: "switch", position: 0 }, { element: 3, kind: "breaker", position: "pulled" }]));
    device.releaseInput("beacon");
    expect(device.shown()["beacon"].position).toBe("on");
  });

  it("says a push button pressed and let go by hand with input events, and refuses to press anything else", () => {
    const device = new VirtualPanelDevice({ panel: definition, clock: () => 0 });
    const b = bench(device);
    device.pressButton("ack", true);
    device.pressButton("ack", false);
    expect(b.heard(device.takeOutgoing())).toEqual([
      { type: "input_event", inputs: [{ element: 5, kind: "button", pressed: true }] },
      { type: "input_event", inputs: [{ element: 5, kind: "button", pressed: false }] },
    ]);
    expect(() => device.pressButton("beacon", true)).toThrow(/only a push button/);
    expect(() => device.pressButton("nothing", true)).toThrow(/no element/);
  });

  it("refuses to move what is not an input, or to a position the element does not have", () => {
    const device = new VirtualPanelDevice({ panel: definition, clock: () => 0 });
    expect(() => device.moveInput("gear-lamp", { kind: "position", position: "on" })).toThrow(/lamp/);
    expect(() => device.moveInput("beacon", { kind: "position", position: "flash" })).toThrow(/no position flash/);
    expect(() => device.moveInput("nothing", { kind: "position", position: "on" })).toThrow(/no element/);
  });

  it("reports a needle still slewing between updates, as a board does, at most every 50 ms", () => {
    let now = 0;
    const device = new VirtualPanelDevice({ panel: flightGauges, clock: () => now });
    const map = new PanelValueMap(panelChannels(flightGauges), []);
    const decoder = new LinkStreamDecoder({ acceptFrom: "device" });
    const send = (values: Record<string, ChannelValue>) =>
      device.receiveBytes(encodeLinkFrame({ address: 0, sequence: 1, message: { type: "value_update", keyframeBegin: false, keyframeEnd: false, values: map.valuesOf(values, true) } }));
    const index = flightGauges.elements.findIndex((e) => e.id === "airspeed");
    const airspeedIn = (bytes: Uint8Array | null) => {
      if (!bytes) return undefined;
      const seen = decoder.push(bytes).flatMap((e) => (e.ok && e.frame.message.type === "seen_report" ? e.frame.message.seen : []));
      const entry = seen.find((x) => x.element === index);
      return entry && entry.kind === "pointer_angle" ? entry.centidegrees / 100 : undefined;
    };
    const power = Object.fromEntries(panelChannels(flightGauges).filter((c) => c.startsWith("elec.")).map((c) => [c, true]));
    send({ ...power, ias_kt: 0 });
    now = 100;
    send({ ...power, ias_kt: 200 });
    const angles: number[] = [];
    for (now = 150; now <= 900; now += 50) {
      const a = airspeedIn(device.periodic());
      if (a !== undefined) angles.push(a);
    }
    now = 910;
    expect(device.periodic()).toBeNull(); // asked again within 50 ms of the last look
    // 240 degrees per second from 0 towards the 200 kt mark (290 degrees): it moves on every report.
    expect(angles.length).toBeGreaterThanOrEqual(10);
    for (let i = 1; i < angles.length; i++) expect(angles[i]).toBeGreaterThan(angles[i - 1]);
    expect(angles.at(-1)!).toBeLessThanOrEqual(290);
  });
});
