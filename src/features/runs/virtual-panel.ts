import { expectTimelines, expectedAt, type ExpectedState, type ExpectFrame, type LampShows } from "../../../shared/expect";
import type { Element } from "../../../shared/elements/kinds";
import { encodeLinkFrame } from "../../../shared/link/codec";
import { EmulatedDeviceCore } from "../../../shared/link/device-core";
import type { ChannelValue as LinkValue, LinkFrame, SeenEntry } from "../../../shared/link/messages";
import { LINK_MAX_TEXT_BYTES } from "../../../shared/link/protocol";
import { PanelValueMap } from "../../../shared/link/panel-values";
import { LinkStreamDecoder } from "../../../shared/link/stream";
import { utf8Length } from "../../../shared/link/text";
import { panelChannels, type Panel } from "../../../shared/panel/schema";
import type { ChannelDefinition, ChannelValue } from "../../../shared/recording/channels";
import type { Fault } from "../../../shared/virtual/faults";

/**
 * The browser as a panel with no hardware: the device side of the link protocol
 * (EmulatedDeviceCore behind LinkStreamDecoder and encodeLinkFrame) whose elements show the
 * panel's own behaviours for the values it received, through the link's injected faults.
 * Its clock is the arrival time of what it receives times the replay speed, so it follows
 * recording time; fault times (disconnect) count from the first update.
 */
const KEEP_FRAMES = 600;
const TICK_MS = 20;

export class BrowserPanel {
  readonly core: EmulatedDeviceCore;
  readonly decoder = new LinkStreamDecoder({ acceptFrom: "bench" });
  private readonly channels: string[];
  private readonly map: PanelValueMap;
  private started: number | null = null;
  private elapsed = 0;
  private lastNow = 0;
  private base: Record<string, ChannelValue> = {};
  private baseT = 0;
  private frames: ExpectFrame[] = [];
  private last: Record<string, ChannelValue> = {};
  private readonly firstAngle = new Map<string, number>();
  private readonly slowShown = new Map<string, { t: number; angle: number }>();
  private readonly periodicReported = new Map<number, string>();
  private sequence = 0x80;
  /** The replay speed; device time runs this many times faster than the wall clock. */
  speed = 1;

  constructor(
    readonly panel: Panel,
    definitions: readonly ChannelDefinition[],
    readonly faults: readonly Fault[],
  ) {
    this.channels = panelChannels(panel);
    this.map = new PanelValueMap(this.channels, definitions);
    this.core = new EmulatedDeviceCore({
      address: 0,
      deviceId: "00000000b0b0b0b0",
      panel: panel.id,
      elementCount: panel.elements.length,
      channelCount: this.channels.length,
      waitsForPoll: false,
      show: (values) => this.show(values),
      uptimeMs: () => performance.now(),
    });
  }

  /** Device time: ms since the first update, scaled by the speed as it changes. */
  deviceTime(): number {
    if (this.started === null) return 0;
    const now = performance.now();
    this.elapsed += (now - this.lastNow) * this.speed;
    this.lastNow = now;
    return this.elapsed;
  }

  disconnectedNow(): boolean {
    const t = this.deviceTime();
    return this.started !== null && this.faults.some((f) => f.kind === "disconnect" && t >= f.fromMs && t < f.toMs);
  }

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

