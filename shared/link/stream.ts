import { decodeLinkFrameBody, type LinkFrameFault } from "./codec";
import { cobsDecode, cobsDecodeInto } from "./cobs";
import type { LinkFrame } from "./messages";
import { linkMessageSender } from "./messages";
import { LINK_DELIMITER, LINK_MAX_FRAME_BYTES, LINK_MIN_FRAME_BYTES } from "./protocol";

export type LinkStreamEvent =
  | { ok: true; frame: LinkFrame; wireBytes: number }
  | { ok: false; fault: LinkFrameFault; detail: string; wireBytes: number };

export interface LinkStreamCounts {
  /** Bytes pushed, delimiters included. */
  bytes: number;
  /** Good frames handed on. */
  frames: number;
  /** Good frames from the side this decoder does not listen to (own echo, other devices' answers). */
  ignored: number;
  badCrc: number;
  truncated: number;
  oversized: number;
  unknownType: number;
  badVersion: number;
  badAddress: number;
  badPayload: number;
}

const FAULT_COUNTER: Record<LinkFrameFault, keyof LinkStreamCounts> = {
  bad_crc: "badCrc",
  truncated: "truncated",
  oversized: "oversized",
  unknown_type: "unknownType",
  bad_version: "badVersion",
  bad_address: "badAddress",
  bad_payload: "badPayload",
};

export interface LinkStreamDecoderOptions {
  /** Largest frame before stuffing; a device with little RAM sets what its hello announces. */
  maxFrameBytes?: number;
  /**
   * Whose frames to hand on. The bench listens to devices, a device to the bench; on a shared
   * RS-485 pair each also hears the other kind, which is counted as ignored, not as an error.
   */
  acceptFrom?: "bench" | "device" | "both";
}

function emptyCounts(): LinkStreamCounts {
  return { bytes: 0, frames: 0, ignored: 0, badCrc: 0, truncated: 0, oversized: 0, unknownType: 0, badVersion: 0, badAddress: 0, badPayload: 0 };
}

/**
 * Finds frames in a byte stream that arrives in pieces of any size (a serial read may end
 * anywhere). Each 0x00 ends a frame; bytes between two delimiters are one frame or one fault.
 * Resynchronisation is built in: whatever garbage arrives, the next 0x00 starts afresh. A run of
 * bytes longer than the largest frame is reported once as oversized and then skipped up to the
 * next delimiter, so memory stays bounded. Never throws on any input.
 */
export class LinkStreamDecoder {
  private readonly buffer: Uint8Array;
  private length = 0;
  /** Inside an oversized run: drop bytes until the next delimiter. */
  private discarding = false;
  private discardedBytes = 0;
  private readonly tally = emptyCounts();
  readonly maxFrameBytes: number;
  private readonly acceptFrom: "bench" | "device" | "both";

  constructor(options: LinkStreamDecoderOptions = {}) {
    const maxFrameBytes = options.maxFrameBytes ?? LINK_MAX_FRAME_BYTES;
    if (!Number.isInteger(maxFrameBytes) || maxFrameBytes < LINK_MIN_FRAME_BYTES || maxFrameBytes > LINK_MAX_FRAME_BYTES) {
      throw new RangeError(`maxFrameBytes must be ${LINK_MIN_FRAME_BYTES}..${LINK_MAX_FRAME_BYTES}, got ${maxFrameBytes}`);
    }
    this.maxFrameBytes = maxFrameBytes;
    this.acceptFrom = options.acceptFrom ?? "both";
    // Up to 254 bytes COBS adds exactly one.
    this.buffer = new Uint8Array(maxFrameBytes + 1);
    this.unstuffed = new Uint8Array(maxFrameBytes + 1);
  }

  /** Each frame is unstuffed here, then read into messages before the next: one buffer, not one per frame. */
  private readonly unstuffed: Uint8Array;

  get counts(): Readonly<LinkStreamCounts> {
    return { ...this.tally };
  }

  /** Frames refused for any reason (ignored frames are good frames and not counted here). */
  get badFrames(): number {
    const t = this.tally;
    return t.badCrc + t.truncated + t.oversized + t.unknownType + t.badVersion + t.badAddress + t.badPayload;
  }

  /** Bytes held for a frame not yet ended by a delimiter. */
  get pendingBytes(): number {
    return this.length;
  }

  push(chunk: Uint8Array): LinkStreamEvent[] {
    const events: LinkStreamEvent[] = [];
    this.tally.bytes += chunk.length;
    for (let index = 0; index < chunk.length; index++) {
      const byte = chunk[index];
      if (byte === LINK_DELIMITER) {
        if (this.discarding) {
          this.discarding = false;
        } else if (this.length > 0) {
          const event = this.finishFrame();
          if (event) events.push(event);
        }
        // Two delimiters in a row are an empty frame: the sender's way to flush line noise.
        this.length = 0;
        continue;
      }
      if (this.discarding) {
        this.discardedBytes++;
        continue;
      }
      if (this.length === this.buffer.length) {
        this.discarding = true;
        this.discardedBytes = this.length + 1;
        this.length = 0;
        this.tally.oversized++;
        events.push({
          ok: false,
          fault: "oversized",
          detail: `more than ${this.buffer.length} bytes without a delimiter (largest frame ${this.maxFrameBytes} bytes before stuffing)`,
          wireBytes: this.discardedBytes,
        });
        continue;
      }
      this.buffer[this.length++] = byte;
    }
    return events;
  }

  /** The stream closed: a frame still waiting for its delimiter was cut short. */
  end(): LinkStreamEvent[] {
    this.discarding = false;
    if (this.length === 0) return [];
    const wireBytes = this.length;
    this.length = 0;
    this.tally.truncated++;
    return [{ ok: false, fault: "truncated", detail: `stream ended ${wireBytes} bytes into a frame`, wireBytes }];
  }

  /** Undefined for a good frame from the side this decoder does not listen to. */
  private finishFrame(): LinkStreamEvent | undefined {
    const wireBytes = this.length + 1;
    const length = cobsDecodeInto(this.buffer, this.length, this.unstuffed);
    if (length < 0) {
      // Not COBS: decode again the slow way only to say where.
      const why = cobsDecode(this.buffer.subarray(0, this.length));
      this.tally.truncated++;
      return { ok: false, fault: "truncated", detail: `COBS: ${why.ok ? "malformed" : why.detail}`, wireBytes };
    }
    const result = decodeLinkFrameBody(this.unstuffed.subarray(0, length), this.maxFrameBytes);
    if (!result.ok) {
      this.tally[FAULT_COUNTER[result.fault]]++;
      return { ...result, wireBytes };
    }
    if (this.acceptFrom !== "both" && linkMessageSender(result.frame.message) !== this.acceptFrom) {
      this.tally.ignored++;
      return undefined;
    }
    this.tally.frames++;
    return { ok: true, frame: result.frame, wireBytes };
  }
}
