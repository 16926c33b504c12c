import type { Element } from "../elements/kinds";
import { elementName } from "../expect/coverage";
import { expectedAt } from "../expect/lookup";
import type { ExpectedTimelines } from "../expect/types";

/**
 * The set-up check (issue 6): before play, every switch, lever and breaker whose reported
 * position differs from where the recording has it at the instant play starts. A panel that
 * starts with its gear lever up while the recording starts down fails the first seconds for a
 * reason that has nothing to do with its build; the console lists these and waits until they
 * agree or the builder overrides. Pure: the bench supplies what the panel last reported.
 */

export type SetupKind = "switch" | "lever" | "breaker";

export interface SetupEntry {
  elementId: string;
  label: string;
  kind: SetupKind;
  /** Where the recording has it at `atMs`. */
  expected: string;
  /** Where the panel says it is; null: it has not said. */
  reported: string | null;
  sentence: string;
}

export interface SetupCheck {
  atMs: number;
  /** Reported and different: these block play. */
  differences: SetupEntry[];
  /** Not reported: listed, never blocking (a board may not sense an input, or not be linked yet). */
  unreported: SetupEntry[];
}

const checked = (el: Element): el is Extract<Element, { kind: SetupKind }> => !el.placeholder && (el.kind === "switch" || el.kind === "lever" || el.kind === "breaker");

/** "GEAR lever is up, the recording starts down" (or "… has not reported; the recording starts down"). */
export function setupSentence(el: Pick<Element, "label" | "kind">, expected: string, reported: string | null): string {
  const name = elementName(el);
  if (reported === null) return `${name} has not reported its position; the recording starts ${expected}`;
  if (reported === expected) return `${name} is ${reported}, as the recording starts`;
  return `${name} is ${reported}, the recording starts ${expected}`;
}

/**
 * Compares each switch, lever and breaker of one panel with the recording at `atMs`.
 * `reported(elementId)` is where the panel last said the element is.
 */
export function setupCheck(elements: readonly Element[], timelines: ExpectedTimelines, atMs: number, reported: (elementId: string) => string | null | undefined): SetupCheck {
  const byId = new Map(timelines.elements.map((tl) => [tl.id, tl]));
  const out: SetupCheck = { atMs, differences: [], unreported: [] };
  for (const el of elements) {
    if (!checked(el)) continue;
    const tl = byId.get(el.id);
    if (!tl) continue;
    const state = expectedAt(tl, atMs);
    const expected = el.kind === "breaker" ? state.breaker : state.position;
    // Nothing expected yet (the recording has no value for it at that instant): nothing to set.
    if (expected === undefined) continue;
    const seen = reported(el.id) ?? null;
    const entry: SetupEntry = { elementId: el.id, label: el.label, kind: el.kind, expected, reported: seen, sentence: setupSentence(el, expected, seen) };
    if (seen === null) out.unreported.push(entry);
    else if (seen !== expected) out.differences.push(entry);
  }
  return out;
}
