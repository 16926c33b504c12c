import type { Transform } from "../elements/bindings";
import type { AngleComputer } from "../elements/scale/scale";
import type { ChannelColumn } from "./columns";
import type { SlewFollower } from "./slew";

/** A pointer's per-sample state as the fused loop reads and writes it (engine.ts PointerState). */
export interface PointerLoopState {
  following: boolean;
  lastSampleT: number;
  hasTarget: boolean;
  target: number;
  turnOffset: number;
  readonly follower: SlewFollower;
  readonly angles: AngleComputer;
  readonly transform: Transform | undefined;
  readonly rampGap: number;
}

/** Points one sample can add: the slew loop's at most four corners, and a jump's far end. */
const pointTimes = new Float64Array(8);
const pointAngles = new Float64Array(8);

/**
 * The fast path's pointer loop over a run of one column's samples: the transform, the scale
 * (AngleComputer.compute), the slew follower (SlewFollower.feedIn and play) and the track's
 * swinging door (LinearTrackBuilder.pushIn) fused into one function whose state lives in local
 * variables for the whole run and is written back at its end. Locals stay unboxed in registers;
 * the same state in object fields costs two dependent memory reads or writes per access, and the
 * per-sample path makes about forty. Same arithmetic in the same order as those methods, so the
 * same bits: tests/unit/expect/fast-path.test.ts compares the engines' output byte for byte.
 *
 * Power changes come from another channel, so `following` and `turnOffset` hold for the run.
 */
