import type { ChannelBlock } from '../pipeline/blocks.js';
import { OptionError } from '../pipeline/stage.js';
import { complexArray } from '../signal/complex.js';
import { CHANNEL_NAMES, type ChannelName } from '../signal/dual-pol.js';
import { WelchEstimator } from './welch.js';

/** One-sided power spectral densities of the four real scope channels. */
export interface ChannelSpectra {
  /** Bin frequencies, Hz, from 0 to fs/2 (N/2 + 1 values for segments of N samples). */
  readonly frequencyHz: Float64Array;
  /** One-sided PSD per channel, channel units² / Hz (twice the two-sided value, DC and fs/2 once). */
  readonly psd: { readonly [C in ChannelName]: Float64Array };
  /** Bin spacing, Hz: fs/N for segments of N samples. */
  readonly resolutionHz: number;
  /** Welch segments averaged per channel (0 when fewer than N samples came). */
  readonly segments: number;
  /** Sample rate of the channels, Sa/s. */
  readonly sampleRate: number;
}

/**
 * Welch power spectra of the four real channels xi, xq, yi, yq of a capture,
 * fed block by block in bounded memory (one segment buffer per channel; see
 * {@link WelchEstimator}). A real signal's spectrum is even, so it is given
 * one-sided: P₁(f) = 2·P(f) for 0 < f < fs/2, so that Σ P₁·fs/N is still
 * the mean power (Welch 1967 scaling). The estimate does not depend on the
 * block sizes.
 * @throws OptionError for a bad sample rate or segment length
 * @example const s = new ChannelSpectraEstimator(80e9, 512); for (const b of blocks) s.push(b); const r = s.result();
 */
export class ChannelSpectraEstimator {
  private readonly welch: WelchEstimator[];
  private scratch = complexArray(0);

  /**
   * @param sampleRate sample rate of the channels, Sa/s
   * @param segmentLength Welch segment length N, samples (even, ≥ 8; default 512)
   */
  constructor(
    /** Sample rate of the channels, Sa/s. */
    readonly sampleRate: number,
    /** Welch segment length N, samples. */
    readonly segmentLength = 512,
  ) {
    if (!Number.isInteger(segmentLength) || segmentLength < 8 || segmentLength % 2 !== 0)
      throw new OptionError('channel-spectra', 'segmentLength', 'an even integer ≥ 8', segmentLength);
    this.welch = CHANNEL_NAMES.map(() => new WelchEstimator(sampleRate, { segmentLength }));
  }

  /** Takes the next block of the four channels (any length). */
  push(block: ChannelBlock): void {
    const n = block.xi.length;
    if (this.scratch.length < 2 * n) this.scratch = complexArray(n);
    const z = this.scratch.subarray(0, 2 * n) as typeof this.scratch;
    for (let c = 0; c < 4; c++) {
      const v = block[CHANNEL_NAMES[c]];
      for (let k = 0; k < n; k++) {
        z[2 * k] = v[k];
        z[2 * k + 1] = 0;
      }
      this.welch[c].push(z);
    }
  }

  /** The spectra so far, or null before one full segment. */
  result(): ChannelSpectra | null {
    const n = this.segmentLength;
    const half = n / 2;
    const twoSided = this.welch.map((w) => {
      try {
        return w.result();
      } catch {
        return null;
      }
    });
    const first = twoSided[0];
    if (!first) return null;
    // The two-sided spectrum runs from −fs/2 at index 0; 0 Hz sits at index N/2.
    const oneSided = (p: Float64Array) => {
      const out = new Float64Array(half + 1);
      for (let k = 0; k < half; k++) out[k] = k === 0 ? p[half] : 2 * p[half + k];
      out[half] = p[0]; // −fs/2 is also +fs/2
      return out;
    };
    return {
      frequencyHz: Float64Array.from({ length: half + 1 }, (_, k) => (k * this.sampleRate) / n),
      psd: Object.fromEntries(CHANNEL_NAMES.map((c, i) => [c, oneSided(twoSided[i]!.psd)])) as ChannelSpectra['psd'],
      resolutionHz: first.resolutionHz,
      segments: first.segments,
      sampleRate: this.sampleRate,
    };
  }
}
