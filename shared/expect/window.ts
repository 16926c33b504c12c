import { lastAtOrBefore, valueAt } from "./lookup";
import type { AngleTrack, Change, DiscreteTracks, ElementTimeline, ExpectedTimelines } from "./types";

/**
 * The timelines as a run judged them: only what was expected from `fromMs` to `toMs` (a run of a
 * segment, or one stopped part way). Each discrete track starts with the value in effect at
 * `fromMs` and keeps the changes after it and before `toMs`; a pointer's track starts and ends
 * with its angle at the window's edges. Coverage read from these says what the run tested, not
 * what the whole recording holds (docs/run-report.md, "Coverage").
 */
export function timelinesWithin(timelines: ExpectedTimelines, fromMs: number, toMs: number): ExpectedTimelines {
  const to = Math.max(fromMs, toMs);
  if (fromMs <= timelines.startMs && to >= timelines.endMs) return timelines;
  return { ...timelines, startMs: fromMs, endMs: to, elements: timelines.elements.map((e) => elementWithin(e, fromMs, to)) };
}

export function elementWithin(timeline: ElementTimeline, fromMs: number, toMs: number): ElementTimeline {
  const tracks: DiscreteTracks = {};
  for (const name of Object.keys(timeline.tracks) as (keyof DiscreteTracks)[]) {
    const changes = timeline.tracks[name];
    if (changes) (tracks as Record<string, Change<unknown>[]>)[name] = changesWithin(changes as Change<unknown>[], fromMs, toMs);
  }
  const out: ElementTimeline = { ...timeline, tracks };
  if (timeline.angle) out.angle = angleWithin(timeline.angle, fromMs, toMs);
  return out;
}

function changesWithin<V>(changes: readonly Change<V>[], fromMs: number, toMs: number): Change<V>[] {
  const out: Change<V>[] = [];
  const first = valueAt(changes, fromMs);
  if (first !== undefined) out.push({ t: fromMs, shows: first });
  for (const c of changes) if (c.t > fromMs && c.t < toMs) out.push(c);
  return out;
}

/** The travel angle at `t` (turns kept for full-circle pointers), the later point at a jump. */
function travelAt(track: AngleTrack, t: number): number | undefined {
  const i = lastAtOrBefore(track.t, t);
  if (i < 0) return undefined;
  if (i + 1 < track.t.length && track.t[i + 1] > track.t[i]) {
    const fraction = (t - track.t[i]) / (track.t[i + 1] - track.t[i]);
    return track.angle[i] + fraction * (track.angle[i + 1] - track.angle[i]);
  }
  return track.angle[i];
}

function angleWithin(track: AngleTrack, fromMs: number, toMs: number): AngleTrack {
  const t: number[] = [];
  const angle: number[] = [];
  const start = travelAt(track, fromMs);
  if (start !== undefined) {
    t.push(fromMs);
    angle.push(start);
  }
  for (let i = lastAtOrBefore(track.t, fromMs) + 1; i < track.t.length && track.t[i] < toMs; i++) {
    t.push(track.t[i]);
    angle.push(track.angle[i]);
  }
  const end = travelAt(track, toMs);
  if (end !== undefined && toMs > fromMs) {
    t.push(toMs);
    angle.push(end);
  }
  return { t, angle, wrap: track.wrap };
}
