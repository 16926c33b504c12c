import { Gunzip } from "fflate";
import { RecordingError } from "./errors";

/** True when bytes start with the gzip magic number (RFC 1952 section 2.3.1: ID1 0x1f, ID2 0x8b). */
export function looksGzipped(bytes: Uint8Array): boolean {
  return bytes.length >= 2 && bytes[0] === 0x1f && bytes[1] === 0x8b;
}

const CRC_TABLE = (() => {
  const table = new Uint32Array(256);
  for (let n = 0; n < 256; n++) {
    let c = n;
    for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
    table[n] = c >>> 0;
  }
  return table;
})();

/** CRC-32 as gzip uses it (CRC-32/ISO-HDLC); pass the previous result to continue over chunks. */
export function crc32(bytes: Uint8Array, previous = 0): number {
  let c = ~previous >>> 0;
  for (let i = 0; i < bytes.length; i++) c = CRC_TABLE[(c ^ bytes[i]) & 0xff] ^ (c >>> 8);
  return ~c >>> 0;
}

/**
 * Streaming gunzip that notices a cut-off file. fflate's stream stops quietly when the input
 * ends early, so the trailer (CRC-32 and length, RFC 1952 section 2.3.1) is checked here: a
 * truncated upload must be refused, not imported as a shorter recording. One gzip member only.
 */
export class GzipInflater {
  private readonly gunzip: Gunzip;
  private finished = false;
  private compressedBytes = 0;
  private outputBytes = 0;
  private crc = 0;
  private lastEight = new Uint8Array(0);
  private readonly sink: (bytes: Uint8Array) => void;

  constructor(onBytes: (bytes: Uint8Array) => void) {
    this.sink = onBytes;
    this.gunzip = new Gunzip((data, final) => {
      if (data.length) {
        this.crc = crc32(data, this.crc);
        this.outputBytes += data.length;
        this.sink(data);
      }
      if (final) this.finished = true;
    });
  }

  push(chunk: Uint8Array): void {
    this.compressedBytes += chunk.length;
    if (chunk.length >= 8) this.lastEight = chunk.slice(chunk.length - 8);
    else {
      const joined = new Uint8Array(this.lastEight.length + chunk.length);
      joined.set(this.lastEight);
      joined.set(chunk, this.lastEight.length);
      this.lastEight = joined.slice(Math.max(0, joined.length - 8));
    }
    try {
      this.gunzip.push(chunk);
    } catch (error) {
      // Errors raised by whoever consumes the unpacked bytes (size limit, bad frames) pass through.
      if (error instanceof RecordingError) throw error;
      throw new RecordingError("truncated_gzip", `the gzip data is damaged (${(error as Error).message})`, {
        byte: this.compressedBytes,
      });
    }
  }

  end(): void {
    try {
      this.gunzip.push(new Uint8Array(0), true);
    } catch (error) {
      if (error instanceof RecordingError) throw error;
      throw new RecordingError("truncated_gzip", "the gzip file ends early (truncated)", { byte: this.compressedBytes });
    }
    // 10-byte header + at least 2 bytes of deflate + 8-byte trailer.
    if (!this.finished || this.compressedBytes < 20) {
      throw new RecordingError("truncated_gzip", "the gzip file ends early (truncated)", { byte: this.compressedBytes });
    }
    const t = this.lastEight;
    const storedCrc = (t[0] | (t[1] << 8) | (t[2] << 16) | (t[3] << 24)) >>> 0;
    const storedSize = (t[4] | (t[5] << 8) | (t[6] << 16) | (t[7] << 24)) >>> 0;
    if (storedSize !== this.outputBytes % 2 ** 32 || storedCrc !== this.crc) {
      throw new RecordingError(
        "truncated_gzip",
        "the gzip file is truncated or damaged (its checksum does not match)",
        { byte: this.compressedBytes },
      );
    }
  }
}
