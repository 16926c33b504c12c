import { createHash, timingSafeEqual } from "node:crypto";
import {
  CHANNEL_NAME_PATTERN,
  checkChannelValue,
  type ChannelDefinition,
  type ChannelValue,
} from "../../shared/recording/channels";
import { FrameSequencer, type Frame } from "../../shared/recording/frames";
import { RecordingError } from "../../shared/recording/errors";

/**
 * One live capture's message handling, without sockets: the server (UDP and WebSocket) and the
 * CLI feed it raw messages. See docs/capture.md for the message format.
 *
 * Messages carry a sequence number: ones that arrive early wait (up to `window` messages or
 * `maxWaitMs`) for the gap before them to fill; a duplicate is dropped; one that arrives after
 * its gap was given up is dropped. Everything is counted, and a malformed message never stops
 * the capture: it is counted and its reason kept as the last error.
 */

export interface CaptureMessage {
  seq: number;
  t: number;
  v: Record<string, ChannelValue>;
}

export interface CaptureCounters {
  received: number;
  malformed: number;
  /** Arrived after a message with a higher sequence number (reordered or, if too late, dropped). */
  outOfOrder: number;
  duplicates: number;
  /** Not recorded: too late to place, values refused, or the capture was full. */
  dropped: number;
  lastError: string | null;
}

export interface CaptureSessionOptions {
  /** The airframe's catalogue: values are checked against it; other channels become drafts. */
  channels: readonly ChannelDefinition[];
  /** When set, every message must carry it in `token` unless its connection was authorised. */
  token?: string | null;
  /** Messages held while waiting for a gap to fill. */
  window?: number;
  maxWaitMs?: number;
  /** Frames kept before the capture counts further messages as dropped. */
  maxFrames?: number;
  now?: () => number;
}

export const MAX_MESSAGE_BYTES = 64 * 1024;
const SEEN_MEMORY = 4096;

export function hashToken(token: string): string {
  return createHash("sha256").update(token).digest("hex");
}

export function tokenMatches(token: string, hash: string): boolean {
  const a = Buffer.from(hashToken(token), "hex");
  const b = Buffer.from(hash, "hex");
  return a.length === b.length && timingSafeEqual(a, b);
}

class Refused extends Error {}

export class CaptureSession {
  readonly counters: CaptureCounters = { received: 0, malformed: 0, outOfOrder: 0, duplicates: 0, dropped: 0, lastError: null };
  /** The latest value of every channel seen, in arrival order of sequence. */
  readonly latest: Record<string, ChannelValue> = Object.create(null) as Record<string, ChannelValue>;
  private readonly catalogue: Map<string, ChannelDefinition>;
  private readonly drafts = new Map<string, ChannelDefinition>();
  private readonly tokenHash: string | null;
  private readonly window: number;
  private readonly maxWaitMs: number;
  private readonly maxFrames: number;
  private readonly now: () => number;
  private nextSeq: number | null = null;
  private highestSeq = -1;
  private readonly held = new Map<number, { message: CaptureMessage; at: number }>();
  private readonly seen = new Set<number>();
  private readonly seenOrder: number[] = [];
  private readonly sequencer = new FrameSequencer();
  private readonly frames: Frame[] = [];
  private t0: number | null = null;
  private lastT = 0;

  constructor(options: CaptureSessionOptions) {
    this.catalogue = new Map(options.channels.map((c) => [c.name, c]));
    this.tokenHash = options.token ? hashToken(options.token) : null;
    this.window = options.window ?? 64;
    this.maxWaitMs = options.maxWaitMs ?? 250;
    this.maxFrames = options.maxFrames ?? 2_000_000;
    this.now = options.now ?? Date.now;
  }

  get frameCount(): number {
    return this.frames.length;
  }

  /** Feeds one raw message (a datagram or a WebSocket text frame). Never throws. */
  accept(raw: string | Buffer, options: { authorised?: boolean } = {}): void {
    this.counters.received++;
    let message: CaptureMessage;
    try {
      message = this.parse(raw, options.authorised === true);
    } catch (error) {
      this.refuse(error instanceof Refused ? error.message : `malformed message: ${(error as Error).message}`);
      return;
    }
    this.sequence(message);
  }

  /** Gives up on gaps that waited too long; call every ~100 ms while capturing. */
  tick(): void {
    if (this.held.size === 0) return;
    const now = this.now();
    let oldest = Infinity;
    for (const { at } of this.held.values()) oldest = Math.min(oldest, at);
    if (now - oldest >= this.maxWaitMs) this.skipGap();
  }

  /** Ends the capture: releases held messages and returns the frames and the channels they use. */
  finish(): { frames: Frame[]; channels: ChannelDefinition[]; drafts: ChannelDefinition[] } {
    while (this.held.size > 0) this.skipGap();
    const last = this.sequencer.finish();
    if (last) this.pushFrame(last);
    const used = new Set<string>();
    for (const f of this.frames) for (const name in f.v) used.add(name);
    const channels = [...this.catalogue.values(), ...this.drafts.values()].filter((c) => used.has(c.name));
    return { frames: this.frames, channels, drafts: [...this.drafts.values()].filter((c) => used.has(c.name)) };
  }

  private refuse(why: string): void {
    this.counters.malformed++;
    this.counters.lastError = why;
  }

