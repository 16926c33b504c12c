import { elementName, type PanelCoverage } from "../expect/coverage";
import type { BoundValue, Condition, NumericSource, PositionSource } from "../elements/bindings";
import type { Element, LampOutput, PointerElement } from "../elements/kinds";
import type { ChannelDefinition } from "../recording/channels";

/**
 * Coverage gaps with a suggestion of what a scenario should add (issue 6, report page):
 * "FIRE lamp never lit" becomes "add a step that sets eng1.fire_warning to true". The gaps are
 * shared/expect/coverage.ts's messages; this file reads each back (the two are tested together)
 * and turns the element's own bindings into a step: the value that makes a condition hold or
 * fail, the channel value at the end of a pointer's scale, the value that selects a position.
 * Channels, when given, choose between true/1 and a position's name or index.
 */

export interface CoverageGap {
  panelId: string;
  elementId: string;
  label: string;
  /** What the recording never did, as coverage says it ("FIRE lamp never lit"). */
  gap: string;
  /** What a scenario should add, or null when no single step would do. */
  suggestion: string | null;
}

type Channels = ReadonlyMap<string, ChannelDefinition>;

/** Every coverage message of a panel, each with its suggestion. Placeholders have none. */
export function coverageGaps(elements: readonly Element[], coverage: PanelCoverage, channels: readonly ChannelDefinition[] = []): CoverageGap[] {
  const byName: Channels = new Map(channels.map((c) => [c.name, c]));
  const byId = new Map(elements.map((e) => [e.id, e]));
  const out: CoverageGap[] = [];
  for (const c of coverage.elements) {
    const el = byId.get(c.id);
    if (!el) continue;
    for (const message of c.messages) {
      out.push({ panelId: coverage.panelId, elementId: el.id, label: el.label, gap: message, suggestion: suggestionFor(el, message, byName) });
    }
  }
  return out;
}

/** The suggestion for one coverage message of one element. */
export function suggestionFor(el: Element, message: string, channels: Channels = new Map()): string | null {
  const name = elementName(el);
  const what = message.startsWith(name) ? message.slice(name.length).trim() : message;
  const holds = (c: Condition | undefined) => (c ? setStep(c.channel, valueMaking(c, true, channels.get(c.channel))) : null);
  const fails = (c: Condition | undefined) => (c ? setStep(c.channel, valueMaking(c, false, channels.get(c.channel))) : null);
  const lamp: LampOutput | undefined = el.kind === "lamp" ? el : el.kind === "button" ? el.backlight : undefined;
  const lightIt = (l: LampOutput) => (l.drive.mode === "condition" ? holds(l.drive.on) : holds(l.drive.cautions[0]));

  switch (what) {
    case "never lit":
    case "backlight never lit":
      return lamp ? lightIt(lamp) : null;
    case "never flashed":
    case "backlight never flashed":
      if (!lamp) return null;
      return lamp.flash?.when ? both(holds(lamp.flash.when), lightIt(lamp)) : lightIt(lamp);
    case "never seen in a lamp test":
      return lamp ? holds(lamp.test) : null;
    case "never seen unpowered":
      return "power" in el ? fails(el.power) : null;
    case "never latched":
      return lamp && lamp.drive.mode === "latch" ? holds(lamp.drive.cautions[0]) : null;
    case "never showed a value":
      return el.kind === "readout" ? setStep(el.value.channel, "a value") : null;
    case "never blank":
      return el.kind === "readout" ? (el.blankWhen ? holds(el.blankWhen) : fails(el.power)) : null;
    case "never tripped":
      return el.kind === "breaker" ? holds(el.trip) : null;
    case "never pulled":
      return el.kind === "breaker" ? holds(el.pulled) : null;
    case "never locked":
      return el.kind === "lever" ? holds(el.lock) : null;
    case "never held in a spring-loaded position":
      return el.kind === "switch" && el.springReturn ? setStep(el.position.channel, positionValue(el.position, el.positions, el.springReturn.from[0], channels)) : null;
    case "never pressed":
      return el.kind === "button" ? holds(el.pressed) : null;
    case "never turned clockwise":
    case "never turned anticlockwise":
      if (el.kind !== "encoder") return null;
      return `add a ramp of ${el.value.channel} ${what.endsWith("anticlockwise") ? "down" : "up"} by ${number(el.valuePerDetent * 5)} (five detents)`;
    case "never parked unpowered":
      return el.kind === "pointer" ? fails(el.power) : null;
    case "never followed its value":
      return el.kind === "pointer" ? (el.power ? holds(el.power) : rampStep(el.value, "across its scale")) : null;
  }
  const positions = /^never in (.+)$/.exec(what);
  if (positions && (el.kind === "switch" || el.kind === "lever")) {
    const names = [...positions[1].matchAll(/"([^"]*)"/g)].map((m) => m[1]);
    const values = names.map((p) => positionValue(el.position, el.positions, p, channels));
    return `add ${values.length === 1 ? "a step" : "steps"} that ${values.length === 1 ? "sets" : "set"} ${el.position.channel} to ${values.join(", then ")}`;
  }
  if (el.kind === "pointer") return pointerSuggestion(el, what);
  return null;
}

