import { z } from "zod";
import { channelIndex, channelList, checkChannelValue, type ChannelDefinition, type ChannelValue } from "./channels";
import { formatPath, RecordingError } from "./errors";
import { FrameSequencer, type Frame } from "./frames";
import { GzipInflater, looksGzipped } from "./gzip";
import { ChunkDecoder, DEFAULT_MAX_BYTES, LineSplitter } from "./text-input";

/**
 * The Panelproof recording file: line-delimited JSON. Line 1 is the header, every later line a
 * frame `{"t": ms, "v": {channel: value}}` holding only the values that changed. See
 * docs/recording-format.md.
 */

export const RECORDING_FORMAT = "panelproof-recording";
export const RECORDING_VERSION = 1;
export const SUPPORTED_RECORDING_VERSIONS: readonly number[] = [1];
export const RECORDING_SOURCES = ["capture", "file", "csv", "scenario"] as const;

export const recordingHeader = z
  .object({
    format: z.literal(RECORDING_FORMAT),
    version: z.literal(RECORDING_VERSION),
    airframe: z.string({ error: "must be a string" }).min(1, "must not be empty").max(120, "must be at most 120 characters"),
    channels: channelList.refine((cs) => cs.length > 0, "must list at least one channel"),
    notes: z.string({ error: "must be a string" }).max(10_000, "must be at most 10000 characters").optional(),
    source: z.enum(RECORDING_SOURCES, { error: `must be one of ${RECORDING_SOURCES.join(", ")}` }).optional(),
    sampleRateHz: z.number({ error: "must be a number" }).positive("must be positive").max(1000, "must be at most 1000").optional(),
    durationMs: z.number({ error: "must be a number" }).int("must be a whole number").nonnegative("must not be negative").optional(),
    createdAt: z.iso.datetime({ error: "must be an ISO 8601 date and time" }).optional(),
  })
  .strict();
export type RecordingHeader = z.infer<typeof recordingHeader>;

export interface RecordingParserOptions {
  /** Size limit in bytes of text fed to the parser (after gunzip). Default 512 MB. */
  maxBytes?: number;
  /** Byte chunks: "auto" gunzips when the first bytes are the gzip magic number. */
  gzip?: boolean | "auto";
}

const JSON_POSITION = / in JSON at position (\d+).*$/s;
const NON_FINITE_LITERAL = /(?<![\w"])(-?Infinity|NaN)(?![\w"])/;

function malformed(line: string, lineNo: number, error: unknown): RecordingError {
  const literal = NON_FINITE_LITERAL.exec(line);
  if (literal) {
    return new RecordingError(
      "not_finite",
      `${literal[1]} is not a number JSON can carry; numbers must be finite`,
      { line: lineNo, column: literal.index + 1 },
    );
  }
  const message = error instanceof Error ? error.message : String(error);
  const position = JSON_POSITION.exec(message);
  const why = `malformed JSON: ${message.replace(JSON_POSITION, "").replace(/, ".*" is not valid JSON$/s, "")}`;
  return new RecordingError("malformed_json", why, {
    line: lineNo,
    column: position ? Number(position[1]) + 1 : undefined,
  });
}

function isPlainObject(value: unknown): value is Record<string, unknown> {
  return typeof value === "object" && value !== null && !Array.isArray(value);
}

export function parseRecordingHeader(line: string, lineNo = 1): RecordingHeader {
  let raw: unknown;
  try {
    raw = JSON.parse(line.charCodeAt(0) === 0xfeff ? line.slice(1) : line);
  } catch (error) {
    throw malformed(line, lineNo, error);
  }
  if (!isPlainObject(raw)) {
    throw new RecordingError("not_a_header", "the first line must be the header object", { line: lineNo });
  }
  if (!("format" in raw) && "t" in raw) {
    throw new RecordingError(
      "not_a_header",
      `the first line must be the header ({"format": "${RECORDING_FORMAT}", ...}); found a frame`,
      { line: lineNo },
    );
  }
  if (raw.format !== RECORDING_FORMAT) {
    throw new RecordingError(
      "unknown_format",
      `not a Panelproof recording: format is ${JSON.stringify(raw.format ?? null)}, expected "${RECORDING_FORMAT}"`,
      { line: lineNo, field: "format" },
    );
  }
  if (typeof raw.version !== "number" || !SUPPORTED_RECORDING_VERSIONS.includes(raw.version)) {
    throw new RecordingError(
      "unknown_version",
      `unknown format version ${JSON.stringify(raw.version ?? null)}; this build reads version ${SUPPORTED_RECORDING_VERSIONS.join(", ")}`,
      { line: lineNo, field: "version" },
    );
  }
  const parsed = recordingHeader.safeParse(raw);
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    const field = formatPath(issue.path);
    throw new RecordingError("invalid_header", issue.message, { line: lineNo, field: field || undefined });
  }
  return parsed.data;
}

