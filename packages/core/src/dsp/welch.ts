import { OptionError } from '../pipeline/stage.js';
import { type ComplexArray, complexArray } from '../signal/complex.js';
import { fft } from './fft.js';

/** Options of the Welch estimate ({@link welchPsd}, {@link WelchEstimator}). */
export interface WelchOptions {
  /** Samples per segment (default 1024; at least 8). The resolution is sampleRate / segmentLength. */
  readonly segmentLength?: number;
  /** Fraction of a segment shared with the next, in [0, 1) (default 0.5). */
  readonly overlap?: number;
  /** Segment window (default 'hann'). */
  readonly window?: 'hann' | 'rectangular';
}

/** A two-sided power spectral density of a complex signal. */
export interface PowerSpectrum {
  /** Bin frequencies, Hz, ascending from −fs/2 (length N = segmentLength). */
  readonly frequency: Float64Array;
  /** Power per hertz at each frequency (signal units² / Hz), length N. */
  readonly psd: Float64Array;
  /** Bin spacing fs/N, Hz. */
  readonly resolutionHz: number;
  /** Equivalent noise bandwidth of one bin, fs·Σw²/(Σw)², Hz. */
  readonly noiseBandwidthHz: number;
  /** Segments averaged. */
  readonly segments: number;
  /** Sample rate of the input, Sa/s. */
  readonly sampleRate: number;
}

/**
 * Welch's averaged periodogram, fed block by block (Welch, "The use of fast
 * Fourier transform for the estimation of power spectra", IEEE Trans. Audio
 * Electroacoust. 15(2), 1967). Segments of N samples, `overlap` shared
 * between neighbours, windowed by w, transformed:
 *
 *   P[k] = (1/S) Σₛ |Σₙ w[n]·xₛ[n]·e^(−j2πkn/N)|² / (fs·Σₙ w[n]²)
 *
 * This scaling makes Σₖ P[k]·fs/N the mean power of the signal for a
 * stationary input (Parseval; exact for a rectangular window over one
 * segment). The estimate is the same whatever the block sizes pushed.
 * Samples after the last full segment are not used.
 * @throws OptionError for a bad segment length, overlap, window or sample rate
 * @example const w = new WelchEstimator(64e9); w.push(x); const { frequency, psd } = w.result();
 */
export class WelchEstimator {
  private readonly n: number;
  private readonly hop: number;
  private readonly window: Float64Array;
  private readonly windowPower: number;
  private readonly frame: ComplexArray;
  private readonly windowed: ComplexArray;
  private readonly spectrum: ComplexArray;
  private readonly sum: Float64Array;
  private filled = 0;
  private segments = 0;

  constructor(
    /** Sample rate of the input, Sa/s. */
    readonly sampleRate: number,
    private readonly options: WelchOptions = {},
  ) {
    if (!(Number.isFinite(sampleRate) && sampleRate > 0)) {
      throw new OptionError('welch', 'sampleRate', 'a positive number of Sa/s', sampleRate);
    }
    const n = options.segmentLength ?? 1024;
    if (!Number.isInteger(n) || n < 8) throw new OptionError('welch', 'segmentLength', 'an integer of at least 8', n);
    const overlap = options.overlap ?? 0.5;
    if (!(overlap >= 0 && overlap < 1)) throw new OptionError('welch', 'overlap', 'a fraction in [0, 1)', overlap);
    const kind = options.window ?? 'hann';
    if (kind !== 'hann' && kind !== 'rectangular') {
      throw new OptionError('welch', 'window', "'hann' or 'rectangular'", kind);
    }
    this.n = n;
    this.hop = Math.max(1, Math.round(n * (1 - overlap)));
    this.window = new Float64Array(n);
    let power = 0;
    for (let i = 0; i < n; i++) {
      // Periodic Hann window: w[n] = sin²(πn/N).
      const w = kind === 'hann' ? Math.sin((Math.PI * i) / n) ** 2 : 1;
      this.window[i] = w;
      power += w * w;
    }
    this.windowPower = power;
    this.frame = complexArray(n);
    this.windowed = complexArray(n);
    this.spectrum = complexArray(n);
    this.sum = new Float64Array(n);
  }

  /** Takes the next complex samples (interleaved, any count). */
  push(x: ComplexArray): void {
    const n = this.n;
    let at = 0;
    const total = x.length >> 1;
    while (at < total) {
      const take = Math.min(n - this.filled, total - at);
      this.frame.set(x.subarray(2 * at, 2 * (at + take)), 2 * this.filled);
      this.filled += take;
      at += take;
      if (this.filled === n) {
        this.segment();
        // Keep the overlap: the last n − hop samples start the next segment.
        this.frame.copyWithin(0, 2 * this.hop, 2 * n);
        this.filled = n - this.hop;
      }
    }
  }

  private segment(): void {
    const { n, window, frame, windowed, spectrum, sum } = this;
    for (let i = 0; i < n; i++) {
      windowed[2 * i] = frame[2 * i] * window[i];
      windowed[2 * i + 1] = frame[2 * i + 1] * window[i];
    }
    fft(windowed, spectrum);
    for (let k = 0; k < n; k++) sum[k] += spectrum[2 * k] ** 2 + spectrum[2 * k + 1] ** 2;
    this.segments++;
  }

  /**
   * The averaged spectrum so far.
   * @throws RangeError before one full segment has been pushed
   */
  result(): PowerSpectrum {
    const { n, sampleRate } = this;
    if (this.segments === 0) {
      throw new RangeError(`welch: expected at least one segment of ${n} samples, received ${this.filled}`);
    }
    const scale = 1 / (this.segments * sampleRate * this.windowPower);
    const frequency = new Float64Array(n);
    const psd = new Float64Array(n);
    const half = Math.floor(n / 2);
    let sw = 0;
    for (let i = 0; i < n; i++) sw += this.window[i];
    for (let j = 0; j < n; j++) {
      const k = (j - half + n) % n;
      frequency[j] = ((j - half) * sampleRate) / n;
      psd[j] = this.sum[k] * scale;
    }
    return {
      frequency,
      psd,
      resolutionHz: sampleRate / n,
      noiseBandwidthHz: (sampleRate * this.windowPower) / (sw * sw),
      segments: this.segments,
      sampleRate,
    };
  }

  /** Forgets every sample pushed. */
  reset(): void {
    this.sum.fill(0);
    this.filled = 0;
    this.segments = 0;
  }

  /** The options, for reproducibility records. */
  describe(): {
    /** Samples per segment. */
    segmentLength: number;
    /** Fraction of a segment shared with the next. */
    overlap: number;
    /** Window name. */
    window: string;
  } {
    return { segmentLength: this.n, overlap: this.options.overlap ?? 0.5, window: this.options.window ?? 'hann' };
  }
}

/**
 * Welch's power spectral density of one complex signal (see {@link WelchEstimator}).
 * @param x N complex samples, N ≥ segmentLength
 * @throws OptionError for bad options; RangeError when x is shorter than a segment
 * @example const psd = welchPsd(block.x, 64e9, { segmentLength: 2048 }); psd.frequency.length; // 2048
 */
export function welchPsd(x: ComplexArray, sampleRate: number, options: WelchOptions = {}): PowerSpectrum {
  const w = new WelchEstimator(sampleRate, options);
  w.push(x);
  return w.result();
}
