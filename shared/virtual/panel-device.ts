import type { Element } from "../elements/kinds";
import { expectTimelines, expectedAt, type ExpectedState, type ExpectFrame, type LampShows } from "../expect";
import { encodeLinkFrame } from "../link/codec";
import { EmulatedDeviceCore } from "../link/device-core";
import type { InputEntry, ChannelValue as LinkValue, LinkFrame, SeenEntry } from "../link/messages";
import { PanelValueMap } from "../link/panel-values";
import { BREAKER_POSITIONS, LINK_MAX_TEXT_BYTES } from "../link/protocol";
import { LinkStreamDecoder } from "../link/stream";
import { utf8Length } from "../link/text";
import { panelChannels, type Panel } from "../panel/schema";
import type { ChannelDefinition, ChannelValue } from "../recording/channels";
import { lampAfterFaults, textAfterFaults, type Fault } from "./faults";

/**
 * A panel with no hardware behind the real link protocol: the browser's virtual panel, the
 * device emulator (`panelproof device`), the headless run and the tests all put this on a
 * WebSocket or a serial port. Only the host differs (a browser socket, a Node socket, a port).
 *
 * What it shows is what the panel's own behaviours say for the values it received: it keeps
 * the frames it got with their arrival times on its own device clock and reports `expectedAt`
 * of `expectTimelines` over them, so a healthy virtual panel passes, and the faults of
 * ./faults.ts make it misbehave on exactly the elements they name.
 *
 * Device time is the injected clock's elapsed time times `speed` (the replay speed), summed
 * piece by piece so that changing speed never makes it jump: at the run's speed it follows
 * recording time. Fault windows (disconnect) count from the first update.
 *
 * Inputs (switches, levers, breakers) follow the recording, as if a builder moved them on cue,
 * until someone moves one by hand (`moveInput`): from then on it rests where it was put and the
 * panel sends an input event, as a real board does.
 */
export interface VirtualPanelOptions {
  panel: Panel;
  /** The recording's channels, to turn enum indices back into names. */
  channels?: readonly ChannelDefinition[];
  faults?: readonly Fault[];
  /** 0 on a direct link; 1..247 on an RS-485 bus (then it speaks only when polled). */
  address?: number;
  deviceId?: string;
  /** Device time runs this many times faster than the clock (the replay speed). */
  speed?: number;
  /** A monotonic clock in milliseconds; `performance.now` unless a test injects one. */
  clock?: () => number;
}

/** Frames kept for the behaviours; older ones are folded into a starting state. */
const KEEP_FRAMES = 600;
/** How often what changes with time (a needle still slewing) is reported without faults: a board's usual pace. */
const MOVING_REPORT_MS = 50;
/** Seen reports carry at most this many entries (a frame's payload limit with room to spare). */
const MAX_ENTRIES_PER_REPORT = 30;

/** Where a hand-moved input rests: a position name (switch, lever) or a breaker position. */
export type HeldInput = { kind: "position"; position: string } | { kind: "breaker"; position: "in" | "pulled" };

export class VirtualPanelDevice {
  readonly core: EmulatedDeviceCore;
  readonly decoder = new LinkStreamDecoder({ acceptFrom: "bench" });
  readonly panel: Panel;
  private readonly map: PanelValueMap;
  private readonly clock: () => number;
  private readonly address: number;
  private currentFaults: readonly Fault[];
  private currentSpeed: number;
  private started: number | null = null;
  private elapsed = 0;
  private lastClock = 0;
  private base: Record<string, ChannelValue> = {};
  private baseT = 0;
  private frames: ExpectFrame[] = [];
  private last: Record<string, ChannelValue> = {};
  private readonly firstAngle = new Map<string, number>();
  private readonly slowShown = new Map<string, { t: number; angle: number }>();
  private readonly periodicReported = new Map<number, string>();
  private readonly held = new Map<string, HeldInput>();
  private readonly outgoing: Uint8Array[] = [];
  private sequence = 0x80;
  private lastPeriodic = -Infinity;
  /** Needles (slewing, parking) and spring-loaded switches change between updates; nothing else does. */
  private readonly changesWithTime: boolean;

