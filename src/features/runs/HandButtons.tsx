import { useRef } from "react";
import type { Element } from "../../../shared/elements/kinds";

export type ButtonElement = Extract<Element, { kind: "button" }>;

/**
 * A virtual panel's push buttons under the builder's hand: held down while the pointer (or Space
 * or Enter) is down, let go when it comes up, and the link says both, as a board does on a key's
 * edges (the input walk waits for "pressed").
 */
export function HandButtons({ buttons, onPress, disabled = false }: { buttons: readonly ButtonElement[]; onPress: (el: ButtonElement, pressed: boolean) => void; disabled?: boolean }) {
  if (buttons.length === 0) return null;
  return (
    <div className="flex flex-wrap items-center gap-2" role="group" aria-label="Push buttons by hand">
      <span className="text-xs font-semibold text-ink-soft">Press by hand (held while the pointer is down):</span>
      {buttons.map((el) => (
        <PressButton key={el.id} el={el} onPress={onPress} disabled={disabled} />
      ))}
    </div>
  );
}

function PressButton({ el, onPress, disabled }: { el: ButtonElement; onPress: (el: ButtonElement, pressed: boolean) => void; disabled: boolean }) {
  const down = useRef(false);
  const press = () => {
    if (down.current) return;
    down.current = true;
    onPress(el, true);
  };
  const release = () => {
    if (!down.current) return;
    down.current = false;
    onPress(el, false);
  };
  const key = (e: React.KeyboardEvent) => e.key === " " || e.key === "Enter";
  return (
    <button
      type="button"
      disabled={disabled}
      aria-label={`Press ${el.label}`}
      data-testid={`press-${el.id}`}
      onPointerDown={press}
      onPointerUp={release}
      onPointerLeave={release}
      onBlur={release}
      onKeyDown={(e) => {
        if (key(e) && !e.repeat) {
          e.preventDefault();
          press();
        }
      }}
      onKeyUp={(e) => {
        if (key(e)) release();
      }}
      className="rounded-md border border-rule bg-card px-3 py-1.5 text-xs font-semibold active:translate-y-px active:bg-paper"
    >
      ◉ {el.label}
    </button>
  );
}
