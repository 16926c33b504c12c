import type { Element } from "../elements/kinds";
import { stepsToAngle } from "../elements/scale/motor";
import type { InputEntry, SeenEntry } from "../link/messages";
import type { SeenSample, SeenShows } from "./types";

export type LinkReading =
  | { ok: true; elementId: string; sample: SeenSample }
  | { ok: false; reason: "unknown_element" | "wrong_kind" | "unknown_position" | "cannot_tell"; detail: string };

/**
 * Turns a link report into a seen sample for the judge. Element indices are positions in the
 * panel definition's element list (docs/link-protocol.md); a report about an index the panel
 * does not have, or of a kind that element cannot show, is refused with a reason (the bench
 * counts these per link), never thrown.
 */
export function seenFromLink(elements: readonly Element[], entry: SeenEntry, t: number): LinkReading {
  const el = elements[entry.element];
  if (!el) return { ok: false, reason: "unknown_element", detail: `element index ${entry.element}: the panel has ${elements.length} elements` };
  switch (entry.kind) {
    case "unknown":
      return { ok: false, reason: "cannot_tell", detail: `element ${el.id} cannot tell what it shows` };
    case "lamp_state":
      if (el.kind !== "lamp" && el.kind !== "button") return wrongKind(el, entry);
      // A state report carries no period (0: "any"), and a lit lamp counts as full brightness.
      return { ok: true, elementId: el.id, sample: { t, shows: entry.state === "off" ? LAMP_OFF : entry.state === "on" ? lampAt(255) : LAMP_FLASHING } };
    case "lamp_level":
      if (el.kind !== "lamp" && el.kind !== "button") return wrongKind(el, entry);
      return { ok: true, elementId: el.id, sample: { t, shows: entry.level === 0 ? LAMP_OFF : lampAt(entry.level) } };
    case "pointer_angle":
      if (el.kind !== "pointer") return wrongKind(el, entry);
      return { ok: true, elementId: el.id, sample: { t, shows: { track: "angle", angle: entry.centidegrees / 100 } } };
    case "pointer_steps":
      if (el.kind !== "pointer") return wrongKind(el, entry);
      if (!el.motor) return { ok: false, reason: "wrong_kind", detail: `pointer ${el.id} reports steps but has no motor profile to turn them into degrees` };
      return { ok: true, elementId: el.id, sample: { t, shows: { track: "angle", angle: stepsToAngle(el.motor, entry.steps) } } };
    case "readout":
      if (el.kind !== "readout") return wrongKind(el, entry);
      return { ok: true, elementId: el.id, sample: { t, shows: { track: "text", text: entry.text } } };
    case "breaker":
      if (el.kind !== "breaker") return wrongKind(el, entry);
      return { ok: true, elementId: el.id, sample: { t, shows: { track: "breaker", breaker: entry.position } } };
    case "switch": {
      if (el.kind !== "switch" && el.kind !== "lever") return wrongKind(el, entry);
      const name = el.positions[entry.position];
      if (name === undefined) return { ok: false, reason: "unknown_position", detail: `element ${el.id} has ${el.positions.length} positions; index ${entry.position} is none of them` };
      return { ok: true, elementId: el.id, sample: { t, shows: { track: "position", position: name } } };
    }
  }
}

// What a lamp shows is one of a few hundred values: one frozen object each, shared by every
// report that says it (lamps report all the time; an object per report kept the collector busy).
const LAMP_OFF: SeenShows = Object.freeze({ track: "lamp", lamp: Object.freeze({ state: "off" }) });
const LAMP_FLASHING: SeenShows = Object.freeze({ track: "lamp", lamp: Object.freeze({ state: "flashing", periodMs: 0, level: 255 }) });
const LAMP_LEVELS: SeenShows[] = [];

function lampAt(level: number): SeenShows {
  return (LAMP_LEVELS[level] ??= Object.freeze({ track: "lamp", lamp: Object.freeze({ state: "on", level }) }));
}

// Not a closure inside seenFromLink: that ran for every report of every panel, and made (and,
// under tsx, named) a function each time.
function wrongKind(el: Element, entry: SeenEntry): LinkReading {
  return { ok: false, reason: "wrong_kind", detail: `element ${el.id} is a ${el.kind}; it cannot report ${entry.kind}` };
}

/** An input event (a switch or lever moved by hand) as a seen position. */
export function inputFromLink(elements: readonly Element[], entry: InputEntry, t: number): LinkReading {
  const el = elements[entry.element];
  if (!el) return { ok: false, reason: "unknown_element", detail: `element index ${entry.element}: the panel has ${elements.length} elements` };
  if (entry.kind !== "position") return { ok: false, reason: "wrong_kind", detail: `${entry.kind} inputs are not judged as positions` };
  if (el.kind !== "switch" && el.kind !== "lever") return { ok: false, reason: "wrong_kind", detail: `element ${el.id} is a ${el.kind}; it has no positions` };
  const name = el.positions[entry.position];
  if (name === undefined) return { ok: false, reason: "unknown_position", detail: `element ${el.id} has ${el.positions.length} positions; index ${entry.position} is none of them` };
  return { ok: true, elementId: el.id, sample: { t, shows: { track: "position", position: name } } };
}
