/**
 * Piecewise interpolation of a table (xs strictly increasing) with either straight segments or
 * monotone cubic Hermite segments whose tangents follow Fritsch and Carlson, "Monotone piecewise
 * cubic interpolation", SIAM J. Numer. Anal. 17(2):238-246, 1980.
 */

/**
 * Tangents (dy/dx at each point) for a cubic Hermite interpolant that is monotone on every
 * interval where the data are monotone, so it never overshoots the table.
 *
 * The paper's algorithm:
 *  1. Initialise each tangent with a three-point formula: the slope at the middle point of the
 *     parabola through it and its neighbours (at the ends, the parabola's slope at the end point).
 *  2. Where an interval is flat (secant 0), both of its tangents become 0; where the data turn
 *     (neighbouring secants of opposite sign) the tangent becomes 0, and an end tangent whose sign
 *     disagrees with its interval's secant becomes 0, so each interval is monotone like its data.
 *  3. For each interval, with alpha = m_k / secant and beta = m_{k+1} / secant, the cubic is
 *     monotone when (alpha, beta) lies in the paper's region M. The paper's sufficient test is the
 *     quarter disc alpha^2 + beta^2 <= 9; outside it both tangents shrink by tau = 3 / sqrt(alpha^2 +
 *     beta^2), which puts the pair on the circle. Shrinking a tangent shared with the previous
 *     interval keeps that interval's pair inside its disc too (the disc is star-shaped around the
 *     origin), so one left-to-right pass is enough.
 */
export function fritschCarlsonTangents(xs: ArrayLike<number>, ys: ArrayLike<number>): Float64Array {
  const n = xs.length;
  const tangents = new Float64Array(n);
  if (n < 2) return tangents;
  const widths = new Float64Array(n - 1);
  const secants = new Float64Array(n - 1);
  for (let k = 0; k < n - 1; k++) {
    widths[k] = xs[k + 1] - xs[k];
    secants[k] = (ys[k + 1] - ys[k]) / widths[k];
  }
  if (n === 2) {
    tangents[0] = secants[0];
    tangents[1] = secants[0];
    return tangents;
  }

  // Step 1: three-point estimates.
  const last = n - 1;
  tangents[0] = ((2 * widths[0] + widths[1]) * secants[0] - widths[0] * secants[1]) / (widths[0] + widths[1]);
  for (let k = 1; k < last; k++) {
    tangents[k] = (widths[k] * secants[k - 1] + widths[k - 1] * secants[k]) / (widths[k - 1] + widths[k]);
  }
  tangents[last] =
    ((2 * widths[last - 1] + widths[last - 2]) * secants[last - 1] - widths[last - 1] * secants[last - 2]) /
    (widths[last - 1] + widths[last - 2]);

  // Step 2: make each tangent agree in sign with the data around it.
  if (tangents[0] * secants[0] <= 0) tangents[0] = 0;
  if (tangents[last] * secants[last - 1] <= 0) tangents[last] = 0;
  for (let k = 1; k < last; k++) {
    if (secants[k - 1] * secants[k] <= 0) tangents[k] = 0;
  }
  for (let k = 0; k < n - 1; k++) {
    if (secants[k] === 0) {
      tangents[k] = 0;
      tangents[k + 1] = 0;
    }
  }

  // Step 3: pull every interval's tangent pair into the monotone region.
  for (let k = 0; k < n - 1; k++) {
    const secant = secants[k];
    if (secant === 0) continue;
    const alpha = tangents[k] / secant;
    const beta = tangents[k + 1] / secant;
    const radiusSquared = alpha * alpha + beta * beta;
    if (radiusSquared > 9) {
      const tau = 3 / Math.sqrt(radiusSquared);
      tangents[k] = tau * alpha * secant;
      tangents[k + 1] = tau * beta * secant;
    }
  }
  return tangents;
}

/** Index k of the interval [xs[k], xs[k+1]] holding x, for xs[0] <= x <= xs[n-1]. */
export function intervalIndex(xs: ArrayLike<number>, x: number): number {
  let low = 0;
  let high = xs.length - 2;
  while (low < high) {
    const middle = (low + high + 1) >> 1;
    if (xs[middle] <= x) low = middle;
    else high = middle - 1;
  }
  return low;
}

/**
 * Value of the cubic Hermite segment k at x. The result is clamped into the segment's own data
 * range: with Fritsch-Carlson tangents the exact cubic already stays there, so the clamp only
 * removes floating-point rounding that could otherwise poke a hair past a stop.
 */
export function hermiteAt(
  xs: ArrayLike<number>,
  ys: ArrayLike<number>,
  tangents: ArrayLike<number>,
  k: number,
  x: number,
): number {
  const width = xs[k + 1] - xs[k];
  const t = (x - xs[k]) / width;
  const t2 = t * t;
  const t3 = t2 * t;
  const y0 = ys[k];
  const y1 = ys[k + 1];
  const y =
    (2 * t3 - 3 * t2 + 1) * y0 +
    (t3 - 2 * t2 + t) * width * tangents[k] +
    (-2 * t3 + 3 * t2) * y1 +
    (t3 - t2) * width * tangents[k + 1];
  const low = y0 < y1 ? y0 : y1;
  const high = y0 < y1 ? y1 : y0;
  return y < low ? low : y > high ? high : y;
}

/**
 * dy/dx of the Hermite segment k at x, as a quadratic in t: a t^2 + b t + c, divided by nothing
 * further (already per unit of x). Returned as coefficients so callers can find its extreme.
 */
export function hermiteSlopeCoefficients(
  xs: ArrayLike<number>,
  ys: ArrayLike<number>,
  tangents: ArrayLike<number>,
  k: number,
): { a: number; b: number; c: number } {
  const width = xs[k + 1] - xs[k];
  const y0 = ys[k];
  const y1 = ys[k + 1];
  const m0 = tangents[k];
  const m1 = tangents[k + 1];
  return {
    a: (6 * (y0 - y1)) / width + 3 * (m0 + m1),
    b: (6 * (y1 - y0)) / width - 4 * m0 - 2 * m1,
    c: m0,
  };
}

/** dy/dx of the Hermite segment k at x. */
export function hermiteSlopeAt(
  xs: ArrayLike<number>,
  ys: ArrayLike<number>,
  tangents: ArrayLike<number>,
  k: number,
  x: number,
): number {
  const { a, b, c } = hermiteSlopeCoefficients(xs, ys, tangents, k);
  const t = (x - xs[k]) / (xs[k + 1] - xs[k]);
  return (a * t + b) * t + c;
}
