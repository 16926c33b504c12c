import { describe, expect, it } from "vitest";
import { faultFits, faultProblem } from "../../../shared/virtual/faults";

const elements = [
  { id: "fire", kind: "lamp", label: "FIRE", placeholder: false },
  { id: "asi", kind: "pointer", label: "airspeed pointer", placeholder: false },
  { id: "code", kind: "readout", label: "CODE", placeholder: false },
  { id: "spare", kind: "lamp", label: "SPARE", placeholder: true },
] as const;

describe("which element a fault can act on", () => {
  it("matches each fault to what the element shows", () => {
    expect(faultFits("lamp_stuck", elements[0])).toBe(true);
    expect(faultFits("lamp_stuck", elements[1])).toBe(false);
    expect(faultFits("pointer_slow", elements[1])).toBe(true);
    expect(faultFits("digit_dropped", elements[2])).toBe(true);
    expect(faultFits("added_lag", elements[2])).toBe(true);
    expect(faultFits("added_lag", elements[3])).toBe(false);
  });

  it("says why a fault cannot go where it was put, naming the field", () => {
    expect(faultProblem({ kind: "lamp_inverted", element: "fire" }, elements)).toBeNull();
    expect(faultProblem({ kind: "lamp_inverted", element: "asi" }, elements)).toEqual({ field: "element", message: '"airspeed pointer" is a pointer; this fault acts on a lamp or button' });
    expect(faultProblem({ kind: "lamp_inverted", element: "ghost" }, elements)?.message).toBe('the panel has no element "ghost"');
    expect(faultProblem({ kind: "lamp_inverted", element: "spare" }, elements)?.message).toMatch(/placeholder/);
    expect(faultProblem({ kind: "disconnect", fromMs: 5, toMs: 5 }, elements)).toEqual({ field: "toMs", message: "must be after fromMs" });
  });
});
