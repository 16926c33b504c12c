import { describe, expect, it } from "vitest";
import { seenFromLink } from "../../../shared/compare/from-link";
import { panel } from "../../../shared/panel/schema";

const def = panel.parse({
  id: "from-link",
  name: "From link",
  airframe: "test",
  elements: [
    { kind: "lamp", id: "gear-lamp", label: "GEAR", drive: { mode: "condition", on: { channel: "gear.unsafe" } } },
    { kind: "breaker", id: "pump-cb", label: "PUMP", trip: { channel: "cb.pump.trip" }, pulled: { channel: "cb.pump.pulled" } },
  ],
});

describe("link reports as seen samples", () => {
  it("turns lamp states and levels into what the lamp shows, each value one shared frozen object", () => {
    const on = seenFromLink(def.elements, { element: 0, kind: "lamp_state", state: "on" }, 10);
    const again = seenFromLink(def.elements, { element: 0, kind: "lamp_level", level: 255 }, 20);
    const dim = seenFromLink(def.elements, { element: 0, kind: "lamp_level", level: 90 }, 30);
    const off = seenFromLink(def.elements, { element: 0, kind: "lamp_level", level: 0 }, 40);
    const flashing = seenFromLink(def.elements, { element: 0, kind: "lamp_state", state: "flashing" }, 50);
    if (!on.ok || !again.ok || !dim.ok || !off.ok || !flashing.ok) throw new Error("a lamp report was refused");
    expect(on.sample).toEqual({ t: 10, shows: { track: "lamp", lamp: { state: "on", level: 255 } } });
    expect(dim.sample.shows).toEqual({ track: "lamp", lamp: { state: "on", level: 90 } });
    expect(off.sample.shows).toEqual({ track: "lamp", lamp: { state: "off" } });
    expect(flashing.sample.shows).toEqual({ track: "lamp", lamp: { state: "flashing", periodMs: 0, level: 255 } });
    // Shared, so nobody may change one.
    expect(again.sample.shows).toBe(on.sample.shows);
    expect(Object.isFrozen(on.sample.shows)).toBe(true);
    expect(() => {
      (on.sample.shows as { track: string }).track = "text";
    }).toThrow(TypeError);
  });

  it("refuses an element the panel does not have, or a report its kind cannot make, with the reason", () => {
    expect(seenFromLink(def.elements, { element: 7, kind: "lamp_state", state: "on" }, 0)).toMatchObject({ ok: false, reason: "unknown_element" });
    expect(seenFromLink(def.elements, { element: 1, kind: "lamp_state", state: "on" }, 0)).toMatchObject({ ok: false, reason: "wrong_kind", detail: "element pump-cb is a breaker; it cannot report lamp_state" });
  });
});
