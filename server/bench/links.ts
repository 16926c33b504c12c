import type { WebSocket } from "ws";
import { encodeLinkFrame, encodeLinkMessage, sealLinkMessage, type EncodedLinkMessage } from "../../shared/link/codec";
import type { ChannelValue, LinkFrame, LinkMessage } from "../../shared/link/messages";
import { packValueUpdates } from "../../shared/link/pack";
import { LINK_ADDRESS_DIRECT, LINK_MAX_FRAME_BYTES } from "../../shared/link/protocol";
import { LinkStreamDecoder, type LinkStreamEvent } from "../../shared/link/stream";
import { BusMaster } from "../links/bus-master";
import { openSerialTransport } from "../links/serial-transport";
import { FROM_NODE_POOL, type ByteTransport } from "../links/transport";

/**
 * The bench's side of one panel's link. The run session hands it channel values (a keyframe or
 * changes) and hears back device frames, faults, and the link going up and down. Direct links
 * (WebSocket, serial) and RS-485 bus addresses look the same from the session.
 */
export interface LinkEvents {
  /** A good frame from the device; `arrival` is the bench's monotonic clock (performance.now()). */
  frame(frame: LinkFrame, arrival: number): void;
  /** A frame refused on this link (bad_crc, truncated, ...). */
  fault(reason: string, detail: string): void;
  /** The link is (again) carrying data: the session sends a keyframe first. */
  up(): void;
  /** The link dropped (socket closed, heartbeat silence, bus timeouts). */
  down(why: string): void;
}

export interface PanelLink {
  readonly kind: "virtual" | "network" | "serial" | "rs485";
  readonly panelId: string;
  readonly connected: boolean;
  update(values: ChannelValue[], keyframe: boolean): void;
  close(): Promise<void>;
}

/** How often a quiet direct link is polled, and how long silence means it dropped. */
export const POLL_EVERY_MS = 250;
export const SILENCE_MS = 1500;

const FAULT_NAMES: Record<string, string> = {};

function faultName(event: Extract<LinkStreamEvent, { ok: false }>): string {
  return FAULT_NAMES[event.fault] ?? event.fault;
}

/**
 * The value updates last encoded, by the list they were made from. The run session hands one list
 * to every panel that reads the same channels, so the second and later links only seal the same
 * payloads with their own sequence (about 1.5 µs a link instead of 9 for a 50-value frame).
 */
let lastEncoded: { values: readonly ChannelValue[]; keyframe: boolean; maxFrameBytes: number; messages: EncodedLinkMessage[] } | null = null;

function encodedUpdates(values: readonly ChannelValue[], keyframe: boolean, maxFrameBytes: number): EncodedLinkMessage[] {
  const last = lastEncoded;
  if (last && last.values === values && last.keyframe === keyframe && last.maxFrameBytes === maxFrameBytes) return last.messages;
  const messages = packValueUpdates(values, { keyframe, maxFrameBytes }).map(encodeLinkMessage);
  lastEncoded = { values, keyframe, maxFrameBytes, messages };
  return messages;
}

/**
 * One device on a line of its own: a WebSocket (virtual and network panels) or a serial port.
 * The line can be swapped (a reconnecting socket); frames are COBS-framed link frames either way.
 */
export class DirectLink implements PanelLink {
  private write: ((bytes: Uint8Array) => void) | null = null;
  private decoder = new LinkStreamDecoder({ acceptFrom: "device" });
  private sequence = 0;
  private maxFrameBytes = LINK_MAX_FRAME_BYTES;
  private lastHeard = 0;
  private live = false;
  private timer: NodeJS.Timeout | null = null;
  /** A socket currently attached (closed when replaced). */
  private socket: WebSocket | null = null;

  constructor(
    readonly kind: "virtual" | "network" | "serial",
    readonly panelId: string,
    private readonly events: LinkEvents,
  ) {}

  get connected() {
    return this.live;
  }

