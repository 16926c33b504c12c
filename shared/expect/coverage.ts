import type { Element, PointerElement } from "../elements/kinds";
import type { Panel } from "../panel/schema";
import type { Change, ElementTimeline, ExpectedTimelines } from "./types";

/**
 * Coverage: which states and ranges of each element a recording exercised, and in words what it
 * never did, so a builder knows what a passing run did not test ("FIRE lamp never lit").
 */
export interface ElementCoverage {
  id: string;
  label: string;
  kind: Element["kind"];
  placeholder: boolean;
  /** Distinct values each discrete track took, in order of first appearance. */
  reached: Record<string, string[]>;
  /** Pointers: the lowest and highest place on the dial reached, as fractions of the scale (0 = first point). */
  scaleRange?: { lowest: number; highest: number };
  /** Pointers: the share of the scale swept (0..1); full-circle pointers: of the turn. */
  sweptShare?: number;
  messages: string[];
}

export interface PanelCoverage {
  panelId: string;
  elements: ElementCoverage[];
  messages: string[];
}

const KIND_WORD: Record<Element["kind"], string> = {
  lamp: "lamp",
  pointer: "pointer",
  readout: "readout",
  breaker: "breaker",
  switch: "switch",
  button: "button",
  encoder: "encoder",
  lever: "lever",
};

/** "FIRE lamp", but "airspeed pointer" stays as it is when the label already says the kind. */
export function elementName(el: Pick<Element, "label" | "kind">): string {
  const word = KIND_WORD[el.kind];
  return el.label.toLowerCase().includes(word) ? el.label : `${el.label} ${word}`;
}

function keysOf<V>(changes: readonly Change<V>[] | undefined, key: (v: V) => string): string[] {
  const out: string[] = [];
  for (const c of changes ?? []) {
    const k = key(c.shows);
    if (!out.includes(k)) out.push(k);
  }
  return out;
}

function percent(fraction: number): string {
  return `${Math.floor(fraction * 100 + 1e-9)}%`;
}

export function panelCoverage(p: Pick<Panel, "id" | "elements">, timelines: ExpectedTimelines): PanelCoverage {
  const byId = new Map(timelines.elements.map((t) => [t.id, t]));
  const elements = p.elements.map((el) => elementCoverage(el, byId.get(el.id)));
  return { panelId: p.id, elements, messages: elements.flatMap((e) => e.messages) };
}

export function elementCoverage(el: Element, timeline: ElementTimeline | undefined): ElementCoverage {
  const base: ElementCoverage = { id: el.id, label: el.label, kind: el.kind, placeholder: el.placeholder, reached: {}, messages: [] };
  if (el.placeholder || !timeline) {
    if (el.placeholder) base.messages = [];
    return base;
  }
  const name = elementName(el);
  const tracks = timeline.tracks;
  const reached = base.reached;
  const mode = keysOf(tracks.mode, (v) => v);
  if (tracks.mode) reached.mode = mode;
  const say = (text: string) => base.messages.push(`${name} ${text}`);

  if (tracks.lamp) {
    const lamp = keysOf(tracks.lamp, (v) => v.state);
    reached.lamp = lamp;
    const lamps = el.kind === "lamp" ? el : el.kind === "button" ? el.backlight : undefined;
    const subject = el.kind === "button" ? "backlight" : "";
    const prefix = subject ? `${subject} ` : "";
    if (!lamp.includes("on") && !lamp.includes("flashing")) say(`${prefix}never lit`);
    else if (lamps?.flash && !lamp.includes("flashing")) say(`${prefix}never flashed`);
    if (el.kind === "lamp") {
      if (el.test && !mode.some((m) => m === "testing" || m.includes("supply.testing"))) say("never seen in a lamp test");
      if (el.power && !mode.some((m) => m === "dark" || m.includes("supply.dark"))) say("never seen unpowered");
      if (el.drive.mode === "latch" && !mode.some((m) => m.includes("alert.alerting"))) say("never latched");
    }
  }
  if (tracks.text) {
    const texts = keysOf(tracks.text, (v) => v);
    reached.text = texts;
    if (texts.every((s) => s === "")) say("never showed a value");
    else if ((el.kind === "readout" && (el.power || el.blankWhen)) && !texts.includes("")) say("never blank");
  }
  if (tracks.breaker) {
    const positions = keysOf(tracks.breaker, (v) => v);
    reached.breaker = positions;
    if (!positions.includes("tripped")) say("never tripped");
    if (el.kind === "breaker" && el.pulled && !positions.includes("pulled")) say("never pulled");
  }
  if (tracks.position && (el.kind === "switch" || el.kind === "lever")) {
    const positions = keysOf(tracks.position, (v) => v);
    reached.position = positions;
    const missing = el.positions.filter((p) => !positions.includes(p));
    if (missing.length) say(`never in ${missing.map((p) => `"${p}"`).join(", ")}`);
    if (el.kind === "lever" && el.lock && !mode.includes("locked")) say("never locked");
    if (el.kind === "switch" && el.springReturn && !mode.includes("held")) say("never held in a spring-loaded position");
  }
  if (tracks.pressed) {
    const pressed = keysOf(tracks.pressed, (v) => (v ? "pressed" : "released"));
    reached.pressed = pressed;
    if (!pressed.includes("pressed")) say("never pressed");
  }
  if (tracks.detents) {
    const counts = tracks.detents.map((c) => c.shows);
    let clockwise = false;
    let anticlockwise = false;
    for (let i = 1; i < counts.length; i++) {
      if (counts[i] > counts[i - 1]) clockwise = true;
      if (counts[i] < counts[i - 1]) anticlockwise = true;
    }
    reached.detents = [...(clockwise ? ["clockwise"] : []), ...(anticlockwise ? ["anticlockwise"] : [])];
    if (!clockwise) say("never turned clockwise");
    if (!anticlockwise) say("never turned anticlockwise");
  }
  if (tracks.flag && el.kind === "pointer") {
    reached.flag = keysOf(tracks.flag, (v) => (v ? "off-flag" : "no-flag"));
    if (el.power && !mode.includes("parked")) say("never parked unpowered");
    pointerSweep(el, timeline, base, say);
  }
  return base;
}

