import { dotComplex, InterpolationKernel } from '../resample/interpolation-kernel.js';
import { type ComplexArray, complexArray } from '../signal/complex.js';

let midpointKernel: InterpolationKernel | null = null;

/** The kernel that fills in the midpoints of a 2-samples-per-symbol signal (shared with clock recovery's design). */
function kernel(): InterpolationKernel {
  midpointKernel ??= new InterpolationKernel({ passband: 0.4, stopband: 0.6, attenuationDb: 70 });
  return midpointKernel;
}

/**
 * Feedforward square-timing estimate (Oerder & Meyr, "Digital filter and
 * square timing recovery", IEEE Trans. Commun. 36(5), 1988) for a block of a
 * matched-filtered signal at 2 samples per symbol:
 *
 *   ε̂ = −(1/2π)·arg Σₙ (|x(nT/4)|² + |y(nT/4)|²)·e^(−j2πn/4)
 *
 * The estimator needs at least 3 samples per symbol (the squared signal's
 * spectral line at 1/T must not alias); the samples at T/4 are made from the
 * 2-per-symbol input by band-limited interpolation of the midpoints. The
 * symbol instants of the block are then at (k + ε̂)·T from its first sample.
 * The estimate's variance grows as the roll-off shrinks (the line at 1/T
 * weakens): average over more symbols for small roll-offs.
 *
 * @param x the x field at 2 samples per symbol
 * @param y the y field, the same length; may be omitted (single polarization)
 * @returns ε̂ in symbols, in [−0.5, 0.5)
 * @throws RangeError for fewer than 64 samples
 * @example const eps = squareTimingEstimate(block.x, block.y); // symbol 0 at ε̂·2 samples
 */
export function squareTimingEstimate(x: ComplexArray, y?: ComplexArray): number {
  const tone = squareTimingTone(x, y);
  let eps = -Math.atan2(tone.im, tone.re) / (2 * Math.PI);
  if (eps >= 0.5) eps -= 1;
  return eps;
}

/** The spectral line at 1/T of the squared signal that {@link squareTimingEstimate} reads, with the power it came from. */
export interface TimingTone {
  /** Real part of Σₙ (|x(nT/4)|² + |y(nT/4)|²)·e^(−j2πn/4). */
  readonly re: number;
  /** Imaginary part of the same sum. */
  readonly im: number;
  /** Σₙ (|x(nT/4)|² + |y(nT/4)|²) over the same samples: the line's magnitude over it measures how strong the line is. */
  readonly power: number;
}

/**
 * The line at 1/T of the squared signal of {@link squareTimingEstimate}
 * (its phase gives the timing: ε̂ = −arg/2π), and the signal power it was
 * summed over.
 * @throws RangeError for fewer than 64 samples, or y of another length
 * @example const tone = squareTimingTone(x, y); Math.hypot(tone.re, tone.im) / tone.power // line strength
 */
export function squareTimingTone(x: ComplexArray, y?: ComplexArray): TimingTone {
  const n = x.length >> 1;
  if (n < 64) throw new RangeError(`squareTimingEstimate: expected at least 64 samples, received ${n}`);
  if (y && y.length !== x.length) throw new RangeError(`squareTimingEstimate: x has ${n} samples, y has ${y.length >> 1}`);
  const k = kernel();
  const H = k.halfTaps;
  const c = new Float64Array(k.taps);
  k.coefficients(0.5, c);
  const mid = complexArray(1);
  let re = 0;
  let im = 0;
  let power = 0;
  // Sample 2m at 4 per symbol is input m; sample 2m + 1 is the midpoint m + ½.
  // e^(−j2πn/4) over n = 2m, 2m + 1 is (−1)^m·(1, −j).
  for (let m = H - 1; m < n - H; m++) {
    const s = m % 2 === 0 ? 1 : -1;
    let p = x[2 * m] ** 2 + x[2 * m + 1] ** 2;
    dotComplex(x, m - H + 1, c, c.length, mid, 0);
    let q = mid[0] ** 2 + mid[1] ** 2;
    if (y) {
      p += y[2 * m] ** 2 + y[2 * m + 1] ** 2;
      dotComplex(y, m - H + 1, c, c.length, mid, 0);
      q += mid[0] ** 2 + mid[1] ** 2;
    }
    // The sum starts at m = H − 1, not 0: the phase reference (−1)^m keeps n = 2m.
    re += s * p;
    im -= s * q;
    power += p + q;
  }
  return { re, im, power };
}
