import { describe, expect, it } from "vitest";
import {
  METRES_PER_FOOT,
  METRES_PER_SECOND_PER_KNOT,
  PASCALS_PER_INCH_OF_MERCURY,
  PASCALS_PER_PSI,
  canConvert,
  convert,
  convertDifference,
  unitDimension,
  unitId,
} from "../../../shared/units";

describe("conversion factors", () => {
  it("uses the exact international foot", () => {
    // NIST SP 811 (2008), Appendix B.8: foot = 3.048 E-01 m, exact.
    expect(METRES_PER_FOOT).toBe(0.3048);
    expect(convert(1, "ft", "m")).toBe(0.3048);
    // NIST SP 811, B.8: 1 ft = 12 in and inch = 2.54 E-02 m exact, so 10,000 ft is 3,048 m.
    expect(convert(10_000, "ft", "m")).toBeCloseTo(3048, 9);
  });

  it("uses the exact knot, 1852/3600 m/s", () => {
    // NIST SP 811, B.8: knot (nautical mile per hour) = 5.144 444 E-01 m/s; nautical mile = 1852 m exact.
    expect(METRES_PER_SECOND_PER_KNOT).toBe(1852 / 3600);
    expect(convert(1, "kt", "m/s")).toBeCloseTo(0.5144444, 7);
    // NIST SP 811, B.8: nautical mile = 1852 m, kilometre per hour = 1/3.6 m/s, so 1 kt = 1.852 km/h.
    expect(convert(100, "kt", "km/h")).toBeCloseTo(185.2, 10);
  });

  it("uses the conventional inch of mercury, 3386.389 Pa", () => {
    // NIST SP 811, B.8: inch of mercury, conventional (inHg) = 3.386 389 E+03 Pa.
    expect(PASCALS_PER_INCH_OF_MERCURY).toBe(3386.389);
    expect(convert(1, "inHg", "hPa")).toBeCloseTo(33.86389, 10);
    // The standard setting 1013.25 hPa is 29.92 inHg to two decimals, the figure printed on every
    // altimeter setting chart (fact of the trade).
    expect(convert(1013.25, "hPa", "inHg")).toBeCloseTo(29.9213, 4);
  });

  it("treats millibars as hectopascals", () => {
    // NIST SP 811, B.8: millibar = 1 E+02 Pa, exact.
    expect(convert(1013.25, "mbar", "Pa")).toBeCloseTo(101_325, 9);
    expect(convert(1013.25, "mbar", "hPa")).toBeCloseTo(1013.25, 12);
  });

  it("derives psi from the exact pound and standard gravity", () => {
    // NIST SP 811, B.8: pound-force per square inch (psi) = 6.894 757 E+03 Pa.
    expect(PASCALS_PER_PSI).toBeCloseTo(6894.757, 3);
  });

  it("converts feet per minute to metres per second exactly", () => {
    // NIST SP 811, B.8: foot per minute = 5.08 E-03 m/s, exact.
    expect(convert(1000, "ft/min", "m/s")).toBeCloseTo(5.08, 12);
  });

  it("converts temperatures with their offsets, and differences without", () => {
    // NIST SP 811, 4.2.1.1: T/K = t/°C + 273.15; B.9: t/°F = 1.8 t/°C + 32.
    expect(convert(15, "degC", "K")).toBeCloseTo(288.15, 10);
    expect(convert(-40, "degC", "degF")).toBeCloseTo(-40, 10);
    expect(convert(100, "degC", "degF")).toBeCloseTo(212, 10);
    expect(convert(59, "degF", "degC")).toBeCloseTo(15, 10);
    expect(convertDifference(10, "K", "degF")).toBeCloseTo(18, 10);
    expect(convertDifference(10, "degC", "K")).toBeCloseTo(10, 12);
  });

  it("converts fuel quantities through the exact gallon and pound", () => {
    // NIST SP 811, B.8: gallon [U.S.] = 3.785 412 E-03 m^3 (3.785411784 L exact); pound = 0.45359237 kg exact.
    expect(convert(1, "gal", "L")).toBe(3.785411784);
    expect(convert(1000, "lb/h", "kg/h")).toBeCloseTo(453.59237, 9);
  });

  it("round-trips every unit through its dimension's SI unit", () => {
    for (const [from, to] of [
      ["ft", "nmi"],
      ["kt", "mph"],
      ["inHg", "psi"],
      ["degF", "K"],
      ["turn", "deg"],
      ["percent", "ratio"],
    ] as const) {
      expect(convert(convert(123.456, from, to), to, from)).toBeCloseTo(123.456, 9);
    }
  });

  it("refuses to convert between dimensions", () => {
    expect(canConvert("ft", "kt")).toBe(false);
    expect(unitDimension("kt")).toBe("speed");
    expect(() => convert(1, "ft", "kt")).toThrow(/cannot convert ft \(length\) to kt \(speed\)/);
  });

  it("validates unit identifiers", () => {
    expect(unitId.parse("inHg")).toBe("inHg");
    const result = unitId.safeParse("furlong");
    expect(result.success).toBe(false);
    expect(result.error?.issues[0].message).toMatch(/furlong/);
  });
});
