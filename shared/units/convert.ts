import { z } from "zod";
import {
  KELVIN_AT_ZERO_CELSIUS,
  KILOGRAMS_PER_POUND,
  LITRES_PER_US_GALLON,
  METRES_PER_FOOT,
  METRES_PER_NAUTICAL_MILE,
  METRES_PER_SECOND_PER_FOOT_PER_MINUTE,
  METRES_PER_SECOND_PER_KNOT,
  METRES_PER_STATUTE_MILE,
  PASCALS_PER_HECTOPASCAL,
  PASCALS_PER_INCH_OF_MERCURY,
  PASCALS_PER_PSI,
} from "./constants";

/**
 * The units a channel or a gauge may be expressed in. Each is an affine map to its dimension's SI
 * unit: `si = value * factor + offset`. Only temperatures have an offset.
 */
interface UnitDefinition {
  dimension: UnitDimension;
  factor: number;
  offset: number;
  label: string;
}

export type UnitDimension =
  | "length"
  | "speed"
  | "pressure"
  | "temperature"
  | "angle"
  | "mass"
  | "volume"
  | "mass-flow"
  | "volume-flow"
  | "ratio";

const linear = (dimension: UnitDimension, factor: number, label: string): UnitDefinition => ({
  dimension,
  factor,
  offset: 0,
  label,
});

const UNITS = {
  m: linear("length", 1, "metres"),
  km: linear("length", 1000, "kilometres"),
  ft: linear("length", METRES_PER_FOOT, "feet"),
  nmi: linear("length", METRES_PER_NAUTICAL_MILE, "nautical miles"),
  mi: linear("length", METRES_PER_STATUTE_MILE, "statute miles"),

  "m/s": linear("speed", 1, "metres per second"),
  "km/h": linear("speed", 1000 / 3600, "kilometres per hour"),
  kt: linear("speed", METRES_PER_SECOND_PER_KNOT, "knots"),
  mph: linear("speed", METRES_PER_STATUTE_MILE / 3600, "miles per hour"),
  "ft/min": linear("speed", METRES_PER_SECOND_PER_FOOT_PER_MINUTE, "feet per minute"),

  Pa: linear("pressure", 1, "pascals"),
  hPa: linear("pressure", PASCALS_PER_HECTOPASCAL, "hectopascals"),
  mbar: linear("pressure", PASCALS_PER_HECTOPASCAL, "millibars"),
  kPa: linear("pressure", 1000, "kilopascals"),
  inHg: linear("pressure", PASCALS_PER_INCH_OF_MERCURY, "inches of mercury"),
  psi: linear("pressure", PASCALS_PER_PSI, "pounds per square inch"),

  K: linear("temperature", 1, "kelvin"),
  degC: { dimension: "temperature", factor: 1, offset: KELVIN_AT_ZERO_CELSIUS, label: "degrees Celsius" },
  // t(°F) = 1.8 t(°C) + 32 exactly (NIST SP 811, 4.2.1.1 and B.9).
  degF: {
    dimension: "temperature",
    factor: 1 / 1.8,
    offset: KELVIN_AT_ZERO_CELSIUS - 32 / 1.8,
    label: "degrees Fahrenheit",
  },

  deg: linear("angle", Math.PI / 180, "degrees"),
  rad: linear("angle", 1, "radians"),
  turn: linear("angle", 2 * Math.PI, "turns"),

  kg: linear("mass", 1, "kilograms"),
  lb: linear("mass", KILOGRAMS_PER_POUND, "pounds"),

  L: linear("volume", 1, "litres"),
  gal: linear("volume", LITRES_PER_US_GALLON, "U.S. gallons"),

  "kg/h": linear("mass-flow", 1, "kilograms per hour"),
  "lb/h": linear("mass-flow", KILOGRAMS_PER_POUND, "pounds per hour"),

  "L/h": linear("volume-flow", 1, "litres per hour"),
  "gal/h": linear("volume-flow", LITRES_PER_US_GALLON, "U.S. gallons per hour"),

  ratio: linear("ratio", 1, "ratio"),
  percent: linear("ratio", 0.01, "percent"),
} as const satisfies Record<string, UnitDefinition>;

export type UnitId = keyof typeof UNITS;

export const UNIT_IDS = Object.keys(UNITS) as UnitId[];

export const unitId = z.enum(UNIT_IDS as [UnitId, ...UnitId[]], {
  error: (issue) => `must be one of the known units (${UNIT_IDS.join(", ")}), got ${JSON.stringify(issue.input)}`,
});

export function unitDimension(unit: UnitId): UnitDimension {
  return UNITS[unit].dimension;
}

export function unitLabel(unit: UnitId): string {
  return UNITS[unit].label;
}

export function canConvert(from: UnitId, to: UnitId): boolean {
  return UNITS[from].dimension === UNITS[to].dimension;
}

/** Converts through SI; throws when the units measure different things (feet into knots). */
export function convert(value: number, from: UnitId, to: UnitId): number {
  if (from === to) return value;
  const source = UNITS[from];
  const target = UNITS[to];
  if (source.dimension !== target.dimension) {
    throw new RangeError(`cannot convert ${from} (${source.dimension}) to ${to} (${target.dimension})`);
  }
  const si = value * source.factor + source.offset;
  return (si - target.offset) / target.factor;
}

/**
 * Converts a rate of change or a difference (a slope, a tolerance): the offset of temperature scales
 * does not apply to differences, so 10 K of difference is 18 °F of difference.
 */
export function convertDifference(delta: number, from: UnitId, to: UnitId): number {
  if (from === to) return delta;
  const source = UNITS[from];
  const target = UNITS[to];
  if (source.dimension !== target.dimension) {
    throw new RangeError(`cannot convert ${from} (${source.dimension}) to ${to} (${target.dimension})`);
  }
  return (delta * source.factor) / target.factor;
}