  /** A new line: a socket that just connected, or a serial port that just opened. */
  attach(write: (bytes: Uint8Array) => void, options: { identify: boolean }) {
    this.write = write;
    this.decoder = new LinkStreamDecoder({ acceptFrom: "device" });
    this.lastHeard = performance.now();
    if (options.identify) this.sendMessage({ type: "identify" });
    this.goUp();
    if (!this.timer) this.timer = setInterval(() => this.watch(), POLL_EVERY_MS);
  }

  attachSocket(ws: WebSocket) {
    const previous = this.socket;
    this.socket = ws;
    if (previous) previous.close(4000, "replaced by a newer connection for this panel");
    ws.binaryType = "nodebuffer";
    ws.on("message", (data, isBinary) => {
      if (this.socket !== ws) return;
      if (!isBinary) {
        this.events.fault("not_binary", "a text message on a link socket");
        return;
      }
      const b = data as Buffer;
      this.receive(new Uint8Array(b.buffer, b.byteOffset, b.length));
    });
    const gone = () => {
      if (this.socket !== ws) return;
      this.socket = null;
      this.write = null;
      this.goDown("socket closed");
    };
    ws.on("close", gone);
    ws.on("error", gone);
    this.attach((bytes) => {
      if (ws.readyState === ws.OPEN) ws.send(bytes, { binary: true });
    }, { identify: true });
  }

  detach(why: string) {
    this.write = null;
    this.goDown(why);
  }

  private goUp() {
    if (this.live) return;
    this.live = true;
    this.events.up();
  }

  private goDown(why: string) {
    if (!this.live) return;
    this.live = false;
    this.events.down(why);
  }

  receive(chunk: Uint8Array) {
    const at = performance.now();
    for (const event of this.decoder.push(chunk)) {
      if (!event.ok) {
        this.events.fault(faultName(event), event.detail);
        continue;
      }
      this.lastHeard = at;
      if (event.frame.message.type === "hello") this.maxFrameBytes = Math.min(LINK_MAX_FRAME_BYTES, event.frame.message.maxFrameBytes);
      if (!this.live && this.write) this.goUp();
      this.events.frame(event.frame, at);
    }
  }

  private watch() {
    if (!this.write) return;
    const quiet = performance.now() - this.lastHeard;
    if (quiet > SILENCE_MS) this.goDown("heartbeat silence");
    if (quiet > POLL_EVERY_MS) this.sendMessage({ type: "poll" });
  }

  private sendMessage(message: LinkMessage) {
    if (!this.write) return;
    const frame: LinkFrame = { address: LINK_ADDRESS_DIRECT, sequence: this.sequence, message };
    this.sequence = (this.sequence + 1) & 0xff;
    this.write(encodeLinkFrame(frame, FROM_NODE_POOL));
  }

  /** `values` must not change once handed over: the next link handed the same list reuses its encoding. */
  update(values: ChannelValue[], keyframe: boolean) {
    if (!this.write || (!keyframe && values.length === 0)) return;
    for (const encoded of encodedUpdates(values, keyframe, this.maxFrameBytes)) {
      const sequence = this.sequence;
      this.sequence = (sequence + 1) & 0xff;
      this.write(sealLinkMessage(LINK_ADDRESS_DIRECT, sequence, encoded, FROM_NODE_POOL));
    }
  }

  async close() {
    if (this.timer) clearInterval(this.timer);
    this.timer = null;
    this.write = null;
    this.live = false;
    this.socket?.close(1000, "the run is over");
    this.socket = null;
  }
}

/** A serial port with one board on it (direct link): opened, identified, reopened if it fails. */
export class SerialLink implements PanelLink {
  readonly kind = "serial" as const;
  private readonly direct: DirectLink;
  private transport: ByteTransport | null = null;
  private closed = false;
  private retry: NodeJS.Timeout | null = null;

  constructor(
    readonly panelId: string,
    private readonly path: string,
    private readonly baud: number,
    private readonly events: LinkEvents,
  ) {
    this.direct = new DirectLink("serial", panelId, events);
  }

  get connected() {
    return this.direct.connected;
  }

