import type { Element } from "../elements/kinds";
import { elementName } from "../expect/coverage";
import { expectedAt } from "../expect/lookup";
import type { ElementTimeline, ExpectedState, ExpectedTimelines, LampShows } from "../expect/types";
import type { RunJudgement } from "./judge";
import type { ElementStatus, JudgedTrack, Mismatch } from "./types";

/**
 * Observation mode (issue 6), for elements a board cannot sense (a burnt bulb, a slipped
 * needle): at checkpoints chosen from the expected timeline the player pauses and the console
 * asks the builder what the element shows; the answers join the element's results
 * (docs/judging.md, "Observations").
 */

/** At most this many checkpoints per observed element, and per run: a builder answers them by hand. */
export const MAX_CHECKPOINTS_PER_ELEMENT = 8;
export const MAX_CHECKPOINTS_PER_RUN = 30;
/** A pointer change smaller than this is not worth asking about. */
const POINTER_STEP_DEGREES = 5;
/** Asked this long after the element's lag budget has passed, so a healthy panel has followed. */
const ASK_MARGIN_MS = 100;

export type ObservationAnswer = "yes" | "no" | "skip";

export interface CheckpointPlan {
  /** Stable across recomputation: panel, element and the instant of the change. */
  id: string;
  panelId: string;
  elementId: string;
  label: string;
  atMs: number;
  question: string;
  expected: string;
}

export interface AnsweredCheckpoint {
  panelId: string;
  elementId: string;
  atMs: number;
  expected: string;
  answer: ObservationAnswer | null;
}

function lampWords(l: LampShows): string {
  if (l.state === "off") return "off";
  if (l.state === "flashing") return "flashing";
  return l.level >= 255 ? "on" : `on at ${l.level}/255`;
}

/** The question and the expected words for what `el` should show in `state`; null when there is nothing to ask. */
export function observationQuestion(el: Element, state: ExpectedState): { question: string; expected: string } | null {
  const name = elementName(el);
  if ((el.kind === "lamp" || el.kind === "button") && state.lamp) {
    const l = state.lamp;
    const q = l.state === "off" ? "dark" : l.state === "flashing" ? "flashing" : l.level >= 255 ? "lit" : `lit at about ${Math.round((l.level / 255) * 100)}% brightness`;
    return { question: `Is the ${name} ${q} now?`, expected: lampWords(l) };
  }
  if (el.kind === "readout" && state.text !== undefined) {
    return state.text.trim() === "" ? { question: `Is the ${name} blank now?`, expected: "blank" } : { question: `Does the ${name} show "${state.text}" now?`, expected: `"${state.text}"` };
  }
  if (el.kind === "pointer" && state.angle !== undefined) {
    const deg = Math.round(state.angle);
    return { question: `Does the ${name} stand at ${deg}° on its dial now (0° is the scale's zero mark, clockwise)?`, expected: `${deg}°` };
  }
  if (el.kind === "breaker" && state.breaker) return { question: `Is the ${name} ${state.breaker === "in" ? "pushed in" : state.breaker} now?`, expected: state.breaker };
  if ((el.kind === "switch" || el.kind === "lever") && state.position !== undefined) return { question: `Is the ${name} at ${state.position} now?`, expected: state.position };
  return null;
}

/** The instants an element's expected state changes (after `fromMs`, before `endMs`). */
function changesOf(el: Element, tl: ElementTimeline, fromMs: number, endMs: number): number[] {
  const inside = (t: number) => t > fromMs && t < endMs;
  const discrete = el.kind === "readout" ? tl.tracks.text : el.kind === "breaker" ? tl.tracks.breaker : el.kind === "switch" || el.kind === "lever" ? tl.tracks.position : el.kind === "lamp" || el.kind === "button" ? tl.tracks.lamp : undefined;
  if (discrete) return discrete.filter((c) => inside(c.t)).map((c) => c.t);
  if (el.kind !== "pointer" || !tl.angle) return [];
  // A needle: where it comes to rest after moving at least a few degrees since the last one asked.
  const out: number[] = [];
  const { t, angle } = tl.angle;
  let last = angle[0];
  for (let i = 1; i < t.length; i++) {
    const resting = i === t.length - 1 || angle[i + 1] === angle[i] || t[i + 1] === t[i];
    if (resting && Math.abs(angle[i] - last) >= POINTER_STEP_DEGREES && inside(t[i])) {
      out.push(t[i]);
      last = angle[i];
    }
  }
  return out;
}

/** Up to `n` items spread evenly over the list, keeping its first and last. */
function spread<T>(list: readonly T[], n: number): T[] {
  if (list.length <= n) return [...list];
  if (n <= 1) return list.slice(0, n);
  return Array.from({ length: n }, (_, i) => list[Math.round((i * (list.length - 1)) / (n - 1))]);
}

