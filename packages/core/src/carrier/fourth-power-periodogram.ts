import { strongestTone, type WeightedSequence } from '../dsp/strongest-tone.js';
import { type ComplexArray, complexArray } from '../signal/complex.js';

/** Options of {@link estimateOffsetPeriodogram}. */
export interface PeriodogramOptions {
  /**
   * Zero-padding factor of the FFT over the next power of two of the length
   * (a power of two from 1 to 16, default 4): it only sets how close the
   * coarse peak lands to the true one before the sub-bin search.
   */
  readonly padding?: number;
}

/**
 * Frequency offset from the fourth-power periodogram (Selmi, Jaouën, Ciblat,
 * "Accurate digital frequency offset estimator for coherent PolMux QAM
 * transmission systems", ECOC 2009).
 *
 * Raising the symbols to the fourth power removes the square-QAM modulation
 * (E[a⁴] ≠ 0, a negative real number for QPSK, 16QAM and 64QAM) and leaves a
 * tone at 4Δf. With one polarization:
 *
 *   P(ν) = |Σₙ xₙ⁴·e^(−j2πνn)|²,   Δf = Rs·argmax_ν P(ν) / 4
 *
 * With two, the received x and y are a unitary mix of the two transmitted
 * ones (x = α·a₁ + β·a₂, …), and the tones of x⁴ and y⁴ alone fade together
 * for some polarization states (E x⁴ ∝ α⁴ + β⁴, which vanishes for
 * |α| = |β| and arg(α/β) = π/4): the estimate then locks on a noise peak.
 * Every fourth-order product of the pair is used instead, with the weights
 * of the symmetric tensor E[zᵢzⱼzₖzₗ]:
 *
 *   P(ν) = |X⁴|² + 4|X³Y|² + 6|X²Y²|² + 4|XY³|² + |Y⁴|²,   X³Y(ν) = Σₙ xₙ³yₙ·e^(−j2πνn), …
 *
 * the squared norm of that tensor's spectrum at ν, which a unitary mix does
 * not change (Σ_{ijkl} |Σ_s κ_s U_is U_js U_ks U_ls|² = Σ_s |κ_s|² for
 * orthonormal columns of U): the tone has the same height whatever the
 * polarization state. Both polarizations see the same lasers.
 * The coarse peak comes from a zero-padded FFT; the sub-bin interpolation
 * then maximizes the continuous periodogram P(ν) (the DTFT, evaluated
 * directly) by golden-section search between the neighbouring padded bins,
 * which is the maximum-likelihood frequency of a single tone.
 *
 * Range: ν ∈ [−½, ½) cycles per symbol, so |Δf| < Rs/8 at one sample per
 * symbol (DOMAIN.md: fs/(2M) with M = 4). An offset beyond aliases by a
 * multiple of Rs/4: Δf̂ = Δf − Rs/4·round(4Δf/Rs).
 *
 * @param x symbols of polarization x, N ≥ 1 complex samples at one sample per symbol
 * @param y symbols of polarization y (N samples) or null for one polarization
 * @param symbolRate Rs, Bd
 * @returns Δf̂ in Hz, in [−Rs/8, Rs/8), signed so that the symbols rotate as exp(+j2πΔf·t)
 * @throws RangeError when x is empty, y differs in length, the symbol rate is not positive, or the padding is not a power of two from 1 to 16
 * @example const f = estimateOffsetPeriodogram(block.x, block.y, 32e9); // Hz
 */
export function estimateOffsetPeriodogram(
  x: ComplexArray,
  y: ComplexArray | null,
  symbolRate: number,
  options: PeriodogramOptions = {},
): number {
  const n = x.length >> 1;
  const padding = options.padding ?? 4;
  if (n === 0) throw new RangeError('estimateOffsetPeriodogram: expected at least one symbol, received none');
  if (y && y.length !== x.length) throw new RangeError(`estimateOffsetPeriodogram: x has ${n} symbols, y has ${y.length >> 1}`);
  if (!(symbolRate > 0) || !Number.isFinite(symbolRate))
    throw new RangeError(`estimateOffsetPeriodogram: expected a positive symbol rate in Bd, received ${symbolRate}`);
  if (!Number.isInteger(padding) || padding < 1 || padding > 16 || (padding & (padding - 1)) !== 0)
    throw new RangeError(`estimateOffsetPeriodogram: expected a padding of 1, 2, 4, 8 or 16, received ${padding}`);

  const pols = y ? fourthOrderProducts(x, y) : [{ z: fourthPower(x), weight: 1 }];
  const nu = strongestTone(pols, padding).frequency;
  return (nu * symbolRate) / 4;
}

/** x⁴, x³y, x²y², xy³, y⁴ with the multiplicities 1, 4, 6, 4, 1 of the symmetric fourth-order tensor. */
function fourthOrderProducts(x: ComplexArray, y: ComplexArray): WeightedSequence[] {
  const n = x.length >> 1;
  const out = [complexArray(n), complexArray(n), complexArray(n), complexArray(n), complexArray(n)];
  for (let k = 0; k < n; k++) {
    const ar = x[2 * k];
    const ai = x[2 * k + 1];
    const br = y[2 * k];
    const bi = y[2 * k + 1];
    // x², xy, y²
    const x2r = ar * ar - ai * ai;
    const x2i = 2 * ar * ai;
    const xyr = ar * br - ai * bi;
    const xyi = ar * bi + ai * br;
    const y2r = br * br - bi * bi;
    const y2i = 2 * br * bi;
    product(out[0], k, x2r, x2i, x2r, x2i);
    product(out[1], k, x2r, x2i, xyr, xyi);
    product(out[2], k, x2r, x2i, y2r, y2i);
    product(out[3], k, xyr, xyi, y2r, y2i);
    product(out[4], k, y2r, y2i, y2r, y2i);
  }
  return [1, 4, 6, 4, 1].map((weight, i) => ({ z: out[i], weight }));
}

/** z[k] = p·q. */
function product(z: ComplexArray, k: number, pr: number, pi: number, qr: number, qi: number): void {
  z[2 * k] = pr * qr - pi * qi;
  z[2 * k + 1] = pr * qi + pi * qr;
}

function fourthPower(r: ComplexArray): ComplexArray {
  const n = r.length >> 1;
  const z = complexArray(n);
  for (let k = 0; k < n; k++) {
    const re = r[2 * k];
    const im = r[2 * k + 1];
    // r² then (r²)²
    const sr = re * re - im * im;
    const si = 2 * re * im;
    z[2 * k] = sr * sr - si * si;
    z[2 * k + 1] = 2 * sr * si;
  }
  return z;
}
