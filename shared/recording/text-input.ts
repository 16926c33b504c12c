import { RecordingError } from "./errors";

/** Default size limit for one recording source, counted in bytes as fed (after gzip, if any). */
export const DEFAULT_MAX_BYTES = 512 * 1024 * 1024;

/** UTF-8 length of a string without allocating its encoding. */
export function utf8ByteLength(text: string): number {
  let bytes = 0;
  for (let i = 0; i < text.length; i++) {
    const code = text.charCodeAt(i);
    if (code < 0x80) bytes += 1;
    else if (code < 0x800) bytes += 2;
    else if (code >= 0xd800 && code <= 0xdbff && i + 1 < text.length) {
      const next = text.charCodeAt(i + 1);
      if (next >= 0xdc00 && next <= 0xdfff) {
        bytes += 4;
        i++;
      } else bytes += 3;
    } else bytes += 3;
  }
  return bytes;
}

/**
 * Turns pushed chunks (text, or bytes split anywhere, even inside a multi-byte character) into
 * text, counting bytes against the size limit before any work is done on them.
 */
export class ChunkDecoder {
  private readonly decoder = new TextDecoder("utf-8", { fatal: true });
  private bytes = 0;
  private sawBytes = false;

  constructor(private readonly maxBytes: number = DEFAULT_MAX_BYTES) {}

  get bytesFed(): number {
    return this.bytes;
  }

  decode(chunk: string | Uint8Array): string {
    const size = typeof chunk === "string" ? utf8ByteLength(chunk) : chunk.byteLength;
    if (this.bytes + size > this.maxBytes) {
      throw new RecordingError(
        "too_large",
        `the file is over the size limit of ${this.maxBytes} bytes`,
        { byte: this.maxBytes },
      );
    }
    const offset = this.bytes;
    this.bytes += size;
    if (typeof chunk === "string") return chunk;
    this.sawBytes = true;
    try {
      return this.decoder.decode(chunk, { stream: true });
    } catch {
      throw new RecordingError("not_utf8", "the file is not valid UTF-8 text", { byte: offset });
    }
  }

  /** Flushes a multi-byte character left incomplete by the last chunk. */
  end(): string {
    if (!this.sawBytes) return "";
    try {
      return this.decoder.decode();
    } catch {
      throw new RecordingError("not_utf8", "the file ends inside a UTF-8 character", { byte: this.bytes });
    }
  }
}

/**
 * Splits pushed text into lines, wherever the chunks were cut. Accepts \n and \r\n endings.
 * Searches only the newly added text, so one long line fed in many small chunks stays linear.
 */
export class LineSplitter {
  private tail = "";

  push(text: string, onLine: (line: string) => void): void {
    if (!text) return;
    let searchFrom = this.tail.length;
    this.tail += text;
    let start = 0;
    let newline = this.tail.indexOf("\n", searchFrom);
    while (newline !== -1) {
      const end = newline > start && this.tail.charCodeAt(newline - 1) === 13 ? newline - 1 : newline;
      onLine(this.tail.slice(start, end));
      start = newline + 1;
      searchFrom = start;
      newline = this.tail.indexOf("\n", searchFrom);
    }
    this.tail = start === 0 ? this.tail : this.tail.slice(start);
  }

  /** The last line when the text does not end with a newline. */
  end(onLine: (line: string) => void): void {
    if (this.tail) {
      const line = this.tail.endsWith("\r") ? this.tail.slice(0, -1) : this.tail;
      this.tail = "";
      onLine(line);
    }
  }
}