function pointerSuggestion(el: PointerElement, what: string): string | null {
  const scale = el.scale;
  if (scale.kind === "full-circle") {
    if (!what.startsWith("swept only")) return null;
    const turn = channelValueOf(el.value, scale.period) - channelValueOf(el.value, 0);
    return `add a ramp of ${el.value.channel} through at least ${number(Math.abs(turn))} (one whole turn of the dial)`;
  }
  const first = scale.points[0];
  const last = scale.points[scale.points.length - 1];
  // The top of the dial is the point with the largest fraction: the last point (angles may run either way).
  if (what.startsWith("never above")) return `add a ramp of ${el.value.channel} to ${number(channelValueOf(el.value, last.value))}`;
  if (what.startsWith("never below")) return `add a ramp of ${el.value.channel} down to ${number(channelValueOf(el.value, first.value))}`;
  return null;
}

/** The channel value that shows `gaugeValue` on the dial: the element's transform undone (a clamp cannot be undone). */
function channelValueOf(source: NumericSource, gaugeValue: number): number {
  const t = source.transform;
  if (!t || t.scale === 0) return gaugeValue;
  return (gaugeValue - t.offset) / t.scale;
}

function rampStep(source: NumericSource, how: string): string {
  return `add a ramp of ${source.channel} ${how}`;
}

function both(a: string | null, b: string | null): string | null {
  if (!a || !b) return a ?? b;
  return `${a}, while ${b.replace(/^add a step that /, "a step ")}`;
}

function number(n: number): string {
  return String(Math.round(n * 1000) / 1000);
}

function show(v: BoundValue): string {
  return typeof v === "string" ? JSON.stringify(v) : String(v);
}

/** `add a step that sets x to 3` (the value already in words: quoted text, numbers, "a value"). */
function setStep(channel: string, value: string): string {
  return `add a step that sets ${channel} to ${value}`;
}

/**
 * A value for the condition's channel that makes it hold (`wanted` true) or fail, in words. With
 * the channel known, booleans stay booleans and enums pick one of their own values.
 */
export function valueMaking(c: Condition, wanted: boolean, channel?: ChannelDefinition): string {
  const numeric = channel?.kind === "number";
  const enumValues = channel?.kind === "enum" ? channel.values : undefined;
  const truthy = numeric ? "1" : "true";
  const falsy = numeric ? "0" : "false";
  const other = (v: BoundValue | undefined): string => {
    if (typeof v === "boolean") return String(!v);
    if (typeof v === "number") return String(v + 1);
    const pick = enumValues?.find((x) => x !== v);
    return pick !== undefined ? show(pick) : `a value other than ${show(v ?? "")}`;
  };
  const k = typeof c.value === "number" ? c.value : 0;
  switch (c.op) {
    case "true":
      return wanted ? truthy : falsy;
    case "false":
      return wanted ? falsy : truthy;
    case "eq":
      return wanted ? show(c.value!) : other(c.value);
    case "ne":
      return wanted ? other(c.value) : show(c.value!);
    case "gt":
      return number(wanted ? k + 1 : k);
    case "ge":
      return number(wanted ? k : k - 1);
    case "lt":
      return number(wanted ? k - 1 : k);
    case "le":
      return number(wanted ? k : k + 1);
    case "in": {
      const values = c.values ?? [];
      if (wanted) return show(values[0]);
      const outside = enumValues?.find((x) => !values.includes(x));
      return outside !== undefined ? show(outside) : `a value not in ${values.map(show).join(", ")}`;
    }
  }
}

/** The channel value that puts a switch or lever in `position`: the map's own key, else by the channel's kind. */
function positionValue(source: PositionSource, positions: readonly string[], position: string, channels: Channels): string {
  const mapped = Object.entries(source.map ?? {}).find(([, to]) => to === position);
  if (mapped) {
    const kind = channels.get(source.channel)?.kind;
    return kind === "number" && Number.isFinite(Number(mapped[0])) ? mapped[0] : show(mapped[0]);
  }
  const index = positions.indexOf(position);
  const kind = channels.get(source.channel)?.kind;
  if (kind === "boolean" && index <= 1) return String(index === 1);
  if (kind === "number") return String(index);
  return show(position);
}
