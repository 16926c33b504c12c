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

export function encodeSeenChunk(records: readonly SeenRecord[]): Buffer {
  const ids: string[] = [];
  const at = new Map<string, number>();
  const rows: Row[] = [];
  for (const r of records) {
    let e = at.get(r.elementId);
    if (e === undefined) {
      e = ids.length;
      ids.push(r.elementId);
      at.set(r.elementId, e);
    }
    rows.push(rowOf(r.sample.t, e, r.sample.shows));
  }
  return Buffer.from(deflateSync(strToU8(JSON.stringify({ v: 1, e: ids, s: rows })), { level: 6 }));
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
