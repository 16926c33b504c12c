import type { ElementKind } from "../../../shared/elements/kinds";

/** How the panel screens name each element kind, and each kind's default lag budget (docs/panel-format.md). */
export const KIND_WORDS: Record<ElementKind, { one: string; many: string; lag: number; what: string }> = {
  lamp: { one: "Lamp", many: "Lamps", lag: 150, what: "an indicator or annunciator lamp, a caution latch" },
  pointer: { one: "Pointer", many: "Pointers", lag: 300, what: "one needle of a gauge; two needles on one dial are two pointers" },
  readout: { one: "Readout", many: "Readouts", lag: 250, what: "seven-segment digits or a small text display" },
  breaker: { one: "Breaker", many: "Breakers", lag: 200, what: "a circuit breaker: in, pulled or tripped" },
  switch: { one: "Switch", many: "Switches", lag: 200, what: "two or more named positions, maybe spring-loaded" },
  button: { one: "Button", many: "Buttons", lag: 150, what: "a push button, maybe lit from within" },
  encoder: { one: "Encoder", many: "Encoders", lag: 200, what: "a knob turned in detents" },
  lever: { one: "Lever", many: "Levers", lag: 250, what: "positions, maybe locked" },
};

/** "3 lamps, 1 pointer": counts per kind in words, kinds with none left out. */
export function kindSummary(kinds: Partial<Record<ElementKind, number>>): string {
  const parts = (Object.keys(KIND_WORDS) as ElementKind[])
    .filter((k) => (kinds[k] ?? 0) > 0)
    .map((k) => `${kinds[k]} ${(kinds[k] === 1 ? KIND_WORDS[k].one : KIND_WORDS[k].many).toLowerCase()}`);
  return parts.length ? parts.join(", ") : "no elements";
}