  constructor(options: VirtualPanelOptions) {
    this.panel = options.panel;
    const channels = panelChannels(options.panel);
    this.map = new PanelValueMap(channels, options.channels ?? []);
    this.currentFaults = options.faults ?? [];
    this.currentSpeed = options.speed ?? 1;
    this.clock = options.clock ?? (() => performance.now());
    this.address = options.address ?? 0;
    this.changesWithTime = options.panel.elements.some((e) => !e.placeholder && (e.kind === "pointer" || (e.kind === "switch" && e.springReturn !== undefined)));
    this.core = new EmulatedDeviceCore({
      address: this.address,
      deviceId: options.deviceId ?? "0000000000e0e0e0",
      panel: options.panel.id,
      elementCount: options.panel.elements.length,
      channelCount: channels.length,
      waitsForPoll: this.address !== 0,
      show: (values) => this.show(values),
      uptimeMs: () => this.clock(),
    });
  }

  get faults(): readonly Fault[] {
    return this.currentFaults;
  }

  /** Faults can change while the run plays (a demo, or testing the tester live). */
  setFaults(faults: readonly Fault[]) {
    this.currentFaults = faults;
    this.periodicReported.clear();
  }

  get speed(): number {
    return this.currentSpeed;
  }

  set speed(value: number) {
    this.deviceTime(); // bank the time run so far at the old speed
    this.currentSpeed = value;
  }

  /** When the first update arrived, on the clock; null before. */
  get startedAt(): number | null {
    return this.started;
  }

  /** Device time: ms since the first update, scaled by the speed as it changed. */
  deviceTime(): number {
    if (this.started === null) return 0;
    const now = this.clock();
    this.elapsed += (now - this.lastClock) * this.currentSpeed;
    this.lastClock = now;
    return this.elapsed;
  }

  /** True while a `disconnect` fault says the link is down. */
  disconnectedNow(): boolean {
    if (this.started === null) return false;
    const t = this.deviceTime();
    return this.currentFaults.some((f) => f.kind === "disconnect" && t >= f.fromMs && t < f.toMs);
  }

  /** Bytes from the bench in, encoded frames to send back out. */
  receiveBytes(chunk: Uint8Array): Uint8Array[] {
    const out: Uint8Array[] = [];
    for (const event of this.decoder.push(chunk)) {
      const answers = event.ok ? this.core.receive(event.frame) : this.core.refuse(event.fault, event.detail);
      for (const f of answers) out.push(encodeLinkFrame(f));
    }
    return out;
  }

  powerUp(): Uint8Array[] {
    return this.core.powerUp().map((f) => encodeLinkFrame(f));
  }

  /**
   * Moves an input by hand: it rests there from now on and the panel says so with an input
   * event, which the host sends on its next tick (`takeOutgoing`; on a bus, when polled).
   * Throws on an element that is not an input or a position it does not have: callers offer
   * only what the definition lists.
   */
  moveInput(elementId: string, to: HeldInput) {
    const index = this.panel.elements.findIndex((e) => e.id === elementId);
    const el = this.panel.elements[index];
    if (!el) throw new Error(`no element ${elementId} on panel ${this.panel.id}`);
    let entry: InputEntry;
    if (to.kind === "position" && (el.kind === "switch" || el.kind === "lever")) {
      const position = el.positions.indexOf(to.position);
      if (position < 0) throw new Error(`${elementId} has no position ${to.position} (it has ${el.positions.join(", ")})`);
      entry = { element: index, kind: "position", position };
    } else if (to.kind === "breaker" && el.kind === "breaker") {
      entry = { element: index, kind: "position", position: BREAKER_POSITIONS.indexOf(to.position) };
    } else {
      throw new Error(`${elementId} is a ${el.kind}; it cannot be moved to a ${to.kind}`);
    }
    this.held.set(elementId, to);
    this.periodicReported.delete(index);
    for (const f of this.core.input({ type: "input_event", inputs: [entry] })) this.outgoing.push(encodeLinkFrame(f));
  }

  /**
   * A push button pressed or let go by hand: the link says so at once (an input event), as a board
   * does on a key's edge. Buttons do not rest anywhere, so nothing is held.
   */
  pressButton(elementId: string, pressed: boolean) {
    const index = this.panel.elements.findIndex((e) => e.id === elementId);
    const el = this.panel.elements[index];
    if (!el) throw new Error(`no element ${elementId} on panel ${this.panel.id}`);
    if (el.kind !== "button") throw new Error(`${elementId} is a ${el.kind}; only a push button is pressed`);
    for (const f of this.core.input({ type: "input_event", inputs: [{ element: index, kind: "button", pressed }] })) this.outgoing.push(encodeLinkFrame(f));
  }

