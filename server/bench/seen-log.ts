import { promisify } from "node:util";
import { deflateRaw } from "node:zlib";
import { deflateSync, inflateSync, strFromU8, strToU8 } from "fflate";
import type { SeenSample, SeenShows } from "../../shared/compare/types";

/**
 * The raw seen log, compactly: one chunk holds a few seconds of one panel's reports as rows
 * [t, element, what, value] with the element ids listed once, JSON-encoded and deflated.
 * Storing reports (not mismatches) is what lets a run be judged again with other tolerances.
 */
export interface SeenRecord {
  elementId: string;
  sample: SeenSample;
}

const LAMP = ["off", "on", "flashing"] as const;

type Row = [number, number, 0, number, number, number] | [number, number, 1, number] | [number, number, 2 | 3 | 4, string];

function rowOf(t: number, e: number, s: SeenShows): Row {
  switch (s.track) {
    case "lamp":
      return [t, e, 0, LAMP.indexOf(s.lamp.state), s.lamp.state === "off" ? 0 : s.lamp.level, s.lamp.state === "flashing" ? s.lamp.periodMs : 0];
    case "angle":
      return [t, e, 1, Math.round(s.angle * 1000) / 1000];
    case "text":
      return [t, e, 2, s.text];
    case "breaker":
      return [t, e, 3, s.breaker];
    case "position":
      return [t, e, 4, s.position];
  }
}

function showsOf(row: Row): SeenShows {
  switch (row[2]) {
    case 0: {
      const [, , , state, level, periodMs] = row as [number, number, 0, number, number, number];
      const name = LAMP[state] ?? "off";
      return { track: "lamp", lamp: name === "off" ? { state: "off" } : name === "on" ? { state: "on", level } : { state: "flashing", level, periodMs } };
    }
    case 1:
      return { track: "angle", angle: row[3] as number };
    case 2:
      return { track: "text", text: row[3] as string };
    case 3:
      return { track: "breaker", breaker: row[3] as "in" | "pulled" | "tripped" };
    default:
      return { track: "position", position: row[3] as string };
  }
}

/**
 * A chunk's JSON built as reports arrive: each report becomes its row's text when it is added,
 * so closing a chunk only joins text. Turning a whole chunk into rows at once took 6 to 10 ms
 * for 4,800 reports, inside a run's event loop, for every panel at the same moment.
 */
export class SeenChunkBuilder {
  private readonly ids: string[] = [];
  private readonly at = new Map<string, number>();
  private rows = "";
  count = 0;
  fromMs = 0;
  toMs = 0;

  add(elementId: string, sample: SeenSample) {
    let e = this.at.get(elementId);
    if (e === undefined) {
      e = this.ids.length;
      this.ids.push(elementId);
      this.at.set(elementId, e);
    }
    const row = JSON.stringify(rowOf(sample.t, e, sample.shows));
    this.rows = this.count === 0 ? row : `${this.rows},${row}`;
    if (this.count === 0) this.fromMs = sample.t;
    this.toMs = sample.t;
    this.count++;
  }

  /** The chunk as JSON text, the same as JSON.stringify of `{ v, e, s }`. */
  json(): string {
    return `{"v":1,"e":${JSON.stringify(this.ids)},"s":[${this.rows}]}`;
  }
}

export function encodeSeenChunk(records: readonly SeenRecord[]): Buffer {
  const builder = new SeenChunkBuilder();
  for (const r of records) builder.add(r.elementId, r.sample);
  return Buffer.from(deflateSync(strToU8(builder.json()), { level: 6 }));
}

const deflateRawAsync = promisify(deflateRaw);

/**
 * The same chunk deflated on Node's thread pool (raw DEFLATE, as fflate's, which reads it back),
 * so a run's event loop only joins the text.
 */
export function deflateSeenChunk(builder: SeenChunkBuilder): Promise<Buffer> {
  return deflateRawAsync(builder.json(), { level: 6 });
}

export function decodeSeenChunk(payload: Uint8Array): SeenRecord[] {
  const doc = JSON.parse(strFromU8(inflateSync(payload))) as { v: number; e: string[]; s: Row[] };
  return doc.s.map((row) => ({ elementId: doc.e[row[1]], sample: { t: row[0], shows: showsOf(row) } }));
}

/**
 * A panel's seen log put back together from its chunks: reports a later pass replaced are left
 * out (a chunk of an earlier epoch keeps only what came before the first later cut), and the rest
 * is in time order. One pass is stamped in arrival order, already in time order, so the usual
 * case needs no sort; when the chunks do overlap the sort is stable (reports of one element keep
 * their order).
 */
export class SeenLogMerger {
  private readonly out: SeenRecord[] = [];
  private inOrder = true;
  private lastT = -Infinity;

  constructor(private readonly cuts: readonly { epoch: number; atMs: number }[]) {}

  add(epoch: number, records: Iterable<SeenRecord>): void {
    let limit = Infinity;
    for (const cut of this.cuts) if (cut.epoch > epoch && cut.atMs < limit) limit = cut.atMs;
    for (const r of records) {
      if (r.sample.t >= limit) continue;
      if (r.sample.t < this.lastT) this.inOrder = false;
      this.lastT = r.sample.t;
      this.out.push(r);
    }
  }

  result(): SeenRecord[] {
    return this.inOrder ? this.out : this.out.sort((a, b) => a.sample.t - b.sample.t);
  }
}