/**
 * Streaming parser: push text or byte chunks split anywhere; each push returns the frames it
 * completed. A frame is held back until a later time arrives, because a following line with
 * the same time merges into it.
 */
export class RecordingParser {
  header: RecordingHeader | null = null;
  private channels = new Map<string, ChannelDefinition>();
  private readonly decoder: ChunkDecoder;
  private readonly splitter = new LineSplitter();
  private readonly sequencer = new FrameSequencer();
  private readonly gzipOption: boolean | "auto";
  private inflater: GzipInflater | null = null;
  private sniffed = false;
  private sniffBuffer: Uint8Array | null = null;
  private lineNo = 0;
  private out: Frame[] = [];
  private ended = false;

  constructor(options: RecordingParserOptions = {}) {
    this.decoder = new ChunkDecoder(options.maxBytes ?? DEFAULT_MAX_BYTES);
    this.gzipOption = options.gzip ?? "auto";
  }

  get bytesFed(): number {
    return this.decoder.bytesFed;
  }

  get linesRead(): number {
    return this.lineNo;
  }

  get framesEmitted(): number {
    return this.sequencer.framesEmitted;
  }

  push(chunk: string | Uint8Array): Frame[] {
    if (this.ended) throw new Error("RecordingParser: push after end");
    if (typeof chunk === "string") this.feedText(this.decoder.decode(chunk));
    else this.feedBytes(chunk);
    return this.take();
  }

  end(): Frame[] {
    if (this.ended) return [];
    this.ended = true;
    if (this.sniffBuffer) {
      // Fewer than two bytes in total: too short to be gzip.
      const bytes = this.sniffBuffer;
      this.sniffBuffer = null;
      this.feedText(this.decoder.decode(bytes));
    }
    this.inflater?.end();
    this.feedText(this.decoder.end());
    this.splitter.end((line) => this.onLine(line));
    if (!this.header) throw new RecordingError("empty_file", "the file is empty");
    const last = this.sequencer.finish();
    if (last) this.out.push(last);
    if (this.sequencer.framesEmitted === 0) {
      throw new RecordingError("no_frames", "the recording has a header but no frames", { line: this.lineNo });
    }
    return this.take();
  }

  private take(): Frame[] {
    const frames = this.out;
    this.out = [];
    return frames;
  }

  private feedBytes(chunk: Uint8Array): void {
    if (!this.sniffed) {
      const joined = this.sniffBuffer ? concat(this.sniffBuffer, chunk) : chunk;
      if (joined.length < 2 && this.gzipOption === "auto") {
        this.sniffBuffer = joined;
        return;
      }
      this.sniffBuffer = null;
      this.sniffed = true;
      const gzipped = this.gzipOption === true || (this.gzipOption === "auto" && looksGzipped(joined));
      if (gzipped) this.inflater = new GzipInflater((bytes) => this.feedText(this.decoder.decode(bytes)));
      chunk = joined;
    }
    if (this.inflater) this.inflater.push(chunk);
    else this.feedText(this.decoder.decode(chunk));
  }

  private feedText(text: string): void {
    this.splitter.push(text, (line) => this.onLine(line));
  }

  private onLine(line: string): void {
    this.lineNo++;
    // Blank lines (including a trailing one) carry nothing; String.trim also drops a byte-order mark.
    if (line.length === 0 || line.trim().length === 0) return;
    if (!this.header) {
      this.header = parseRecordingHeader(line, this.lineNo);
      this.channels = channelIndex(this.header.channels);
      return;
    }
    this.onFrameLine(line);
  }

