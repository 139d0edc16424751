import { kaiserBeta, kaiserOrder, kaiserWindow } from '../dsp/kaiser.js';

/**
 * What the interpolation lowpass must do, in cycles per input sample:
 * pass |f| ≤ `passband` with ripple δ, stop |f| ≥ `stopband` by
 * `attenuationDb` (δ = 10^(−A/20) in both bands, as a Kaiser design gives).
 */
export interface LowpassSpec {
  /** Passband edge, cycles per input sample, in (0, stopband). */
  readonly passband: number;
  /** Stopband edge, cycles per input sample, in (passband, 1]. */
  readonly stopband: number;
  /** Stopband attenuation, dB (≥ 21). */
  readonly attenuationDb: number;
  /** Table rows per input sample (default 1024); linear interpolation between rows. */
  readonly phases?: number;
}

const DESIGN_MARGIN_DB = 3;

/**
 * Tables already computed, by specification (read-only once built). A
 * receiver builds the same three or four kernels for every capture; the
 * table, 1,025 rows of Kaiser-windowed sinc values, took about 3 % of the
 * analysis of a 16,384-symbol capture in a sweep. The oldest entry goes
 * beyond {@link MAX_TABLES}.
 */
const TABLES = new Map<string, Float64Array>();
const MAX_TABLES = 16;

/**
 * A band-limited interpolation kernel: a Kaiser-windowed sinc tabulated at
 * `phases` fractional offsets per sample (Smith & Gossett, "A flexible
 * sampling-rate conversion method", IEEE ICASSP 1984). The value of a
 * sampled signal x at the fractional position n₀ + μ (0 ≤ μ < 1) is
 *
 *   x(n₀ + μ) ≈ Σⱼ x[n₀ − H + 1 + j]·c_j(μ),  j = 0 … 2H − 1,
 *   c_j(μ) = h(j − H + 1 − μ),  h(u) = 2f_c·sinc(2f_c·u)·w(u/H),
 *
 * with f_c halfway between the band edges and w the Kaiser window sized by
 * Kaiser's formulas (see dsp/kaiser.ts) for A + 3 dB, since the formulas
 * are approximate. Each table row is scaled to unit
 * sum (unit gain at DC). Between rows the coefficients are interpolated
 * linearly; with 1024 rows that error is below −110 dB for f_c ≤ 0.5.
 * @example const k = new InterpolationKernel({ passband: 0.4, stopband: 0.6, attenuationDb: 70 }); const row = new Float64Array(k.taps); k.coefficients(0.25, row);
 */
export class InterpolationKernel {
  /** H: taps on each side; the kernel has 2H taps. */
  readonly halfTaps: number;
  /** 2H: taps of the kernel. */
  readonly taps: number;
  /** Rows per input sample. */
  readonly phases: number;
  /** Cutoff f_c, cycles per input sample. */
  readonly cutoff: number;
  /** Kaiser window β. */
  readonly beta: number;
  /** The lowpass specification, defaults filled in. */
  readonly spec: Required<LowpassSpec>;
  /** (phases + 1) rows of 2H coefficients. */
  private readonly table: Float64Array;

  /**
   * @throws RangeError when the band edges or the attenuation are out of range
   */
  constructor(spec: LowpassSpec) {
    const { passband, stopband, attenuationDb } = spec;
    const phases = spec.phases ?? 1024;
    if (!(passband > 0 && stopband > passband && stopband <= 1)) {
      throw new RangeError(`InterpolationKernel: expected 0 < passband < stopband ≤ 1, received ${passband}, ${stopband}`);
    }
    if (!(attenuationDb >= 21 && attenuationDb <= 200)) {
      throw new RangeError(`InterpolationKernel: expected an attenuation from 21 to 200 dB, received ${attenuationDb}`);
    }
    if (!Number.isInteger(phases) || phases < 1) {
      throw new RangeError(`InterpolationKernel: expected a positive integer number of phases, received ${phases}`);
    }
    this.spec = { passband, stopband, attenuationDb, phases };
    this.phases = phases;
    this.cutoff = (passband + stopband) / 2;
    // Kaiser's formulas are empirical fits, off by a dB or so: designing for
    // 3 dB more makes the stated attenuation a guarantee.
    this.beta = kaiserBeta(attenuationDb + DESIGN_MARGIN_DB);
    const order = kaiserOrder(attenuationDb + DESIGN_MARGIN_DB, stopband - passband);
    this.halfTaps = Math.max(1, Math.ceil((order + 1) / 2));
    this.taps = 2 * this.halfTaps;
    const key = `${passband} ${stopband} ${attenuationDb} ${phases}`;
    const cached = TABLES.get(key);
    if (cached) {
      this.table = cached;
      return;
    }
    this.table = new Float64Array((phases + 1) * this.taps);
    const H = this.halfTaps;
    const fc = this.cutoff;
    for (let p = 0; p <= phases; p++) {
      const mu = p / phases;
      let sum = 0;
      const row = p * this.taps;
      for (let j = 0; j < this.taps; j++) {
        const u = j - H + 1 - mu;
        const v = 2 * fc * sinc(2 * fc * u) * kaiserWindow(u / H, this.beta);
        this.table[row + j] = v;
        sum += v;
      }
      for (let j = 0; j < this.taps; j++) this.table[row + j] /= sum;
    }
    if (TABLES.size >= MAX_TABLES) TABLES.delete(TABLES.keys().next().value as string);
    TABLES.set(key, this.table);
  }

  /**
   * Coefficients c_j(μ) for a fractional offset μ ∈ [0, 1), into `out` (2H values).
   * Not validated: a μ outside [0, 1) reads past the table.
   */
  coefficients(mu: number, out: Float64Array): void {
    const p = mu * this.phases;
    const i = Math.floor(p);
    const a = p - i;
    const n = this.taps;
    const r0 = i * n;
    const t = this.table;
    if (a === 0) {
      for (let j = 0; j < n; j++) out[j] = t[r0 + j];
      return;
    }
    // c = (1 − a)·row_i + a·row_{i+1}
    for (let j = 0; j < n; j++) out[j] = t[r0 + j] + a * (t[r0 + n + j] - t[r0 + j]);
  }
}

/** Normalized sinc: sin(πx)/(πx), 1 at 0. */
export function sinc(x: number): number {
  if (x === 0) return 1;
  const a = Math.PI * x;
  return Math.sin(a) / a;
}

/**
 * Complex dot product of `count` real coefficients (from `c[cOffset]` on) with interleaved complex
 * samples starting at complex index `start` of `buf`; the result goes to
 * `out[2·at]`, `out[2·at + 1]`:  out = Σⱼ c[cOffset + j]·buf[start + j].
 */
export function dotComplex(
  buf: Float64Array,
  start: number,
  c: Float64Array,
  count: number,
  out: Float64Array,
  at: number,
  cOffset = 0,
): void {
  let re = 0;
  let im = 0;
  let b = 2 * start;
  for (let j = cOffset, end = cOffset + count; j < end; j++, b += 2) {
    re += c[j] * buf[b];
    im += c[j] * buf[b + 1];
  }
  out[2 * at] = re;
  out[2 * at + 1] = im;
}
