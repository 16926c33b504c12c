import { normalizeAngle } from "../elements/scale/scale";
import type { AngleTrack, Change, DiscreteTracks, ElementTimeline, ExpectedState } from "./types";

/** The value of a piecewise constant track at `t`: the last change at or before `t`. */
export function valueAt<V>(changes: readonly Change<V>[], t: number): V | undefined {
  let lo = 0;
  let hi = changes.length - 1;
  let found = -1;
  while (lo <= hi) {
    const mid = (lo + hi) >> 1;
    if (changes[mid].t <= t) {
      found = mid;
      lo = mid + 1;
    } else hi = mid - 1;
  }
  return found < 0 ? undefined : changes[found].shows;
}

/** Index of the last of `times` (ascending) at or before `t`, or -1 when all are later. */
export function lastAtOrBefore(times: ArrayLike<number>, t: number): number {
  let lo = 0;
  let hi = times.length - 1;
  let found = -1;
  while (lo <= hi) {
    const mid = (lo + hi) >> 1;
    if (times[mid] <= t) {
      found = mid;
      lo = mid + 1;
    } else hi = mid - 1;
  }
  return found;
}

/**
 * A pointer's angle at `t`, read linearly between the track's points. At a jump (two points at one
 * instant) the later point counts. Before the first point: undefined; after the last: its angle.
 */
export function angleAt(track: AngleTrack, t: number): number | undefined {
  const times = track.t;
  const found = lastAtOrBefore(times, t);
  if (found < 0) return undefined;
  let angle = track.angle[found];
  if (found + 1 < times.length && times[found + 1] > times[found]) {
    const fraction = (t - times[found]) / (times[found + 1] - times[found]);
    angle = angle + fraction * (track.angle[found + 1] - angle);
  }
  return track.wrap ? normalizeAngle(angle) : angle;
}

/** Everything an element should show at `t`. */
export function expectedAt(timeline: ElementTimeline, t: number): ExpectedState {
  const out: ExpectedState = {};
  for (const name of Object.keys(timeline.tracks) as (keyof DiscreteTracks)[]) {
    const changes = timeline.tracks[name];
    if (!changes) continue;
    const value = valueAt(changes as Change<unknown>[], t);
    if (value !== undefined) (out as Record<string, unknown>)[name] = value;
  }
  if (timeline.angle) {
    const angle = angleAt(timeline.angle, t);
    if (angle !== undefined) out.angle = angle;
  }
  return out;
}
