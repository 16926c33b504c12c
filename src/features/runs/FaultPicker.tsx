import { useState } from "react";
import type { Element } from "../../../shared/elements/kinds";
import { faultFits, type Fault } from "../../../shared/virtual/faults";
import { Button, Field, Select } from "../../components/ui";
import { FAULT_WORDS } from "./words";

type FaultKind = Fault["kind"];

/** The numbers each fault kind asks for, with a default; booleans and choices are handled apart. */
const FAULT_NUMBERS: Record<FaultKind, { key: string; label: string; value: number }[]> = {
  lamp_stuck: [],
  lamp_inverted: [],
  pointer_offset: [{ key: "degrees", label: "Degrees", value: 15 }],
  pointer_scale: [{ key: "factor", label: "Factor", value: 1.2 }],
  pointer_slow: [{ key: "degPerSec", label: "Degrees per second", value: 20 }],
  missed_steps: [
    { key: "everyMs", label: "Every (ms)", value: 2000 },
    { key: "degrees", label: "Degrees", value: 2 },
  ],
  digit_dropped: [{ key: "position", label: "Digit (0 = leftmost)", value: 0 }],
  breaker_stuck: [],
  added_lag: [{ key: "ms", label: "Lag (ms)", value: 800 }],
  disconnect: [
    { key: "fromMs", label: "From (ms)", value: 5000 },
    { key: "toMs", label: "To (ms)", value: 10000 },
  ],
};
const FAULT_KINDS = Object.keys(FAULT_NUMBERS) as FaultKind[];

export function faultWords(f: Fault): string {
  return `▲ ${FAULT_WORDS[f.kind]}${"element" in f ? ` on ${f.element}` : ` ${f.fromMs}–${f.toMs} ms`}`;
}

/**
 * A virtual panel's injected faults: the list (each removable) and a form to add one. Used at
 * run set-up and in the console, where faults change while the run plays.
 */
export function FaultPicker({ elements, faults, onChange, disabled = false }: { elements: readonly Element[]; faults: Fault[]; onChange: (faults: Fault[]) => void; disabled?: boolean }) {
  const [faultKind, setFaultKind] = useState<FaultKind>(() => FAULT_KINDS.find((k) => elements.some((e) => faultFits(k, e))) ?? "disconnect");
  // Only what the chosen fault acts on (a lamp fault on a pointer would change nothing).
  const fitting = elements.filter((e) => faultFits(faultKind, e));
  const [element, setElement] = useState("");
  const [lit, setLit] = useState(true);
  const [breaker, setBreaker] = useState<"in" | "pulled" | "tripped">("pulled");
  const [numbers, setNumbers] = useState<Record<string, number>>({});
  const chosenElement = fitting.some((e) => e.id === element) ? element : (fitting[0]?.id ?? "");

  const addFault = () => {
    const nums = Object.fromEntries(FAULT_NUMBERS[faultKind].map((n) => [n.key, numbers[`${faultKind}.${n.key}`] ?? n.value]));
    let f: Fault;
    if (faultKind === "disconnect") f = { kind: "disconnect", fromMs: nums.fromMs, toMs: nums.toMs };
    else if (faultKind === "lamp_stuck") f = { kind: "lamp_stuck", element: chosenElement, lit };
    else if (faultKind === "breaker_stuck") f = { kind: "breaker_stuck", element: chosenElement, position: breaker };
    else f = { kind: faultKind, element: chosenElement, ...nums } as Fault;
    onChange([...faults, f]);
  };

  return (
    <div className="flex flex-col gap-3" role="group" aria-label="Injected faults">
      {faults.length === 0 ? (
        <p className="text-sm text-ink-soft">None: a healthy virtual panel should pass.</p>
      ) : (
        <ul className="flex flex-col gap-1 text-sm" aria-label="Faults to inject">
          {faults.map((f, i) => (
            <li key={i} className="flex items-center gap-3">
              <span className="font-mono">{faultWords(f)}</span>
              <button type="button" className="text-bad underline disabled:opacity-50" disabled={disabled} onClick={() => onChange(faults.filter((_, j) => j !== i))}>
                remove
              </button>
            </li>
          ))}
        </ul>
      )}
      <div className="flex flex-wrap items-end gap-3">
        <Select label="Fault" value={faultKind} onChange={(e) => setFaultKind(e.target.value as FaultKind)} disabled={disabled}>
          {FAULT_KINDS.filter((k) => elements.some((e) => faultFits(k, e))).map((k) => (
            <option key={k} value={k}>
              {FAULT_WORDS[k]}
            </option>
          ))}
        </Select>
        {faultKind !== "disconnect" && (
          <Select label="Element" value={chosenElement} onChange={(e) => setElement(e.target.value)} disabled={disabled}>
            {fitting.length === 0 && <option value="">no element this fault acts on</option>}
            {fitting.map((e) => (
              <option key={e.id} value={e.id}>
                {e.label} ({e.id})
              </option>
            ))}
          </Select>
        )}
        {faultKind === "lamp_stuck" && (
          <Select label="Stuck" value={lit ? "lit" : "dark"} onChange={(e) => setLit(e.target.value === "lit")} disabled={disabled}>
            <option value="lit">lit</option>
            <option value="dark">dark</option>
          </Select>
        )}
        {faultKind === "breaker_stuck" && (
          <Select label="Stuck at" value={breaker} onChange={(e) => setBreaker(e.target.value as typeof breaker)} disabled={disabled}>
            <option value="in">in</option>
            <option value="pulled">pulled</option>
            <option value="tripped">tripped</option>
          </Select>
        )}
        {FAULT_NUMBERS[faultKind].map((n) => (
          <Field
            key={`${faultKind}.${n.key}`}
            label={n.label}
            type="number"
            value={numbers[`${faultKind}.${n.key}`] ?? n.value}
            onChange={(e) => setNumbers({ ...numbers, [`${faultKind}.${n.key}`]: Number(e.target.value) })}
            disabled={disabled}
          />
        ))}
        <Button type="button" onClick={addFault} disabled={disabled || (faultKind !== "disconnect" && !chosenElement)}>
          Add the fault
        </Button>
      </div>
    </div>
  );
}
