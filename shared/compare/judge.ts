import type { Element } from "../elements/kinds";
import { workSlices, type TurnOptions } from "../turns";
import type { BreakerShows, ElementTimeline, ExpectedTimelines, LampShows } from "../expect/types";
import { AngleTrackJudge } from "./angle";
import { DiscreteTrackJudge, zeroError, type DiscreteRules } from "./discrete";
import { FlashingDetector } from "./lamp-flashing";
import { summarizeLags, type LagSummary } from "./statistics";
import type { ElementStatus, LinkGap, Mismatch, SeenSample, Tolerances } from "./types";

const DEFAULT_TOLERANCES: Tolerances = { degrees: 2, level: 24, period: 0.2, lagBudgetMs: 200 };

/** Tolerances from an element's definition, falling back to the kind's defaults. */
export function tolerancesOf(el: Element | undefined, override: Partial<Tolerances> = {}): Tolerances {
  const t: Tolerances = { ...DEFAULT_TOLERANCES };
  if (el) {
    t.lagBudgetMs = el.lagBudgetMs;
    if (el.kind === "pointer") t.degrees = el.tolerance.degrees;
    if (el.kind === "lamp") {
      t.level = el.tolerance.level;
      t.period = el.tolerance.period;
    }
  }
  return { ...t, ...override };
}

function lampWords(l: LampShows): string {
  if (l.state === "off") return "off";
  if (l.state === "on") return l.level >= 255 ? "on" : `on at ${l.level}/255`;
  return l.periodMs > 0 ? `flashing every ${Math.round(l.periodMs)} ms` : "flashing";
}

function lampRules(tol: Tolerances): DiscreteRules<LampShows> {
  return {
    equal(e, s) {
      if (e.state !== s.state) return false;
      if (e.state === "off") return true;
      if (Math.abs(e.level - (s as { level: number }).level) > tol.level) return false;
      if (e.state === "flashing" && s.state === "flashing" && s.periodMs > 0) return Math.abs(s.periodMs - e.periodMs) <= tol.period * e.periodMs;
      return true;
    },
    error: zeroError,
    describe: lampWords,
  };
}

const textRules: DiscreteRules<string> = { equal: (e, s) => e === s, error: zeroError, describe: (v) => (v === "" ? "blank" : `"${v}"`) };
const breakerRules: DiscreteRules<BreakerShows> = { equal: (e, s) => e === s, error: zeroError, describe: (v) => v };
const positionRules: DiscreteRules<string> = { equal: (e, s) => e === s, error: zeroError, describe: (v) => v };

export interface ElementResult {
  elementId: string;
  label: string;
  kind: string;
  status: ElementStatus;
  mismatches: Mismatch[];
  lag: LagSummary;
  /** Time with no seen data while something was expected, in ms. */
  noDataMs: number;
  reports: number;
}

/**
 * Judges one element, live or offline: feed seen samples and link gaps in time order, call
 * `advance(t)` as time passes (live) and `finish(end)` once. Offline judging is the same calls
 * in one go, so a stored seen log judged again gives what the live run gave.
 */
export class ElementJudge {
  private readonly lamp?: DiscreteTrackJudge<LampShows>;
  private readonly flashing?: FlashingDetector;
  private readonly text?: DiscreteTrackJudge<string>;
  private readonly breaker?: DiscreteTrackJudge<BreakerShows>;
  private readonly position?: DiscreteTrackJudge<string>;
  private readonly angle?: AngleTrackJudge;
  /** The tracks this element has, judged in this order (lamp, text, breaker, position, angle). */
  private readonly tracks: (DiscreteTrackJudge<LampShows> | DiscreteTrackJudge<string> | DiscreteTrackJudge<BreakerShows> | AngleTrackJudge)[];
  private readonly mismatches: Mismatch[] = [];
  private reports = 0;
  private lastSeenT = -Infinity;
  /** Every lag measured (expected change to matching report), once finished. */
  lagSamples: number[] = [];

  constructor(
    private readonly timeline: ElementTimeline,
    private readonly tol: Tolerances,
    startMs: number,
  ) {
    const id = timeline.id;
    const tr = timeline.tracks;
    if (tr.lamp) {
      this.lamp = new DiscreteTrackJudge(id, "lamp", tr.lamp, lampRules(tol), tol.lagBudgetMs, startMs);
      const periods = [...new Set(tr.lamp.flatMap((c) => (c.shows.state === "flashing" ? [c.shows.periodMs] : [])))];
      const lamp = this.lamp;
      this.flashing = new FlashingDetector(periods, tol.period, (t, shows) => lamp.addSeen(t, shows));
    }
    if (tr.text) this.text = new DiscreteTrackJudge(id, "text", tr.text, textRules, tol.lagBudgetMs, startMs);
    if (tr.breaker) this.breaker = new DiscreteTrackJudge(id, "breaker", tr.breaker, breakerRules, tol.lagBudgetMs, startMs);
    if (tr.position) this.position = new DiscreteTrackJudge(id, "position", tr.position, positionRules, tol.lagBudgetMs, startMs);
    if (timeline.angle) this.angle = new AngleTrackJudge(id, timeline.angle, tol.degrees, tol.lagBudgetMs, startMs);
    this.tracks = [this.lamp, this.text, this.breaker, this.position, this.angle].filter((j) => j !== undefined);
  }