  private noteValues(values: ReadonlyMap<number, LinkValue>) {
    if (this.started === null) {
      this.started = performance.now();
      this.lastNow = this.started;
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

  /** What every element shows at device time `now`: expected state through the faults. */
  private statesAt(now: number): Map<number, { el: Element; state: ExpectedState }> {
    const frames: ExpectFrame[] = [{ t: this.baseT, v: this.base }, ...this.frames];
    const timelines = expectTimelines(this.panel, frames, { endMs: Math.max(now, this.frames.at(-1)?.t ?? this.baseT) });
    const out = new Map<number, { el: Element; state: ExpectedState }>();
    this.panel.elements.forEach((el, index) => {
      if (el.placeholder) return;
      const lag = this.faults.reduce((s, f) => s + (f.kind === "added_lag" && f.element === el.id ? f.ms : 0), 0);
      out.set(index, { el, state: this.applyFaults(el, expectedAt(timelines.elements[index], Math.max(this.baseT, now - lag)), now) });
    });
    return out;
  }

  private applyFaults(el: Element, s: ExpectedState, now: number): ExpectedState {
    const mine = this.faults.filter((f) => f.kind !== "disconnect" && f.element === el.id);
    if (mine.length === 0) return s;
    const out: ExpectedState = { ...s };
    if (s.lamp) {
      let lamp: LampShows = s.lamp;
      for (const f of mine) {
        if (f.kind === "lamp_stuck") lamp = f.lit ? { state: "on", level: 255 } : { state: "off" };
        if (f.kind === "lamp_inverted") lamp = lamp.state === "off" ? { state: "on", level: 255 } : { state: "off" };
      }
      out.lamp = lamp;
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
      out.angle = el.scale.kind === "full-circle" ? ((angle % 360) + 360) % 360 : angle;
    }
    if (s.text !== undefined) {
      let text = s.text;
      for (const f of mine) if (f.kind === "digit_dropped" && f.position < text.length) text = `${text.slice(0, f.position)} ${text.slice(f.position + 1)}`;
      out.text = text;
    }
    const stuck = mine.find((f) => f.kind === "breaker_stuck");
    if (s.breaker && stuck && stuck.kind === "breaker_stuck") out.breaker = stuck.position;
    return out;
  }

  private entriesAt(now: number): SeenEntry[] {
    const out: SeenEntry[] = [];
    for (const [index, { el, state }] of this.statesAt(now)) {
      const entry = entryOf(el, index, state);
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

  /** Time-based faults (lag, slow needles, slips): a report of what changed, or null. */
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
    const frame: LinkFrame = { address: 0, sequence: this.sequence, message: { type: "seen_report", appliedSequence: null, seen: changed.slice(0, 30) } };
    this.sequence = (this.sequence + 1) & 0xff;
    return encodeLinkFrame(frame);
  }
}

function entryOf(el: Element, index: number, s: ExpectedState): SeenEntry | null {
  if ((el.kind === "lamp" || el.kind === "button") && s.lamp) {
    const lamp = s.lamp;
    if (lamp.state === "off") return { element: index, kind: "lamp_state", state: "off" };
    if (lamp.state === "flashing") return { element: index, kind: "lamp_state", state: "flashing" };
    return lamp.level >= 255 ? { element: index, kind: "lamp_state", state: "on" } : { element: index, kind: "lamp_level", level: Math.max(1, Math.round(lamp.level)) };
  }
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

export type BrowserLinkState = "connecting" | "connected" | "unplugged" | "closed";

/** Puts a BrowserPanel on the run's panel socket; reconnects after a disconnect fault ends. */
export function hostInBrowser(device: BrowserPanel, runId: string, panelId: string, onState: (s: BrowserLinkState, reason?: string) => void) {
  const url = `${location.protocol === "https:" ? "wss" : "ws"}://${location.host}/ws/bench/runs/${encodeURIComponent(runId)}/panels/${encodeURIComponent(panelId)}`;
  let ws: WebSocket | null = null;
  let stopped = false;
  let unplugged = false;
  const connect = () => {
    const socket = new WebSocket(url);
    ws = socket;
    socket.binaryType = "arraybuffer";
    onState("connecting");
    socket.onopen = () => {
      onState("connected");
      for (const bytes of device.powerUp()) socket.send(bytes);
    };
    socket.onmessage = (e) => {
      if (!(e.data instanceof ArrayBuffer) || device.disconnectedNow()) return;
      for (const out of device.receiveBytes(new Uint8Array(e.data))) if (socket.readyState === WebSocket.OPEN) socket.send(out);
    };
    socket.onclose = (e) => {
      if (ws === socket) ws = null;
      if (!unplugged && !stopped) {
        stopped = true;
        onState("closed", e.reason || `closed (${e.code})`);
      }
    };
  };
  const timer = setInterval(() => {
    if (stopped) return;
    const down = device.disconnectedNow();
    if (down && ws && !unplugged) {
      unplugged = true;
      ws.close();
      ws = null;
      onState("unplugged");
    } else if (!down && unplugged && !ws) {
      unplugged = false;
      connect();
    }
    const periodic = device.periodic();
    if (periodic && ws && ws.readyState === WebSocket.OPEN && !down) ws.send(periodic);
  }, TICK_MS);
  connect();
  return () => {
    stopped = true;
    clearInterval(timer);
    ws?.close(1000, "virtual panel closed");
  };
}

/**
 * The faults injected on a run's virtual links. The run API does not answer them back (the
 * report's link "faults" are refused-frame counts), so the set-up keeps them in this browser.
 */
const FAULTS_KEY = (runId: string) => `panelproof.run-faults.${runId}`;

export function rememberRunFaults(runId: string, links: readonly { panelId: string; kind: string; faults?: readonly Fault[] }[]) {
  try {
    const byPanel = Object.fromEntries(links.filter((l) => l.kind === "virtual").map((l) => [l.panelId, l.faults ?? []]));
    localStorage.setItem(FAULTS_KEY(runId), JSON.stringify(byPanel));
  } catch {
    // Storage full or refused: the virtual panel then runs without its faults.
  }
}

export function rememberedRunFaults(runId: string, panelId: string): Fault[] | null {
  try {
    const text = localStorage.getItem(FAULTS_KEY(runId));
    const list = text ? (JSON.parse(text) as Record<string, unknown>)[panelId] : undefined;
    return Array.isArray(list) ? (list as Fault[]) : null;
  } catch {
    return null;
  }
}
