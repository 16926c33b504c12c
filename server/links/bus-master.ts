import { frameAirTimeMs, interFrameSilenceMs } from "../../shared/link/bus";
import { encodeLinkFrame } from "../../shared/link/codec";
import type { LinkFrame, LinkMessage } from "../../shared/link/messages";
import { LINK_ADDRESS_BROADCAST } from "../../shared/link/protocol";
import { LinkStreamDecoder, type LinkStreamCounts } from "../../shared/link/stream";
import { FROM_NODE_POOL, type ByteTransport } from "./transport";

export interface BusDeviceCounts {
  sent: number;
  answered: number;
  timeouts: number;
  /** Answers from this address that came back but were not what a turn expects (another sender's sequence gap etc.). */
  unexpected: number;
}

export interface BusMasterOptions {
  baud: number;
  /** How long to wait for an answer after our frame has left, beyond the silence. Our choice: 10 ms. */
  answerTimeoutMs?: number;
  /** Model line time (air time + silence) ourselves: a pty or USB adapter does not. On by default. */
  modelLineTime?: boolean;
  now?: () => number;
  sleep?: (ms: number) => Promise<void>;
}

const defaultSleep = (ms: number) => new Promise<void>((resolve) => setTimeout(resolve, Math.max(0, ms)));

/**
 * The bench as master of an RS-485 bus: one serial port, several devices at their addresses.
 * Turns go round the devices; in each, the master sends one frame (the device's next queued
 * message, or a poll) and waits for exactly one answer or a timeout, keeping the line's
 * inter-frame silence (Modbus serial line guide V1.02: 3.5 characters, 1.750 ms above
 * 19,200 baud) before anyone drives the line again. No two stations ever talk at once.
 */
export class BusMaster {
  private readonly decoder = new LinkStreamDecoder({ acceptFrom: "device" });
  private readonly devices = new Map<number, { queue: LinkMessage[]; counts: BusDeviceCounts }>();
  private readonly broadcasts: LinkMessage[] = [];
  private waiting: { address: number; resolve: (frame: LinkFrame | null) => void } | null = null;
  private sequence = 0;
  private running = false;
  private loop: Promise<void> | null = null;
  private lineFreeAt = 0;
  private lastSendStart = 0;
  private readonly now: () => number;
  private readonly sleep: (ms: number) => Promise<void>;
  private readonly listeners: ((address: number, frame: LinkFrame) => void)[] = [];
  private readonly timeoutListeners: ((address: number) => void)[] = [];

  constructor(
    private readonly transport: ByteTransport,
    private readonly options: BusMasterOptions,
  ) {
    this.now = options.now ?? (() => performance.now());
    this.sleep = options.sleep ?? defaultSleep;
    transport.onData((chunk) => {
      for (const event of this.decoder.push(chunk)) {
        if (!event.ok) continue; // counted by the decoder; the turn times out if its answer was the garbage
        const frame = event.frame;
        if (this.waiting && frame.address === this.waiting.address) {
          const w = this.waiting;
          this.waiting = null;
          w.resolve(frame);
        } else {
          const d = this.devices.get(frame.address);
          if (d) d.counts.unexpected++;
        }
      }
    });
  }

  get silenceMs() {
    return interFrameSilenceMs(this.options.baud);
  }

  /** Faults seen on the line (bad CRC, truncated, oversized, ...), from the stream decoder. */
  get lineCounts(): Readonly<LinkStreamCounts> {
    return this.decoder.counts;
  }

  addDevice(address: number) {
    if (!(address >= 1 && address <= 247)) throw new RangeError(`bus address ${address} is outside 1..247`);
    if (!this.devices.has(address)) this.devices.set(address, { queue: [], counts: { sent: 0, answered: 0, timeouts: 0, unexpected: 0 } });
  }

  countsFor(address: number): BusDeviceCounts | undefined {
    return this.devices.get(address)?.counts;
  }

  /** Queues a message for one device's next turn. */
  send(address: number, message: LinkMessage) {
    const d = this.devices.get(address);
    if (!d) throw new RangeError(`no device at bus address ${address}`);
    d.queue.push(message);
  }

  /** Queues a message every device acts on and none answers (sent between turns). */
  broadcast(message: LinkMessage) {
    this.broadcasts.push(message);
  }

  onFrame(listener: (address: number, frame: LinkFrame) => void) {
    this.listeners.push(listener);
  }

  onTimeout(listener: (address: number) => void) {
    this.timeoutListeners.push(listener);
  }

  private async transmit(frame: LinkFrame) {
    const wire = encodeLinkFrame(frame, FROM_NODE_POOL);
    if (this.options.modelLineTime !== false) await this.sleep(this.lineFreeAt - this.now());
    this.lastSendStart = this.now();
    await this.transport.write(wire);
    const airtime = this.options.modelLineTime === false ? 0 : frameAirTimeMs(wire.length, this.options.baud);
    this.lineFreeAt = this.now() + airtime + this.silenceMs;
    return airtime;
  }

  private nextSequence() {
    const s = this.sequence;
    this.sequence = (this.sequence + 1) & 0xff;
    return s;
  }

  /** One turn for one device: send, then wait for its one answer or time out. */
  async turn(address: number): Promise<LinkFrame | null> {
    const d = this.devices.get(address)!;
    const message = d.queue.shift() ?? ({ type: "poll" } as const);
    const answer = new Promise<LinkFrame | null>((resolve) => (this.waiting = { address, resolve }));
    const airtime = await this.transmit({ address, sequence: this.nextSequence(), message });
    const sentAt = this.lastSendStart;
    d.counts.sent++;
    const timeoutMs = airtime + this.silenceMs + (this.options.answerTimeoutMs ?? 10);
    const timer = setTimeout(() => {
      if (this.waiting?.address === address) {
        const w = this.waiting;
        this.waiting = null;
        w.resolve(null);
      }
    }, timeoutMs);
    const frame = await answer;
    clearTimeout(timer);
    if (!frame) {
      d.counts.timeouts++;
      this.timeoutListeners.forEach((l) => l(address));
      return null;
    }
    d.counts.answered++;
    if (this.options.modelLineTime !== false) {
      // On a real line the answer starts a silence after our frame ends and lasts its own air
      // time; a pty delivers it at once, so the turn waits out what the line would have taken.
      const answerEnds = sentAt + airtime + this.silenceMs + frameAirTimeMs(encodeLinkFrame(frame).length, this.options.baud);
      await this.sleep(answerEnds - this.now());
      this.lineFreeAt = Math.max(this.now(), answerEnds) + this.silenceMs;
    }
    this.listeners.forEach((l) => l(address, frame));
    return frame;
  }

  /** Goes round the devices until stopped. */
  start() {
    if (this.running) return;
    this.running = true;
    this.loop = (async () => {
      while (this.running) {
        if (this.devices.size === 0) {
          await this.sleep(5);
          continue;
        }
        for (const address of [...this.devices.keys()]) {
          if (!this.running) break;
          while (this.broadcasts.length) {
            await this.transmit({ address: LINK_ADDRESS_BROADCAST, sequence: this.nextSequence(), message: this.broadcasts.shift()! });
          }
          await this.turn(address);
        }
      }
    })();
  }

  async stop() {
    this.running = false;
    if (this.waiting) {
      const w = this.waiting;
      this.waiting = null;
      w.resolve(null);
    }
    await this.loop;
  }
}
