/**
 * Conversion factors to SI, each exact by definition unless its comment says otherwise.
 * Source for every factor: NIST Special Publication 811 (2008 edition), "Guide for the Use of the
 * International System of Units", Appendix B. Factors are written as the defining arithmetic rather
 * than rounded decimals, so a reader can check them against the definition.
 */

/** International foot: 0.3048 m exactly (NIST SP 811, B.8 "foot"). */
export const METRES_PER_FOOT = 0.3048;

/** International inch: 0.0254 m exactly (NIST SP 811, B.8 "inch"). */
export const METRES_PER_INCH = 0.0254;

/** International nautical mile: 1852 m exactly (NIST SP 811, B.8 "nautical mile"). */
export const METRES_PER_NAUTICAL_MILE = 1852;

/** International mile (statute): 1609.344 m exactly (NIST SP 811, B.8 "mile"). */
export const METRES_PER_STATUTE_MILE = 1609.344;

/** Knot: one nautical mile per hour, 1852/3600 m/s exactly (NIST SP 811, B.8 "knot"). */
export const METRES_PER_SECOND_PER_KNOT = METRES_PER_NAUTICAL_MILE / 3600;

/** Foot per minute (vertical speed): 0.3048/60 m/s exactly (NIST SP 811, B.8 "foot per minute"). */
export const METRES_PER_SECOND_PER_FOOT_PER_MINUTE = METRES_PER_FOOT / 60;

/**
 * Inch of mercury, conventional: 3386.389 Pa (NIST SP 811, B.8 "inch of mercury, conventional
 * (inHg)" = 3.386 389 E+03 Pa). The conventional unit is the one altimeter settings are given in;
 * the "32 °F" and "60 °F" variants in the same table differ and are not used here.
 */
export const PASCALS_PER_INCH_OF_MERCURY = 3386.389;

/** Hectopascal and millibar: 100 Pa exactly (SI prefix; NIST SP 811, B.8 "millibar"). */
export const PASCALS_PER_HECTOPASCAL = 100;

/** Avoirdupois pound: 0.45359237 kg exactly (NIST SP 811, B.8 "pound (avoirdupois)"). */
export const KILOGRAMS_PER_POUND = 0.45359237;

/** Standard acceleration of gravity g_n: 9.80665 m/s^2 exactly (NIST SP 811, B.8 footnote; CGPM 1901). */
export const STANDARD_GRAVITY = 9.80665;

/**
 * Pound-force per square inch: lbf / in^2 with lbf = 0.45359237 kg x 9.80665 m/s^2, both exact, so
 * about 6894.757 Pa (NIST SP 811 lists the rounded 6.894 757 E+03 Pa).
 */
export const PASCALS_PER_PSI = (KILOGRAMS_PER_POUND * STANDARD_GRAVITY) / (METRES_PER_INCH * METRES_PER_INCH);

/** U.S. liquid gallon: 3.785411784 L exactly (NIST SP 811, B.8 "gallon [U.S.]"). */
export const LITRES_PER_US_GALLON = 3.785411784;

/** Kelvin offset of the Celsius scale: 273.15 exactly (NIST SP 811, 4.2.1.1). */
export const KELVIN_AT_ZERO_CELSIUS = 273.15;