  private onFrameLine(line: string): void {
    const lineNo = this.lineNo;
    let raw: unknown;
    try {
      raw = JSON.parse(line);
    } catch (error) {
      throw malformed(line, lineNo, error);
    }
    if (!isPlainObject(raw)) {
      throw new RecordingError("invalid_frame", 'a frame must be a JSON object {"t": ms, "v": {...}}', { line: lineNo });
    }
    for (const key in raw) {
      if (key !== "t" && key !== "v") {
        throw new RecordingError("invalid_frame", `unknown field "${key}"; a frame has only "t" and "v"`, {
          line: lineNo,
          field: key,
        });
      }
    }
    const t = raw.t;
    if (typeof t !== "number") {
      throw new RecordingError("invalid_frame", "time must be a number of milliseconds", { line: lineNo, field: "t" });
    }
    if (!Number.isFinite(t)) {
      throw new RecordingError("not_finite", `time ${t} is not a finite number`, { line: lineNo, field: "t" });
    }
    if (!Number.isInteger(t) || t < 0) {
      throw new RecordingError("invalid_frame", `time ${t} must be a whole, non-negative number of milliseconds`, {
        line: lineNo,
        field: "t",
      });
    }
    const duration = this.header!.durationMs;
    if (duration !== undefined && t > duration) {
      throw new RecordingError("invalid_frame", `time ${t} ms is after the header's durationMs ${duration}`, {
        line: lineNo,
        field: "t",
      });
    }
    const values = raw.v;
    if (!isPlainObject(values)) {
      throw new RecordingError("invalid_frame", "v must be an object of channel values", { line: lineNo, field: "v" });
    }
    for (const name in values) {
      const value = values[name];
      const channel = this.channels.get(name);
      if (!channel) {
        throw new RecordingError("unknown_channel", "this channel is not in the header", {
          line: lineNo,
          field: "v",
          channel: name,
        });
      }
      const problem = checkChannelValue(channel, value);
      if (problem) throw new RecordingError(problem.code, problem.why, { line: lineNo, field: "v", channel: name });
    }
    const frame = this.sequencer.accept(t, values as Record<string, ChannelValue>, { line: lineNo });
    if (frame) this.out.push(frame);
  }
}

function concat(a: Uint8Array, b: Uint8Array): Uint8Array {
  const joined = new Uint8Array(a.length + b.length);
  joined.set(a);
  joined.set(b, a.length);
  return joined;
}

export interface ParsedRecording {
  header: RecordingHeader;
  frames: Frame[];
}

/** Whole-input convenience over RecordingParser: a string, bytes, or a sequence of chunks. */
export function parseRecording(
  input: string | Uint8Array | Iterable<string | Uint8Array>,
  options: RecordingParserOptions = {},
): ParsedRecording {
  const parser = new RecordingParser(options);
  const frames: Frame[] = [];
  const chunks = typeof input === "string" || input instanceof Uint8Array ? [input] : input;
  for (const chunk of chunks) for (const frame of parser.push(chunk)) frames.push(frame);
  for (const frame of parser.end()) frames.push(frame);
  return { header: parser.header!, frames };
}

export function serializeHeader(header: RecordingHeader): string {
  return JSON.stringify(recordingHeader.parse(header));
}

/** Refuses non-finite numbers: JSON.stringify would silently write them as null. */
export function serializeFrame(frame: Frame): string {
  if (!Number.isInteger(frame.t) || frame.t < 0) {
    throw new RecordingError("invalid_frame", `time ${frame.t} must be a whole, non-negative number of milliseconds`, {
      field: "t",
    });
  }
  for (const name in frame.v) {
    const value = frame.v[name];
    if (typeof value === "number" && !Number.isFinite(value)) {
      throw new RecordingError("not_finite", `${value} is not a finite number`, { channel: name });
    }
  }
  return JSON.stringify({ t: frame.t, v: frame.v });
}

/** The file line by line, each ending in a newline, for streaming writers. */
export function* recordingLines(header: RecordingHeader, frames: Iterable<Frame>): Generator<string> {
  yield `${serializeHeader(header)}\n`;
  for (const frame of frames) yield `${serializeFrame(frame)}\n`;
}

export function writeRecording(header: RecordingHeader, frames: Iterable<Frame>): string {
  let text = "";
  for (const line of recordingLines(header, frames)) text += line;
  return text;
}
