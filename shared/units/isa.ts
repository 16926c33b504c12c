import { METRES_PER_FOOT, PASCALS_PER_HECTOPASCAL, PASCALS_PER_INCH_OF_MERCURY, STANDARD_GRAVITY } from "./constants";

/**
 * The ICAO Standard Atmosphere (Doc 7488/3, 1993), identical below 32 km to the U.S. Standard
 * Atmosphere 1976 and ISO 2533:1975. Only the two lowest layers are modelled: a cockpit's
 * altimeter lives there, and every check value we hold is there.
 *
 * Altitudes here are geopotential metres, which is what "pressure altitude" means: the height in
 * the standard atmosphere at which its pressure equals the given one. The model's constants are the
 * standard's own; the formulas are the hydrostatic equation integrated over each layer.
 */

/** Sea-level standard pressure P0, Pa. */
export const ISA_SEA_LEVEL_PRESSURE_PA = 101_325;
/** Sea-level standard temperature T0, K (15 °C). */
export const ISA_SEA_LEVEL_TEMPERATURE_K = 288.15;
/** Temperature lapse rate in the troposphere, K per geopotential metre (6.5 K/km). */
export const ISA_TROPOSPHERE_LAPSE_K_PER_M = 0.0065;
/** Specific gas constant of dry air used by ICAO Doc 7488, J/(kg K). */
export const ISA_AIR_GAS_CONSTANT = 287.052_87;
/** Base of the isothermal layer (tropopause), geopotential metres. */
export const ISA_TROPOPAUSE_M = 11_000;
/** Top of the isothermal layer, geopotential metres; the model refuses to go higher. */
export const ISA_ISOTHERMAL_TOP_M = 20_000;
/** Lowest altitude the standard tabulates, geopotential metres. */
export const ISA_LOWEST_M = -5_000;

const T0 = ISA_SEA_LEVEL_TEMPERATURE_K;
const P0 = ISA_SEA_LEVEL_PRESSURE_PA;
const LAPSE = ISA_TROPOSPHERE_LAPSE_K_PER_M;
const R = ISA_AIR_GAS_CONSTANT;
const G = STANDARD_GRAVITY;

/** g0 / (R L), about 5.25588: the troposphere's pressure exponent. */
const TROPOSPHERE_EXPONENT = G / (R * LAPSE);
/** Temperature through the isothermal layer, 216.65 K (-56.5 °C). */
const TROPOPAUSE_TEMPERATURE_K = T0 - LAPSE * ISA_TROPOPAUSE_M;
/** Pressure at 11 km, about 22632.06 Pa, from the troposphere formula so the layers join exactly. */
const TROPOPAUSE_PRESSURE_PA = P0 * Math.pow(TROPOPAUSE_TEMPERATURE_K / T0, TROPOSPHERE_EXPONENT);
/** Scale height of the isothermal layer, R T / g0, metres. */
const ISOTHERMAL_SCALE_HEIGHT_M = (R * TROPOPAUSE_TEMPERATURE_K) / G;

/** Pressure at the top of the modelled range (20 km), about 5474.89 Pa. */
export const ISA_ISOTHERMAL_TOP_PRESSURE_PA =
  TROPOPAUSE_PRESSURE_PA * Math.exp(-(ISA_ISOTHERMAL_TOP_M - ISA_TROPOPAUSE_M) / ISOTHERMAL_SCALE_HEIGHT_M);
/** Pressure at the bottom of the modelled range (-5 km). */
export const ISA_LOWEST_PRESSURE_PA = P0 * Math.pow(1 - (LAPSE * ISA_LOWEST_M) / T0, TROPOSPHERE_EXPONENT);

function assertAltitudeInModel(altitudeM: number): void {
  if (!(altitudeM >= ISA_LOWEST_M && altitudeM <= ISA_ISOTHERMAL_TOP_M)) {
    throw new RangeError(
      `altitude ${altitudeM} m is outside the modelled standard atmosphere (${ISA_LOWEST_M} to ${ISA_ISOTHERMAL_TOP_M} m)`,
    );
  }
}

function assertPressureInModel(pressurePa: number): void {
  if (!(pressurePa >= ISA_ISOTHERMAL_TOP_PRESSURE_PA && pressurePa <= ISA_LOWEST_PRESSURE_PA)) {
    throw new RangeError(
      `pressure ${pressurePa} Pa is outside the modelled standard atmosphere ` +
        `(${ISA_ISOTHERMAL_TOP_PRESSURE_PA.toFixed(2)} to ${ISA_LOWEST_PRESSURE_PA.toFixed(0)} Pa)`,
    );
  }
}

