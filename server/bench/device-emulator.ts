import type { Element } from "../../shared/elements/kinds";
import { expectTimelines, expectedAt, type ExpectedState, type ExpectFrame, type LampShows } from "../../shared/expect";
import { encodeLinkFrame } from "../../shared/link/codec";
import { EmulatedDeviceCore } from "../../shared/link/device-core";
import type { ChannelValue as LinkValue, LinkFrame, SeenEntry } from "../../shared/link/messages";
import { LINK_MAX_TEXT_BYTES } from "../../shared/link/protocol";
import { LinkStreamDecoder } from "../../shared/link/stream";
import { utf8Length } from "../../shared/link/text";
import { panelChannels, type Panel } from "../../shared/panel/schema";
import type { ChannelDefinition, ChannelValue } from "../../shared/recording/channels";
import type { Fault } from "../../shared/virtual/faults";
import { PanelValueMap } from "../../shared/link/panel-values";

/**
 * A panel with no hardware, behind the real link protocol: what the device emulator CLI
 * (`panelproof device`), the headless run and the tests put on a WebSocket or serial port.
 *
 * What it shows is what the panel's own behaviours say for the values it received: it keeps the
 * frames it got with their arrival times (its own clock) and reports `expectedAt` of
 * `expectTimelines` over them, so a healthy emulator passes and the faults of
 * shared/virtual/faults.ts make it misbehave on exactly the elements they name. Its clock is
 * the arrival time of what it receives, times `timeScale` (the replay speed, when known), so at
 * speed 1 it follows recording time; fault times (disconnect) count from the first update.
 */
export interface PanelEmulatorOptions {
  panel: Panel;
  /** The recording's channels, to turn enum indices back into names. */
  channels?: readonly ChannelDefinition[];
  faults?: readonly Fault[];
  /** 0 on a direct link; 1..247 on an RS-485 bus (then it speaks only when polled). */
  address?: number;
  deviceId?: string;
  timeScale?: number;
  now?: () => number;
}

/** Frames kept for the behaviours; older ones are folded into a starting state. */
const KEEP_FRAMES = 600;

export class PanelEmulator {
  readonly core: EmulatedDeviceCore;
  readonly decoder = new LinkStreamDecoder({ acceptFrom: "bench" });
  private readonly map: PanelValueMap;
  private readonly faults: readonly Fault[];
  private readonly now: () => number;
  private readonly scale: number;
  private started: number | null = null;
  private base: Record<string, ChannelValue> = {};
  private baseT = 0;
  private frames: ExpectFrame[] = [];
  private last: Record<string, ChannelValue> = {};
  private readonly firstAngle = new Map<string, number>();
  private slowShown = new Map<string, { t: number; angle: number }>();
  private periodicReported = new Map<number, string>();
  private sequence = 0x80;

  constructor(private readonly options: PanelEmulatorOptions) {
    const channels = panelChannels(options.panel);
    this.map = new PanelValueMap(channels, options.channels ?? []);
    this.faults = options.faults ?? [];
    this.now = options.now ?? (() => performance.now());
    this.scale = options.timeScale ?? 1;
    const address = options.address ?? 0;
    this.core = new EmulatedDeviceCore({
      address,
      deviceId: options.deviceId ?? "0000000000e0e0e0",
      panel: options.panel.id,
      elementCount: options.panel.elements.length,
      channelCount: channels.length,
      waitsForPoll: address !== 0,
      show: (values) => this.show(values),
      uptimeMs: () => this.now(),
    });
  }

  /** Device time: ms since the first update, on the emulator's clock. */
  deviceTime(): number {
    if (this.started === null) return 0;
    return (this.now() - this.started) * this.scale;
  }

  /** True while a `disconnect` fault says the link is down. */
  disconnectedNow(): boolean {
    const t = this.deviceTime();
    return this.started !== null && this.faults.some((f) => f.kind === "disconnect" && t >= f.fromMs && t < f.toMs);
  }

  /** The next instant a disconnect fault begins or ends (device time), for the host's timers. */
  disconnectWindows() {
    return this.faults.flatMap((f) => (f.kind === "disconnect" ? [{ fromMs: f.fromMs, toMs: f.toMs }] : []));
  }

