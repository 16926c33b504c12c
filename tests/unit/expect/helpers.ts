import type { ElementInput } from "../../../shared/elements/kinds";
import { panel, type Panel } from "../../../shared/panel/schema";

export function panelOf(...elements: ElementInput[]): Panel {
  return panel.parse({ id: "test-panel", name: "Test panel", airframe: "test-airframe", elements });
}

/** A linear sweep pointer: value 0..100 -> 0..300 degrees (3 degrees per unit). */
export function linearPointer(extra: Partial<ElementInput> = {}): ElementInput {
  return {
    kind: "pointer",
    id: "needle",
    label: "test pointer",
    value: { channel: "v" },
    scale: { kind: "sweep", points: [{ value: 0, angle: 0 }, { value: 100, angle: 300 }] },
    ...extra,
  } as ElementInput;
}