/** Standard temperature at a geopotential altitude, K. */
export function isaTemperatureK(altitudeM: number): number {
  assertAltitudeInModel(altitudeM);
  return altitudeM <= ISA_TROPOPAUSE_M ? T0 - LAPSE * altitudeM : TROPOPAUSE_TEMPERATURE_K;
}

/** Standard pressure at a geopotential altitude, Pa. Throws outside -5 km to 20 km. */
export function isaPressurePa(altitudeM: number): number {
  assertAltitudeInModel(altitudeM);
  if (altitudeM <= ISA_TROPOPAUSE_M) {
    return P0 * Math.pow(1 - (LAPSE * altitudeM) / T0, TROPOSPHERE_EXPONENT);
  }
  return TROPOPAUSE_PRESSURE_PA * Math.exp(-(altitudeM - ISA_TROPOPAUSE_M) / ISOTHERMAL_SCALE_HEIGHT_M);
}

/** Pressure altitude (geopotential metres) of a static pressure, the inverse of isaPressurePa. */
export function pressureAltitudeM(pressurePa: number): number {
  assertPressureInModel(pressurePa);
  if (pressurePa >= TROPOPAUSE_PRESSURE_PA) {
    return (T0 / LAPSE) * (1 - Math.pow(pressurePa / P0, 1 / TROPOSPHERE_EXPONENT));
  }
  return ISA_TROPOPAUSE_M - ISOTHERMAL_SCALE_HEIGHT_M * Math.log(pressurePa / TROPOPAUSE_PRESSURE_PA);
}

/**
 * What a correctly calibrated altimeter shows when its setting window is set to `settingPa`.
 *
 * The setting knob shifts the whole scale by the standard-atmosphere height of the setting
 * pressure, so the instrument shows the standard height of the static pressure above the
 * pressure level it was set to: indicated = PA(static) - PA(setting). At 1013.25 hPa the
 * altimeter shows pressure altitude; a setting 10 hPa higher adds about 270 ft near sea level.
 * This is the same relation the U.S. weather services' altimeter-setting formula inverts
 * (see altimeterSettingPa).
 */
export function indicatedAltitudeM(pressureAltitude: number, settingPa: number): number {
  return pressureAltitude - pressureAltitudeM(settingPa);
}

/** The pressure altitude that makes an altimeter set to `settingPa` show `indicatedM`. */
export function pressureAltitudeFromIndicatedM(indicatedM: number, settingPa: number): number {
  return indicatedM + pressureAltitudeM(settingPa);
}

/**
 * The altimeter setting (QNH) that makes an altimeter at `elevationM` with static pressure
 * `stationPressurePa` read the elevation: the pressure whose standard height is PA(station) - elevation.
 */
export function altimeterSettingPa(stationPressurePa: number, elevationM: number): number {
  return isaPressurePa(pressureAltitudeM(stationPressurePa) - elevationM);
}

/** The altimeter setting units a builder meets: hectopascals (or millibars) and inches of mercury. */
export type AltimeterSettingUnit = "hPa" | "inHg";

export function altimeterSettingToPa(setting: number, unit: AltimeterSettingUnit): number {
  return unit === "hPa" ? setting * PASCALS_PER_HECTOPASCAL : setting * PASCALS_PER_INCH_OF_MERCURY;
}

/** Standard pressure at a pressure altitude in feet, in hPa: the figure altimetry tables print. */
export function isaPressureHpaAtFeet(altitudeFt: number): number {
  return isaPressurePa(altitudeFt * METRES_PER_FOOT) / PASCALS_PER_HECTOPASCAL;
}

/** Pressure altitude in feet from a static pressure in hPa or inHg. */
export function pressureAltitudeFt(pressure: number, unit: AltimeterSettingUnit): number {
  return pressureAltitudeM(altimeterSettingToPa(pressure, unit)) / METRES_PER_FOOT;
}

/** Indicated altitude in feet from pressure altitude in feet and the setting in the window. */
export function indicatedAltitudeFt(pressureAltitudeFeet: number, setting: number, unit: AltimeterSettingUnit): number {
  return indicatedAltitudeM(pressureAltitudeFeet * METRES_PER_FOOT, altimeterSettingToPa(setting, unit)) / METRES_PER_FOOT;
}