  get startedAt() {
    return this.started;
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

  /** Values the core applied: note what changed as a frame at the device's time. */
  private noteValues(values: ReadonlyMap<number, LinkValue>) {
    if (this.started === null) this.started = this.now();
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
    const lostKeys = Object.keys(this.last).some((k) => !(k in current));
    if (lostKeys) {
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

  /** What every element shows now: the behaviours' expected state, through the faults. */
  private show(values: ReadonlyMap<number, LinkValue>): SeenEntry[] {
    this.noteValues(values);
    return this.entriesAt(this.deviceTime());
  }

  private entriesAt(now: number): SeenEntry[] {
    const frames: ExpectFrame[] = [{ t: this.baseT, v: this.base }, ...this.frames];
    const timelines = expectTimelines(this.options.panel, frames, { endMs: Math.max(now, this.frames.at(-1)?.t ?? this.baseT) });
    const out: SeenEntry[] = [];
    this.options.panel.elements.forEach((el, index) => {
      if (el.placeholder) return;
      const tl = timelines.elements[index];
      const lag = this.faults.reduce((s, f) => s + (f.kind === "added_lag" && f.element === el.id ? f.ms : 0), 0);
      const state = expectedAt(tl, Math.max(this.baseT, now - lag));
      const entry = this.entryOf(el, index, state, now);
      if (entry) out.push(entry);
    });
    return out;
  }

  /**
   * For faults that act over time rather than on updates (added lag, a slow needle): a seen
   * report of what changed since the last one, or null. Hosts call it every few tens of ms.
   */
  periodic(): Uint8Array | null {
    if (this.started === null) return null;
    if (!this.faults.some((f) => f.kind === "added_lag" || f.kind === "pointer_slow" || f.kind === "missed_steps")) return null;
    const changed = this.entriesAt(this.deviceTime()).filter((e) => {
      const key = JSON.stringify(e);
      if (this.periodicReported.get(e.element) === key) return false;
      this.periodicReported.set(e.element, key);
      return true;
    });
    if (changed.length === 0) return null;
    const frame: LinkFrame = { address: this.options.address ?? 0, sequence: this.sequence, message: { type: "seen_report", appliedSequence: null, seen: changed.slice(0, 30) } };
    this.sequence = (this.sequence + 1) & 0xff;
    return encodeLinkFrame(frame);
  }

  private entryOf(el: Element, index: number, s: ExpectedState, now: number): SeenEntry | null {
    const mine = this.faults.filter((f) => f.kind !== "disconnect" && f.element === el.id);
    if ((el.kind === "lamp" || el.kind === "button") && s.lamp) {
      let lamp: LampShows = s.lamp;
      for (const f of mine) {
        if (f.kind === "lamp_stuck") lamp = f.lit ? { state: "on", level: 255 } : { state: "off" };
        if (f.kind === "lamp_inverted") lamp = lamp.state === "off" ? { state: "on", level: 255 } : { state: "off" };
      }
      if (lamp.state === "off") return { element: index, kind: "lamp_state", state: "off" };
      if (lamp.state === "flashing") return { element: index, kind: "lamp_state", state: "flashing" };
      return lamp.level >= 255 ? { element: index, kind: "lamp_state", state: "on" } : { element: index, kind: "lamp_level", level: Math.max(1, Math.round(lamp.level)) };
    }
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
      const wrapped = el.scale.kind === "full-circle" ? ((angle % 360) + 360) % 360 : angle;
      return { element: index, kind: "pointer_angle", centidegrees: Math.round(wrapped * 100) };
    }
    if (el.kind === "readout" && s.text !== undefined) {
      let text = s.text;
      for (const f of mine) if (f.kind === "digit_dropped" && f.position < text.length) text = `${text.slice(0, f.position)} ${text.slice(f.position + 1)}`;
      while (utf8Length(text) > LINK_MAX_TEXT_BYTES) text = text.slice(0, -1);
      return { element: index, kind: "readout", text };
    }
    if (el.kind === "breaker" && s.breaker) {
      const stuck = mine.find((f) => f.kind === "breaker_stuck");
      return { element: index, kind: "breaker", position: stuck && stuck.kind === "breaker_stuck" ? stuck.position : s.breaker };
    }
    if ((el.kind === "switch" || el.kind === "lever") && s.position !== undefined) {
      const i = el.positions.indexOf(s.position);
      return i < 0 ? null : { element: index, kind: "switch", position: i };
    }
    return null;
  }
}