  /** Frames the panel has to say on its own (inputs moved by hand), oldest first; empties the list. */
  takeOutgoing(): Uint8Array[] {
    return this.outgoing.splice(0);
  }

  /** Lets a hand-moved input follow the recording again. */
  releaseInput(elementId: string) {
    this.held.delete(elementId);
  }

  heldInputs(): ReadonlyMap<string, HeldInput> {
    return this.held;
  }

  /** Values the core applied: note what changed as a frame at the device's time. */
  private noteValues(values: ReadonlyMap<number, LinkValue>) {
    if (this.started === null) {
      this.started = this.clock();
      this.lastClock = this.started;
    }
    const t = this.deviceTime();
    const current: Record<string, ChannelValue> = {};
    for (const v of values.values()) {
      const back = this.map.fromLink(v);
      if (back) current[back.name] = back.value;
    }
    const changed: Record<string, ChannelValue> = {};
    let any = false;
    for (const k in current) {
      if (this.last[k] !== current[k]) {
        changed[k] = current[k];
        any = true;
      }
    }
    if (Object.keys(this.last).some((k) => !(k in current))) {
      // A keyframe forgot values: start afresh from the current state.
      this.base = { ...current };
      this.baseT = t;
      this.frames = [];
    } else if (any) {
      this.frames.push({ t, v: changed });
      if (this.frames.length > KEEP_FRAMES) {
        const drop = this.frames.splice(0, this.frames.length - KEEP_FRAMES / 2);
        for (const f of drop) Object.assign(this.base, f.v);
        this.baseT = drop[drop.length - 1].t;
      }
    }
    this.last = current;
  }

  private show(values: ReadonlyMap<number, LinkValue>): SeenEntry[] {
    this.noteValues(values);
    return this.entriesAt(this.deviceTime());
  }

  /** What every judged element shows at device time `now`: expected state through the faults and the hand. */
  private statesAt(now: number): Map<number, { el: Element; state: ExpectedState }> {
    const frames: ExpectFrame[] = [{ t: this.baseT, v: this.base }, ...this.frames];
    const timelines = expectTimelines(this.panel, frames, { endMs: Math.max(now, this.frames.at(-1)?.t ?? this.baseT) });
    const out = new Map<number, { el: Element; state: ExpectedState }>();
    this.panel.elements.forEach((el, index) => {
      if (el.placeholder) return;
      const lag = this.currentFaults.reduce((s, f) => s + (f.kind === "added_lag" && f.element === el.id ? f.ms : 0), 0);
      const expected = expectedAt(timelines.elements[index], Math.max(this.baseT, now - lag));
      out.set(index, { el, state: this.byHand(el, this.applyFaults(el, expected, now)) });
    });
    return out;
  }

  private byHand(el: Element, s: ExpectedState): ExpectedState {
    const held = this.held.get(el.id);
    if (!held) return s;
    if (held.kind === "position" && s.position !== undefined) return { ...s, position: held.position };
    if (held.kind === "breaker" && s.breaker !== undefined) return { ...s, breaker: held.position };
    return s;
  }

  private applyFaults(el: Element, s: ExpectedState, now: number): ExpectedState {
    const mine = this.currentFaults.filter((f) => f.kind !== "disconnect" && f.element === el.id);
    if (mine.length === 0) return s;
    const out: ExpectedState = { ...s };
    if (s.lamp) out.lamp = lampAfterFaults(s.lamp, mine);
    if (el.kind === "pointer" && s.angle !== undefined) {
      let angle = s.angle;
      if (!this.firstAngle.has(el.id)) this.firstAngle.set(el.id, angle);
      const first = this.firstAngle.get(el.id)!;
      for (const f of mine) {
        if (f.kind === "pointer_scale") angle = first + (angle - first) * f.factor;
        if (f.kind === "pointer_offset") angle += f.degrees;
        if (f.kind === "missed_steps") angle += Math.floor(now / f.everyMs) * f.degrees;
      }
      const slow = mine.find((f) => f.kind === "pointer_slow");
      if (slow && slow.kind === "pointer_slow") {
        const prev = this.slowShown.get(el.id);
        if (prev) {
          const max = (slow.degPerSec * Math.max(0, now - prev.t)) / 1000;
          angle = prev.angle + Math.max(-max, Math.min(max, angle - prev.angle));
        }
        this.slowShown.set(el.id, { t: now, angle });
      }
      out.angle = el.scale.kind === "full-circle" ? ((angle % 360) + 360) % 360 : angle;
    }
    if (s.text !== undefined) out.text = textAfterFaults(s.text, mine);
    const stuck = mine.find((f) => f.kind === "breaker_stuck");
    if (s.breaker && stuck && stuck.kind === "breaker_stuck") out.breaker = stuck.position;
    return out;
  }