  addSeen(sample: SeenSample) {
    if (sample.t < this.lastSeenT) throw new RangeError(`element ${this.timeline.id}: report at ${sample.t} ms came after one at ${this.lastSeenT} ms`);
    this.lastSeenT = sample.t;
    this.reports++;
    const s = sample.shows;
    if (s.track === "lamp" && this.flashing) this.flashing.push(sample.t, s.lamp);
    else if (s.track === "text") this.text?.addSeen(sample.t, s.text);
    else if (s.track === "breaker") this.breaker?.addSeen(sample.t, s.breaker);
    else if (s.track === "position") this.position?.addSeen(sample.t, s.position);
    else if (s.track === "angle") this.angle?.addSeen(sample.t, s.angle);
  }

  addGap(gap: LinkGap) {
    for (const j of [this.lamp, this.text, this.breaker, this.position, this.angle]) j?.addGap(gap);
  }

  advance(t: number) {
    if (this.lamp && this.flashing) {
      this.flashing.release(t);
      this.lamp.advance(this.flashing.settledUntil(t));
    }
    // Called for every element of every link at every frame of a live run: no lists made here.
    const tracks = this.tracks;
    for (let i = 0; i < tracks.length; i++) if (tracks[i] !== this.lamp) tracks[i].advance(t);
    for (let i = 0; i < tracks.length; i++) {
      const settled = tracks[i].take();
      for (let k = 0; k < settled.length; k++) this.mismatches.push(settled[k]);
    }
  }

  /** Failing already at `t` (the last advance) although no mismatch has closed yet: for live display. */
  failingAt(t: number): boolean {
    for (let i = 0; i < this.tracks.length; i++) if (this.tracks[i].failingAt(t)) return true;
    return false;
  }

  /** Mismatches settled so far (for live display), without removing them. */
  get settled(): readonly Mismatch[] {
    return this.mismatches;
  }

  finish(endMs: number, placeholder: boolean): ElementResult {
    this.flashing?.release(Infinity);
    for (const j of [this.lamp, this.text, this.breaker, this.position, this.angle]) if (j) this.mismatches.push(...j.finish(endMs));
    this.mismatches.sort((a, b) => a.startMs - b.startMs || a.track.localeCompare(b.track));
    const lags = [this.lamp, this.text, this.breaker, this.position].flatMap((j) => j?.lags ?? []);
    this.lagSamples = lags;
    const noDataMs = Math.max(0, ...[this.lamp, this.text, this.breaker, this.position, this.angle].map((j) => j?.noDataMs ?? 0));
    return {
      elementId: this.timeline.id,
      label: this.timeline.label,
      kind: this.timeline.kind,
      status: statusOf({
        placeholder,
        judged: [this.lamp, this.text, this.breaker, this.position, this.angle].some(Boolean),
        mismatches: this.mismatches.length,
        reports: this.reports,
        noDataMs,
        lagBudgetMs: this.tol.lagBudgetMs,
        exercised: exercised(this.timeline),
      }),
      mismatches: this.mismatches,
      lag: summarizeLags(lags),
      noDataMs,
      reports: this.reports,
    };
  }
}

/** Whether the recording ever changed what this element should show (otherwise it is untested). */
function exercised(t: ElementTimeline): boolean {
  const tracks = [t.tracks.lamp, t.tracks.text, t.tracks.breaker, t.tracks.position];
  for (const tr of tracks) if (tr && new Set(tr.map((c) => JSON.stringify(c.shows))).size > 1) return true;
  if (t.angle && new Set(t.angle.angle.map((a) => Math.round(a * 10))).size > 1) return true;
  return false;
}

function statusOf(r: { placeholder: boolean; judged: boolean; mismatches: number; reports: number; noDataMs: number; lagBudgetMs: number; exercised: boolean }): ElementStatus {
  if (r.placeholder) return "placeholder";
  // Encoders and plain buttons only take input: the input walk tests them, not the replay.
  if (!r.judged) return "untested";
  if (r.mismatches > 0) return "fail";
  if (r.reports === 0 || r.noDataMs > r.lagBudgetMs) return "no_data";
  if (!r.exercised) return "untested";
  return "pass";
}

interface JudgedElement {
  id: string;
  judge: ElementJudge;
  placeholder: boolean;
  /** How many of the judge's settled mismatches are already in the run's live list. */
  settledSeen: number;
  /** Named by `newlyFailing` already. */
  namedFailing: boolean;
}

const NONE_FAILING: readonly string[] = Object.freeze([]);

export interface RunJudgement {
  elements: ElementResult[];
  mismatches: Mismatch[];
  lag: LagSummary;
  counts: Record<ElementStatus, number>;
}