  async open() {
    if (this.closed) return;
    try {
      const transport = await openSerialTransport(this.path, this.baud);
      if (this.closed) return void (await transport.close());
      this.transport = transport;
      transport.onData((chunk) => this.direct.receive(chunk));
      // A power-up hello may have been sent before we opened the port: ask again.
      this.direct.attach((bytes) => void transport.write(bytes).catch(() => this.direct.detach("write failed")), { identify: true });
    } catch (error) {
      this.events.fault("cannot_open", (error as Error).message);
      this.retry = setTimeout(() => void this.open(), 1000);
    }
  }

  update(values: ChannelValue[], keyframe: boolean) {
    this.direct.update(values, keyframe);
  }

  async close() {
    this.closed = true;
    if (this.retry) clearTimeout(this.retry);
    await this.direct.close();
    await this.transport?.close();
  }
}

/**
 * One RS-485 port shared by several panels of a run at their addresses. The bus master takes
 * turns; each device has at most one batch of changes waiting, merged while it waits, so a slow
 * bus coalesces values instead of queueing stale ones.
 */
export class Rs485Port {
  private master: BusMaster | null = null;
  private transport: ByteTransport | null = null;
  private readonly devices = new Map<number, BusDeviceLink>();

  constructor(
    readonly path: string,
    readonly baud: number,
  ) {}

  device(panelId: string, address: number, events: LinkEvents): BusDeviceLink {
    const d = new BusDeviceLink(panelId, address, events, this);
    this.devices.set(address, d);
    return d;
  }

  async open(onError: (message: string) => void) {
    try {
      this.transport = await openSerialTransport(this.path, this.baud);
    } catch (error) {
      onError((error as Error).message);
      return;
    }
    // 40 ms for an answer (the master's own default is 10): emulated devices sharing a busy
    // machine answer late, and a late answer is dropped as a collision risk, losing its report.
    const master = new BusMaster(this.transport, { baud: this.baud, answerTimeoutMs: 40 });
    this.master = master;
    for (const address of this.devices.keys()) master.addDevice(address);
    master.onFrame((address, frame) => this.devices.get(address)?.answered(frame));
    master.onTimeout((address) => this.devices.get(address)?.timedOut());
    // Ask each device who it is (answered on its first turn).
    for (const address of this.devices.keys()) master.send(address, { type: "identify" });
    master.start();
  }

  send(address: number, message: LinkMessage) {
    this.master?.send(address, message);
  }

  faultCounts() {
    return this.master?.lineCounts;
  }

  async close() {
    await this.master?.stop();
    await this.transport?.close();
  }
}

export class BusDeviceLink implements PanelLink {
  readonly kind = "rs485" as const;
  private pending = new Map<number, ChannelValue>();
  private pendingKeyframe = false;
  private live = false;
  private lastAnswer = 0;

  constructor(
    readonly panelId: string,
    readonly address: number,
    private readonly events: LinkEvents,
    private readonly port: Rs485Port,
  ) {}

  get connected() {
    return this.live;
  }

  update(values: ChannelValue[], keyframe: boolean) {
    if (keyframe) {
      this.pending = new Map();
      this.pendingKeyframe = true;
    }
    for (const v of values) this.pending.set(v.channel, v);
  }

  private flush() {
    if (!this.pendingKeyframe && this.pending.size === 0) return;
    const values = [...this.pending.values()];
    for (const m of packValueUpdates(values, { keyframe: this.pendingKeyframe })) this.port.send(this.address, m);
    this.pending = new Map();
    this.pendingKeyframe = false;
  }

  answered(frame: LinkFrame) {
    this.lastAnswer = performance.now();
    if (!this.live) {
      this.live = true;
      this.events.up(); // the session queues a keyframe, flushed just below
    }
    this.events.frame(frame, this.lastAnswer);
    this.flush();
  }

  timedOut() {
    if (this.live && performance.now() - this.lastAnswer > SILENCE_MS) {
      this.live = false;
      this.events.down("no answer on the bus");
    }
    this.flush();
  }

  async close() {
    this.live = false;
  }
}