export function runPointerSamples(s: PointerLoopState, column: ChannelColumn, from: number, to: number): void {
  const { times, numbers, isOther } = column;
  const transform = s.transform;
  const hasTransform = transform !== undefined;
  const transformScale = hasTransform ? transform.scale : 1;
  const transformOffset = hasTransform ? transform.offset : 0;
  const hasMin = hasTransform && transform.min !== undefined;
  const hasMax = hasTransform && transform.max !== undefined;
  const min = hasMin ? (transform.min as number) : 0;
  const max = hasMax ? (transform.max as number) : 0;

  const scale = s.angles;
  const full = scale.full;
  const xs = scale.values;
  const ys = scale.angles;
  const tangents = scale.tangents;
  const last = xs.length - 1;
  const angleAtZero = scale.angleAtZero;
  const sign = scale.sign;
  const period = scale.period;

  const following = s.following;
  const turnOffset = s.turnOffset;
  const rampGap = s.rampGap;
  let lastSampleT = s.lastSampleT;
  let hasTarget = s.hasTarget;
  let pointerTarget = s.target;

  const follower = s.follower;
  const rate = follower.rate;
  let followerTime = follower.time;
  let position = follower.position;
  let followerTarget = follower.target;

  const line = follower.out;
  const epsilon = line.epsilon;
  let anchorT = line.anchorT;
  let anchorA = line.anchorA;
  let hasAnchor = line.hasAnchor;
  let pendingT = line.pendingT;
  let pendingA = line.pendingA;
  let hasPending = line.hasPending;
  let slopeMin = line.slopeMin;
  let slopeMax = line.slopeMax;
  // LinearTrackBuilder.append inlined: a call the compiler does not inline boxes both doubles
  // (about 30 MB an hour for 40 pointers), so kept points are stored here, room made per sample.
  let keptTimes = line.times;
  let keptAngles = line.angles;
  let capacity = line.capacity;
  let kept = line.count;

  for (let i = from; i < to; i++) {
    if (isOther[i] !== 0) continue;
    const t = times[i];
    let value = numbers[i];
    if (hasTransform) {
      // applyTransform
      value = value * transformScale + transformOffset;
      if (hasMin && value < min) value = min;
      if (hasMax && value > max) value = max;
    }

    // AngleComputer.compute
    let angle: number;
    if (full) angle = angleAtZero + (sign * 360 * value) / period;
    else if (value < xs[0]) angle = ys[0];
    else if (value > xs[last]) angle = ys[last];
    else {
      let k = 0;
      let high = xs.length - 2;
      while (k < high) {
        const middle = (k + high + 1) >> 1;
        if (xs[middle] <= value) k = middle;
        else high = middle - 1;
      }
      if (tangents === null) {
        const fraction = (value - xs[k]) / (xs[k + 1] - xs[k]);
        angle = ys[k] + fraction * (ys[k + 1] - ys[k]);
      } else {
        const width = xs[k + 1] - xs[k];
        const u = (value - xs[k]) / width;
        const u2 = u * u;
        const u3 = u2 * u;
        const y0 = ys[k];
        const y1 = ys[k + 1];
        const y = (2 * u3 - 3 * u2 + 1) * y0 + (u3 - 2 * u2 + u) * width * tangents[k] + (-2 * u3 + 3 * u2) * y1 + (u3 - u2) * width * tangents[k + 1];
        const low = y0 < y1 ? y0 : y1;
        const top = y0 < y1 ? y1 : y0;
        angle = y < low ? low : y > top ? top : y;
      }
    }

    // PointerState.sampleIn
    const ramp = following && hasTarget && t - lastSampleT <= rampGap;
    pointerTarget = angle;
    hasTarget = true;
    lastSampleT = t;
    if (!following) continue;

    // SlewFollower.feedIn, collecting the points it pushes.
    const goal = angle + turnOffset;
    if (t < followerTime) continue;
    let points = 0;
    const ramping = ramp && t > followerTime;
    const lineFrom = followerTarget;
    const lineTo = ramping ? goal : followerTarget;
    // SlewFollower.play
    const start = followerTime;
    const duration = t - start;
    if (duration > 0) {
      const slope = (lineTo - lineFrom) / duration;
      let at = start;
      let p = position;
      for (let guard = 0; guard < 4 && at < t; guard++) {
        const targetNow = lineFrom + slope * (at - start);
        const error = targetNow - p;
        if (error === 0 || rate === Infinity) {
          if (rate === Infinity || Math.abs(slope) <= rate) p = lineTo;
          else p += Math.sign(slope) * rate * (t - at);
          pointTimes[points] = t;
          pointAngles[points++] = p;
          at = t;
          break;
        }
        const direction = error > 0 ? 1 : -1;
        const closing = rate - direction * slope;
        if (closing > 0) {
          const catchAfter = Math.abs(error) / closing;
          if (at + catchAfter <= at) {
            p = targetNow;
            continue;
          }
          if (at + catchAfter < t) {
            at += catchAfter;
            p = lineFrom + slope * (at - start);
            pointTimes[points] = at;
            pointAngles[points++] = p;
            continue;
          }
        }
        p += direction * rate * (t - at);
        pointTimes[points] = t;
        pointAngles[points++] = p;
        at = t;
      }
      followerTime = t;
      position = p;
    }
    if (!ramping && rate === Infinity && position !== goal) {
      position = goal;
      pointTimes[points] = t;
      pointAngles[points++] = goal;
    }
    followerTarget = goal;

    // LinearTrackBuilder.pushIn for each point; "keep" is append plus a new anchor. A point keeps
    // at most two (a corner and a jump's far end).
    if (points > 0 && kept + 2 * points > capacity) {
      line.count = kept;
      line.ensureRoom(2 * points);
      keptTimes = line.times;
      keptAngles = line.angles;
      capacity = line.capacity;
    }
    for (let j = 0; j < points; j++) {
      const pt = pointTimes[j];
      const pa = pointAngles[j];
      if (!hasAnchor) {
        keptTimes[kept] = pt;
        keptAngles[kept++] = pa;
        anchorT = pt;
        anchorA = pa;
        hasAnchor = true;
        hasPending = false;
        slopeMin = -Infinity;
        slopeMax = Infinity;
        continue;
      }
      if (!hasPending) {
        if (pt === anchorT) {
          if (pa !== anchorA) {
            keptTimes[kept] = pt;
            keptAngles[kept++] = pa;
            anchorT = pt;
            anchorA = pa;
            slopeMin = -Infinity;
            slopeMax = Infinity;
          }
          continue;
        }
        pendingT = pt;
        pendingA = pa;
        hasPending = true;
        continue;
      }
      if (pt === pendingT) {
        if (pa === pendingA) continue;
        keptTimes[kept] = pendingT;
        keptAngles[kept++] = pendingA;
        keptTimes[kept] = pt;
        keptAngles[kept++] = pa;
        anchorT = pt;
        anchorA = pa;
        hasPending = false;
        slopeMin = -Infinity;
        slopeMax = Infinity;
        continue;
      }
      const dtPending = pendingT - anchorT;
      const hi = (pendingA + epsilon - anchorA) / dtPending;
      const lo = (pendingA - epsilon - anchorA) / dtPending;
      const nextMax = hi < slopeMax ? hi : slopeMax;
      const nextMin = lo > slopeMin ? lo : slopeMin;
      const slope = (pa - anchorA) / (pt - anchorT);
      if (slope >= nextMin && slope <= nextMax) {
        slopeMax = nextMax;
        slopeMin = nextMin;
        pendingT = pt;
        pendingA = pa;
        continue;
      }
      keptTimes[kept] = pendingT;
      keptAngles[kept++] = pendingA;
      anchorT = pendingT;
      anchorA = pendingA;
      slopeMin = -Infinity;
      slopeMax = Infinity;
      pendingT = pt;
      pendingA = pa;
      hasPending = true;
    }
  }

  s.lastSampleT = lastSampleT;
  s.hasTarget = hasTarget;
  s.target = pointerTarget;
  follower.time = followerTime;
  follower.position = position;
  follower.target = followerTarget;
  line.count = kept;
  line.anchorT = anchorT;
  line.anchorA = anchorA;
  line.hasAnchor = hasAnchor;
  line.pendingT = pendingT;
  line.pendingA = pendingA;
  line.hasPending = hasPending;
  line.slopeMin = slopeMin;
  line.slopeMax = slopeMax;
}