/**
 * A whole run: one judge per element of the panel(s). Seen samples for unknown elements are
 * counted and ignored (the bench shows the count), never a crash.
 */
export class RunJudge {
  private readonly judges = new Map<string, JudgedElement>();
  /** The same judges as a list: a live run advances all of them at every frame, and a list walks without an iterator. */
  private readonly list: JudgedElement[] = [];
  /** Mismatches settled so far, in the order they settled (append-only: a live reader keeps its place by index). */
  private readonly live: Mismatch[] = [];
  unknownElementReports = 0;

  constructor(
    private readonly timelines: ExpectedTimelines,
    tolerances: (elementId: string) => Tolerances,
  ) {
    for (const tl of timelines.elements) {
      const entry = { id: tl.id, judge: new ElementJudge(tl, tolerances(tl.id), timelines.startMs), placeholder: tl.placeholder, settledSeen: 0, namedFailing: false };
      this.judges.set(tl.id, entry);
      this.list.push(entry);
    }
  }

  addSeen(elementId: string, sample: SeenSample) {
    const j = this.judges.get(elementId);
    if (!j) {
      this.unknownElementReports++;
      return;
    }
    j.judge.addSeen(sample);
  }

  /** A link gap: every element it carries has no data in it. */
  addGap(elementIds: Iterable<string>, gap: LinkGap) {
    for (const id of elementIds) this.judges.get(id)?.judge.addGap(gap);
  }

  /** Called for every frame of a live run: walks a list and makes nothing unless a mismatch settles. */
  advance(t: number) {
    const list = this.list;
    for (let i = 0; i < list.length; i++) {
      const entry = list[i];
      entry.judge.advance(t);
      const settled = entry.judge.settled;
      while (entry.settledSeen < settled.length) this.live.push(settled[entry.settledSeen++]);
    }
  }

  /**
   * Elements whose current mismatch has outlasted the lag budget at `t`, though it has not closed
   * yet, and that no earlier call named: a live view marks each once. Usually none: then one shared
   * empty list.
   */
  newlyFailing(t: number): readonly string[] {
    let out: string[] | null = null;
    const list = this.list;
    for (let i = 0; i < list.length; i++) {
      const entry = list[i];
      if (entry.namedFailing || entry.placeholder || !entry.judge.failingAt(t)) continue;
      entry.namedFailing = true;
      (out ??= []).push(entry.id);
    }
    return out ?? NONE_FAILING;
  }

  /**
   * Every mismatch settled so far, in the order they settled. The list only grows, so a live
   * reader announces `liveMismatches().slice(itsCount)` and never misses or repeats one.
   */
  liveMismatches(): readonly Mismatch[] {
    return this.live;
  }

  finish(endMs = this.timelines.endMs): RunJudgement {
    const judges = [...this.judges.values()];
    const elements = judges.map(({ judge, placeholder }) => judge.finish(endMs, placeholder));
    const counts = { pass: 0, fail: 0, untested: 0, no_data: 0, placeholder: 0 } as Record<ElementStatus, number>;
    for (const e of elements) counts[e.status]++;
    const judged = judges.filter((j) => !j.placeholder);
    return {
      elements,
      mismatches: elements.flatMap((e) => e.mismatches).sort((a, b) => a.startMs - b.startMs),
      lag: summarizeLags(judged.flatMap(({ judge }) => judge.lagSamples)),
      counts,
    };
  }
}

/** Judges a stored seen log in one go (the same code as live). */
export function judgeOffline(
  timelines: ExpectedTimelines,
  seen: Iterable<{ elementId: string; sample: SeenSample }>,
  gaps: { elementIds: string[]; gap: LinkGap }[],
  tolerances: (elementId: string) => Tolerances,
): RunJudgement {
  const judge = new RunJudge(timelines, tolerances);
  for (const g of gaps) judge.addGap(g.elementIds, g.gap);
  for (const s of seen) judge.addSeen(s.elementId, s.sample);
  return judge.finish();
}

/**
 * `judgeOffline` giving the caller a turn whenever `sliceMs` (default 8) of work has gone by, so a
 * server judging an hour-long run (about a second and a half) never holds a live run's replay or
 * other requests for long. Same calls in the same order, so the same judgement.
 */
export async function judgeOfflineInTurns(
  timelines: ExpectedTimelines,
  seen: readonly { elementId: string; sample: SeenSample }[],
  gaps: { elementIds: string[]; gap: LinkGap }[],
  tolerances: (elementId: string) => Tolerances,
  options: TurnOptions = {},
): Promise<RunJudgement> {
  const slices = workSlices(options);
  const judge = new RunJudge(timelines, tolerances);
  for (const g of gaps) judge.addGap(g.elementIds, g.gap);
  for (let i = 0; i < seen.length; i++) {
    judge.addSeen(seen[i].elementId, seen[i].sample);
    // The clock is read every 1,024 reports (a few tens of microseconds of work).
    if ((i & 1023) === 1023 && slices.due()) await slices.take();
  }
  return judge.finish();
}