  private parse(raw: string | Buffer, authorised: boolean): CaptureMessage {
    const size = typeof raw === "string" ? Buffer.byteLength(raw) : raw.length;
    if (size > MAX_MESSAGE_BYTES) throw new Refused(`message of ${size} bytes is over the ${MAX_MESSAGE_BYTES}-byte limit`);
    let json: unknown;
    try {
      json = JSON.parse(typeof raw === "string" ? raw : raw.toString("utf8"));
    } catch (error) {
      throw new Refused(`malformed JSON: ${(error as Error).message}`);
    }
    if (typeof json !== "object" || json === null || Array.isArray(json)) {
      throw new Refused('a message must be a JSON object {"seq", "t", "v"}');
    }
    const m = json as Record<string, unknown>;
    for (const key of Object.keys(m)) {
      if (!["token", "seq", "t", "v"].includes(key)) throw new Refused(`field ${key}: unknown field; a message has token, seq, t and v`);
    }
    if (this.tokenHash && !authorised) {
      if (typeof m.token !== "string" || !tokenMatches(m.token, this.tokenHash)) {
        throw new Refused("field token: missing or wrong capture token");
      }
    }
    const seq = m.seq;
    if (typeof seq !== "number" || !Number.isSafeInteger(seq) || seq < 0) {
      throw new Refused("field seq: must be a whole number, 0 or more, one higher in each message");
    }
    const t = m.t;
    if (typeof t !== "number" || !Number.isFinite(t) || t < 0) {
      throw new Refused(`seq ${seq}, field t: must be a finite number of milliseconds, 0 or more`);
    }
    const v = m.v ?? {};
    if (typeof v !== "object" || v === null || Array.isArray(v)) {
      throw new Refused(`seq ${seq}, field v: must be an object of channel values`);
    }
    const values = v as Record<string, unknown>;
    for (const name of Object.keys(values)) {
      const where = `seq ${seq}, channel "${name.slice(0, 80)}"`;
      if (!CHANNEL_NAME_PATTERN.test(name) || name.length > 80) {
        throw new Refused(`${where}: not a channel name (lowercase dotted words like gear.handle)`);
      }
      const channel = this.catalogue.get(name) ?? this.drafts.get(name) ?? null;
      const value = values[name];
      if (channel) {
        const problem = checkChannelValue(channel, value);
        if (problem) throw new Refused(`${where}: ${problem.why}`);
      } else if (!(typeof value === "number" && Number.isFinite(value)) && typeof value !== "boolean" && typeof value !== "string") {
        throw new Refused(`${where}: ${JSON.stringify(value)} is not a finite number, true/false or text`);
      }
    }
    // Only now, with the whole message valid, may unknown channels become drafts.
    for (const name of Object.keys(values)) {
      if (this.catalogue.has(name) || this.drafts.has(name)) continue;
      const value = values[name];
      const kind = typeof value === "number" ? "number" : typeof value === "boolean" ? "boolean" : "text";
      this.drafts.set(name, { name, kind, draft: true, description: "first seen in a live capture" } as ChannelDefinition);
    }
    return { seq, t, v: values as Record<string, ChannelValue> };
  }

  private remember(seq: number): void {
    this.seen.add(seq);
    this.seenOrder.push(seq);
    if (this.seenOrder.length > SEEN_MEMORY) this.seen.delete(this.seenOrder.shift()!);
  }

  private sequence(message: CaptureMessage): void {
    const { seq } = message;
    if (this.seen.has(seq) || this.held.has(seq)) {
      this.counters.duplicates++;
      return;
    }
    this.remember(seq);
    if (seq < this.highestSeq) this.counters.outOfOrder++;
    this.highestSeq = Math.max(this.highestSeq, seq);
    if (this.nextSeq === null) this.nextSeq = seq;
    if (seq < this.nextSeq) {
      // Its gap was already given up: placing it now would rewrite the past.
      this.counters.dropped++;
      this.counters.lastError = `seq ${seq} arrived too late to place and was dropped`;
      return;
    }
    if (seq > this.nextSeq) {
      this.held.set(seq, { message, at: this.now() });
      if (this.held.size > this.window) this.skipGap();
      return;
    }
    this.emit(message);
    this.nextSeq = seq + 1;
    this.release();
  }

  private release(): void {
    while (this.nextSeq !== null && this.held.has(this.nextSeq)) {
      const { message } = this.held.get(this.nextSeq)!;
      this.held.delete(this.nextSeq);
      this.emit(message);
      this.nextSeq++;
    }
  }

  /** Stops waiting for the missing messages before the earliest held one. */
  private skipGap(): void {
    if (this.held.size === 0) return;
    this.nextSeq = Math.min(...this.held.keys());
    this.release();
  }

  private emit(message: CaptureMessage): void {
    if (this.t0 === null) this.t0 = message.t;
    const t = Math.round(message.t - this.t0);
    if (t < 0 || t < this.lastT) {
      this.refuse(`seq ${message.seq}, field t: time ${message.t} goes back before the previous message's`);
      return;
    }
    if (this.frames.length >= this.maxFrames) {
      this.counters.dropped++;
      this.counters.lastError = `the capture is full (${this.maxFrames} frames); stop it and start another`;
      return;
    }
    try {
      const frame = this.sequencer.accept(t, { ...message.v }, {});
      if (frame) this.pushFrame(frame);
      this.lastT = t;
      Object.assign(this.latest, message.v);
    } catch (error) {
      // Two messages at one instant that disagree: keep the first, count the second as malformed.
      this.refuse(`seq ${message.seq}: ${error instanceof RecordingError ? error.why : (error as Error).message}`);
    }
  }

  private pushFrame(frame: Frame): void {
    this.frames.push(frame);
  }
}