function pointerSweep(el: PointerElement, timeline: ElementTimeline, out: ElementCoverage, say: (text: string) => void) {
  const track = timeline.angle;
  if (!track || track.t.length === 0) return;
  const flags = timeline.tracks.flag ?? [];
  // Only the stretches where the pointer follows its value count: parking is not coverage.
  const following = (i: number) => {
    let shown = false;
    for (const f of flags) {
      if (f.t <= track.t[i]) shown = f.shows;
      else break;
    }
    return !shown;
  };
  if (el.scale.kind === "full-circle") {
    const bins = new Uint8Array(72); // five-degree arcs
    for (let i = 1; i < track.t.length; i++) {
      if (!following(i - 1)) continue;
      const from = track.angle[i - 1];
      const to = track.angle[i];
      const lo = Math.min(from, to);
      const hi = Math.max(from, to);
      if (hi - lo >= 360) bins.fill(1);
      else for (let a = lo; a <= hi; a += 5) bins[Math.floor((((a % 360) + 360) % 360) / 5)] = 1;
      bins[Math.floor((((hi % 360) + 360) % 360) / 5)] = 1;
    }
    const share = bins.reduce((s, b) => s + b, 0) / bins.length;
    out.sweptShare = share;
    if (share < 1) say(`swept only ${percent(share)} of its turn`);
    return;
  }
  const first = el.scale.points[0].angle;
  const last = el.scale.points[el.scale.points.length - 1].angle;
  const span = last - first;
  if (span === 0) return;
  let lowest = Infinity;
  let highest = -Infinity;
  for (let i = 0; i < track.t.length; i++) {
    // A point followed by a jump at the same instant is never shown for any time.
    if (!following(i) || (i + 1 < track.t.length && track.t[i + 1] === track.t[i])) continue;
    const f = (track.angle[i] - first) / span;
    if (f < lowest) lowest = f;
    if (f > highest) highest = f;
  }
  if (lowest === Infinity) {
    say("never followed its value");
    return;
  }
  lowest = Math.max(0, lowest);
  highest = Math.min(1, highest);
  out.scaleRange = { lowest, highest };
  out.sweptShare = highest - lowest;
  // Near the stops a few percent is reading noise, not a gap a scenario should fill.
  if (highest < 0.95) say(`never above ${percent(highest)} of its scale`);
  if (lowest > 0.05) say(`never below ${percent(lowest)} of its scale`);
}