  private entriesAt(now: number): SeenEntry[] {
    const out: SeenEntry[] = [];
    for (const [index, { el, state }] of this.statesAt(now)) {
      const entry = seenEntryOf(el, index, state);
      if (entry) out.push(entry);
    }
    return out;
  }

  /** For drawing: what each element shows now, by element id (empty before the first update). */
  shown(): Record<string, ExpectedState> {
    if (this.started === null) return {};
    const out: Record<string, ExpectedState> = {};
    for (const { el, state } of this.statesAt(this.deviceTime()).values()) out[el.id] = state;
    return out;
  }

  /**
   * For what changes with time rather than with updates (a needle still slewing to its value,
   * a spring-loaded switch returning; added lag, a slow or slipping needle) and for inputs moved
   * by hand: a seen report of what changed since the last one, or null. Hosts call it every few
   * tens of milliseconds; without time-based faults it looks at most every 50 ms.
   */
  periodic(): Uint8Array | null {
    if (this.started === null) return null;
    const timeBased = this.currentFaults.some((f) => f.kind === "added_lag" || f.kind === "pointer_slow" || f.kind === "missed_steps");
    // Needles keep moving between updates (slew limits, parking): a board reports them as they go.
    const now = this.clock();
    if (!timeBased && this.held.size === 0 && (!this.changesWithTime || now - this.lastPeriodic < MOVING_REPORT_MS)) return null;
    this.lastPeriodic = now;
    const changed = this.entriesAt(this.deviceTime()).filter((e) => {
      const key = JSON.stringify(e);
      if (this.periodicReported.get(e.element) === key) return false;
      this.periodicReported.set(e.element, key);
      return true;
    });
    if (changed.length === 0) return null;
    const frame: LinkFrame = { address: this.address, sequence: this.sequence, message: { type: "seen_report", appliedSequence: null, seen: changed.slice(0, MAX_ENTRIES_PER_REPORT) } };
    this.sequence = (this.sequence + 1) & 0xff;
    return encodeLinkFrame(frame);
  }
}

/** One element's state as the link protocol reports it (null: nothing this kind reports). */
export function seenEntryOf(el: Element, index: number, s: ExpectedState): SeenEntry | null {
  if ((el.kind === "lamp" || el.kind === "button") && s.lamp) return lampEntry(index, s.lamp);
  if (el.kind === "pointer" && s.angle !== undefined) return { element: index, kind: "pointer_angle", centidegrees: Math.round(s.angle * 100) };
  if (el.kind === "readout" && s.text !== undefined) {
    let text = s.text;
    while (utf8Length(text) > LINK_MAX_TEXT_BYTES) text = text.slice(0, -1);
    return { element: index, kind: "readout", text };
  }
  if (el.kind === "breaker" && s.breaker) return { element: index, kind: "breaker", position: s.breaker };
  if ((el.kind === "switch" || el.kind === "lever") && s.position !== undefined) {
    const i = el.positions.indexOf(s.position);
    return i < 0 ? null : { element: index, kind: "switch", position: i };
  }
  return null;
}

function lampEntry(index: number, lamp: LampShows): SeenEntry {
  if (lamp.state === "off") return { element: index, kind: "lamp_state", state: "off" };
  if (lamp.state === "flashing") return { element: index, kind: "lamp_state", state: "flashing" };
  return lamp.level >= 255 ? { element: index, kind: "lamp_state", state: "on" } : { element: index, kind: "lamp_level", level: Math.max(1, Math.round(lamp.level)) };
}