/**
 * Checkpoints for the observed elements: each change of what the element should show, asked
 * once its lag budget has passed, at most MAX_CHECKPOINTS_PER_ELEMENT per element and
 * MAX_CHECKPOINTS_PER_RUN in all (spread evenly over time when there are more), in time order.
 */
export function observationCheckpoints(
  panels: readonly { panelId: string; elements: readonly Element[]; timelines: ExpectedTimelines }[],
  observed: readonly { panelId: string; elementId: string }[],
  window: { fromMs: number; endMs: number },
): CheckpointPlan[] {
  const all: CheckpointPlan[] = [];
  for (const target of observed) {
    const p = panels.find((x) => x.panelId === target.panelId);
    const el = p?.elements.find((e) => e.id === target.elementId);
    const tl = p?.timelines.elements.find((x) => x.id === target.elementId);
    if (!p || !el || !tl || el.placeholder) continue;
    const mine: CheckpointPlan[] = [];
    for (const changeT of changesOf(el, tl, window.fromMs, window.endMs)) {
      const atMs = Math.round(changeT + el.lagBudgetMs + ASK_MARGIN_MS);
      if (atMs >= window.endMs) continue;
      const asked = observationQuestion(el, expectedAt(tl, atMs));
      if (!asked) continue;
      // The same question twice in a row (a change the eye cannot see, like a level step) is asked once.
      if (mine.length && mine[mine.length - 1].expected === asked.expected) continue;
      mine.push({ id: `${p.panelId}:${el.id}:${Math.round(changeT)}`, panelId: p.panelId, elementId: el.id, label: el.label, atMs, ...asked });
    }
    all.push(...spread(mine, MAX_CHECKPOINTS_PER_ELEMENT));
  }
  all.sort((a, b) => a.atMs - b.atMs || a.id.localeCompare(b.id));
  return spread(all, MAX_CHECKPOINTS_PER_RUN);
}

const TRACK_OF: Record<Element["kind"], JudgedTrack> = {
  lamp: "lamp",
  button: "lamp",
  pointer: "angle",
  readout: "text",
  breaker: "breaker",
  switch: "position",
  lever: "position",
  encoder: "position",
};

/**
 * Joins the builder's answers to one panel's judgement:
 * - a "no" is a mismatch of kind `observed` at the checkpoint (an instant: start = end) and the element fails;
 * - otherwise at least one "yes" makes an element without link data (`no_data`) or `untested` pass,
 *   and leaves a link verdict of pass or fail as it is;
 * - an observed element with no answer (all skipped or never reached) and no link data is `untested`:
 *   nothing was confirmed, and a board that cannot sense it was never expected to report.
 */
export function applyObservations(
  judgement: RunJudgement,
  panelId: string,
  elements: readonly Element[],
  observed: readonly { panelId: string; elementId: string }[],
  checkpoints: readonly AnsweredCheckpoint[],
): RunJudgement {
  const watched = new Set(observed.filter((o) => o.panelId === panelId).map((o) => o.elementId));
  const mine = checkpoints.filter((c) => c.panelId === panelId);
  if (watched.size === 0 && mine.length === 0) return judgement;
  const added: Mismatch[] = [];
  const results = judgement.elements.map((r) => {
    const el = elements.find((e) => e.id === r.elementId);
    if (!el || r.status === "placeholder") return r;
    const answers = mine.filter((c) => c.elementId === r.elementId && c.answer !== null);
    const no = answers.filter((c) => c.answer === "no");
    const yes = answers.some((c) => c.answer === "yes");
    const extra: Mismatch[] = no.map((c) => ({
      elementId: r.elementId,
      track: TRACK_OF[el.kind],
      kind: "observed",
      startMs: c.atMs,
      endMs: c.atMs,
      worstError: 0,
      expected: c.expected,
      seen: "not so, by the builder's eye",
      atMs: c.atMs,
    }));
    added.push(...extra);
    let status: ElementStatus = r.status;
    if (no.length > 0) status = "fail";
    else if (yes && (r.status === "no_data" || r.status === "untested")) status = "pass";
    else if (!yes && watched.has(r.elementId) && r.status === "no_data" && r.reports === 0) status = "untested";
    if (status === r.status && extra.length === 0) return r;
    return { ...r, status, mismatches: [...r.mismatches, ...extra].sort((a, b) => a.startMs - b.startMs) };
  });
  const counts = { pass: 0, fail: 0, untested: 0, no_data: 0, placeholder: 0 } as Record<ElementStatus, number>;
  for (const e of results) counts[e.status]++;
  return { ...judgement, elements: results, counts, mismatches: [...judgement.mismatches, ...added].sort((a, b) => a.startMs - b.startMs) };
}
