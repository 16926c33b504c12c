import { deviceAcceptsFrame, deviceMayAnswer } from "./bus";
import type { ChannelValue, DeviceCapabilities, LinkFrame, LinkMessage, SeenEntry } from "./messages";
import { LINK_ADDRESS_DIRECT, LINK_PROTOCOL_VERSION } from "./protocol";

/**
 * The device side of the link protocol with no hardware: what a board's firmware does with
 * each bench frame, as pure logic. The device emulator, the browser's virtual panel and the
 * tests all use it; what the device *shows* for its channel values is plugged in (`show`),
 * so a faithful panel model or a deliberately faulty one can sit behind the same protocol.
 */
export interface EmulatedDeviceOptions {
  /** 1..247 on an RS-485 bus; 0 on a direct link. */
  address: number;
  deviceId: string;
  panel: string;
  elementCount: number;
  channelCount: number;
  /** On a bus the device speaks only when spoken to. */
  waitsForPoll: boolean;
  firmware?: { major: number; minor: number; patch: number };
  maxFrameBytes?: number;
  /** What the elements show for the current channel values (indices as the panel lists them). */
  show(values: ReadonlyMap<number, ChannelValue>): SeenEntry[];
  /** Milliseconds since power-up, for heartbeats. */
  uptimeMs?: () => number;
}

/** How often a seen report repeats every element instead of only what changed. */
export const FULL_REPORT_EVERY = 10;

export class EmulatedDeviceCore {
  private readonly values = new Map<number, ChannelValue>();
  private readonly queue: LinkMessage[] = [];
  private appliedSequence: number | null = null;
  private sequence = 0;
  private inKeyframe = false;
  /** Counters a heartbeat reports. */
  readonly counts = { framesReceived: 0, ignored: 0, dropped: 0 };

  constructor(private readonly options: EmulatedDeviceOptions) {}

  get channelValues(): ReadonlyMap<number, ChannelValue> {
    return this.values;
  }

  private capabilities(): DeviceCapabilities {
    return { valueUpdates: true, seenReports: true, inputEvents: true, waitsForPoll: this.options.waitsForPoll, textValues: true, floatValues: true };
  }

  private enqueue(message: LinkMessage) {
    // A small board has room for a few reports; beyond that the oldest news is least useful.
    if (this.queue.length >= 16) {
      this.queue.shift();
      this.counts.dropped++;
    }
    this.queue.push(message);
  }

  /** What each element showed in the last report, to send only what changed (as the firmware does). */
  private readonly reported = new Map<number, string>();

  private reportsSent = 0;

  private seenReport(): LinkMessage {
    // Every tenth report is complete: an answer lost on a busy bus is then made good within ten
    // turns instead of never (the device cannot know the bench missed it).
    const full = ++this.reportsSent % FULL_REPORT_EVERY === 0;
    const changed = this.options.show(this.values).filter((entry) => {
      const key = JSON.stringify(entry);
      if (!full && this.reported.get(entry.element) === key) return false;
      this.reported.set(entry.element, key);
      return true;
    });
    // An empty report still acknowledges the latest applied update (docs/link-protocol.md).
    return { type: "seen_report", appliedSequence: this.appliedSequence, seen: changed };
  }

  /** A direct-link device announces itself at power-up. */
  powerUp(): LinkFrame[] {
    return this.options.waitsForPoll ? [] : [this.frame(this.hello())];
  }

  /** An input moved on the device (a switch flipped by hand). */
  input(message: Extract<LinkMessage, { type: "input_event" }>): LinkFrame[] {
    if (this.options.waitsForPoll) {
      this.enqueue(message);
      return [];
    }
    return [this.frame(message)];
  }

  private hello(): LinkMessage {
    const o = this.options;
    return {
      type: "hello",
      deviceId: o.deviceId,
      firmware: o.firmware ?? { major: 1, minor: 0, patch: 0 },
      protocolVersion: LINK_PROTOCOL_VERSION,
      capabilities: this.capabilities(),
      maxFrameBytes: o.maxFrameBytes ?? 254,
      elementCount: o.elementCount,
      channelCount: o.channelCount,
      panel: o.panel,
    };
  }

  private frame(message: LinkMessage): LinkFrame {
    const address = this.options.address;
    const frame: LinkFrame = { address: address === 0 ? LINK_ADDRESS_DIRECT : address, sequence: this.sequence, message };
    this.sequence = (this.sequence + 1) & 0xff;
    return frame;
  }

  /** Handles one frame heard on the wire and returns what the device sends back (possibly nothing). */
  receive(frame: LinkFrame): LinkFrame[] {
    if (!deviceAcceptsFrame(frame, this.options.address)) {
      this.counts.ignored++;
      return [];
    }
    this.counts.framesReceived++;
    const m = frame.message;
    switch (m.type) {
      case "identify":
        this.enqueue(this.hello());
        break;
      case "reset":
        this.values.clear();
        this.reported.clear();
        this.queue.length = 0;
        this.appliedSequence = null;
        break;
      case "value_update":
        if (m.keyframeBegin) {
          this.values.clear();
          this.inKeyframe = true;
        }
        for (const v of m.values) this.values.set(v.channel, v);
        if (m.keyframeEnd) this.inKeyframe = false;
        this.appliedSequence = frame.sequence;
        // Outputs follow only once a keyframe is complete: never show a half state.
        if (!this.inKeyframe && !this.options.waitsForPoll) this.enqueue(this.seenReport());
        break;
      case "poll":
        if (!this.options.waitsForPoll && this.queue.length === 0) {
          const now = this.options.uptimeMs?.() ?? 0;
          this.enqueue({
            type: "heartbeat",
            uptimeMs: Math.floor(now) >>> 0,
            framesReceived: Math.min(this.counts.framesReceived, 0xffff),
            badCrc: 0,
            truncated: 0,
            oversized: 0,
            rejected: 0,
            dropped: Math.min(this.counts.dropped, 0xffff),
            freeMemoryBytes: null,
          });
        }
        break;
      case "error":
        break;
      default:
        this.counts.ignored++;
        return [];
    }
    if (!deviceMayAnswer(frame)) return [];
    if (this.options.waitsForPoll) {
      // On a bus: exactly one answer, the oldest queued message or a fresh seen report.
      const next = this.queue.shift() ?? this.seenReport();
      return [this.frame(next)];
    }
    const out = this.queue.splice(0).map((message) => this.frame(message));
    return out;
  }

  /** A fault the wire gave us (bad CRC, truncated...): answer with the protocol's error where allowed. */
  refuse(code: "bad_crc" | "truncated" | "oversized" | "unknown_type" | "bad_version" | "bad_address" | "bad_payload", detail: string): LinkFrame[] {
    if (this.options.waitsForPoll) return []; // on a bus nobody knows whose garbage it was
    return [this.frame({ type: "error", from: "device", code, subject: 0, text: detail.replace(/[^\x20-\x7e]/g, "?").slice(0, 32) })];
  }
}
