import { checkRate } from '../pipeline/block-checks.js';
import { type ChannelBlock, emptyBlock } from '../pipeline/blocks.js';
import { BlockError, OptionError, type Stage, type StageRecord } from '../pipeline/stage.js';
import { InterpolationKernel } from '../resample/interpolation-kernel.js';
import { CHANNEL_NAMES, type ChannelName } from '../signal/dual-pol.js';
import { checkChannels } from './normalize-channels.js';

/** Options of {@link deskewChannels}. */
export interface DeskewChannelsOptions {
  /**
   * Delay of each channel relative to the others, ps, as measured on the
   * receiver (a channel that arrives late has a positive skew); the stage
   * advances each channel by its skew. Missing channels: 0.
   */
  readonly skewPs: Partial<Readonly<Record<ChannelName, number>>>;
  /** Stopband attenuation of the fractional-delay filter, dB (default 80). */
  readonly attenuationDb?: number;
}

/** What {@link deskewChannels} reports. */
export interface DeskewChannelsDiagnostics {
  /** Skew removed per channel, ps. */
  readonly skewPs: Readonly<Record<ChannelName, number>>;
  /** Taps of the fractional-delay filters (0 before the first block). */
  readonly taps: number;
}

/**
 * Per-channel skew correction by fractional-delay FIR filters: channel c is
 * advanced by its skew τ_c, y_c[n] = x_c(n + τ_c·fs), with a Kaiser-windowed
 * sinc interpolator (Laakso, Välimäki, Karjalainen & Laine, "Splitting the
 * unit delay", IEEE Signal Process. Mag. 13(1), 1996, §3.3; windowed-sinc
 * design by Kaiser's formulas, see {@link InterpolationKernel}):
 *
 *   y_c[n] = Σⱼ x_c[n + ⌊τ_c·fs⌋ − H + 1 + j]·c_j(μ_c),  μ_c = τ_c·fs − ⌊τ_c·fs⌋
 *
 * The filter is flat (ripple 10^(−A/20)) up to 0.4 cycles per sample and its
 * window transition ends at 0.6: the signal must lie within ±0.4·fs (a
 * 32 GBd, roll-off 0.1 signal at 64 GSa/s reaches 0.275·fs). The output has
 * as many samples as the input; the stream is zero outside the capture.
 *
 * @throws OptionError for a skew that is not finite, or an attenuation outside [21, 200] dB
 * @example const deskew = deskewChannels({ skewPs: { xq: 5 } });
 */
export function deskewChannels(options: DeskewChannelsOptions): Stage<'channels', 'channels', DeskewChannelsDiagnostics> {
  return new DeskewChannels(options);
}

class DeskewChannels implements Stage<'channels', 'channels', DeskewChannelsDiagnostics> {
  readonly name = 'deskew-channels';
  readonly input = 'channels' as const;
  readonly output = 'channels' as const;
  private readonly skew: Record<ChannelName, number>;
  private readonly kernel: InterpolationKernel;
  private readonly attenuationDb: number;
  private taps: Float64Array[] = [];
  private L = 0;
  private hist: Float64Array[] = [];
  private toSkip = 0;
  private sampleRate = Number.NaN;
  private sps = Number.NaN;

  constructor(o: DeskewChannelsOptions) {
    if (typeof o?.skewPs !== 'object' || o.skewPs === null) {
      throw new OptionError(this.name, 'skewPs', 'an object of skews in ps per channel', o?.skewPs);
    }
    this.skew = { xi: 0, xq: 0, yi: 0, yq: 0 };
    for (const name of CHANNEL_NAMES) {
      const v = o.skewPs[name] ?? 0;
      if (typeof v !== 'number' || !Number.isFinite(v))
        throw new OptionError(this.name, `skewPs.${name}`, 'a finite skew in ps', v);
      this.skew[name] = v;
    }
    this.attenuationDb = o.attenuationDb ?? 80;
    if (!(this.attenuationDb >= 21 && this.attenuationDb <= 200)) {
      throw new OptionError(this.name, 'attenuationDb', 'an attenuation from 21 to 200 dB', o.attenuationDb);
    }
    this.kernel = new InterpolationKernel({ passband: 0.4, stopband: 0.6, attenuationDb: this.attenuationDb });
  }

  process(block: ChannelBlock): ChannelBlock {
    checkChannels(this.name, block);
    if (Number.isNaN(this.sampleRate)) this.design(block.sampleRate, block.samplesPerSymbol);
    else checkRate(this.name, this.sampleRate, block.sampleRate);
    return this.run([block.xi, block.xq, block.yi, block.yq]);
  }

  flush(): ChannelBlock | null {
    if (Number.isNaN(this.sampleRate)) return null;
    const c = (this.L - 1) / 2;
    const z = new Float64Array(c);
    // Zeros after the end of the stream push out the last c outputs.
    return this.run([z, z, z, z]);
  }

  reset(): void {
    this.sampleRate = Number.NaN;
    this.sps = Number.NaN;
    this.taps = [];
    this.hist = [];
    this.L = 0;
    this.toSkip = 0;
  }

  diagnostics(): DeskewChannelsDiagnostics {
    return { skewPs: { ...this.skew }, taps: this.L };
  }

  describe(): StageRecord {
    return { stage: this.name, options: { skewPs: { ...this.skew }, attenuationDb: this.attenuationDb } };
  }

  /** Builds the four centred FIRs: h_c[k] = c_j(μ_c) at k = S − ⌊τ_c·fs⌋ + H − 1 − j. */
  private design(fs: number, sps: number): void {
    if (!(fs > 0)) throw new BlockError(`${this.name}: expected a positive sample rate, received ${fs}`);
    this.sampleRate = fs;
    this.sps = sps;
    const H = this.kernel.halfTaps;
    const shifts = CHANNEL_NAMES.map((n) => this.skew[n] * 1e-12 * fs);
    let S = 0;
    for (const d of shifts) S = Math.max(S, Math.abs(Math.floor(d)) + H + 1);
    this.L = 2 * S + 1;
    const c = new Float64Array(this.kernel.taps);
    this.taps = shifts.map((d) => {
      const whole = Math.floor(d);
      this.kernel.coefficients(d - whole, c);
      const h = new Float64Array(this.L);
      for (let j = 0; j < this.kernel.taps; j++) h[S - whole + H - 1 - j] = c[j];
      return h;
    });
    this.hist = CHANNEL_NAMES.map(() => new Float64Array(this.L - 1));
    this.toSkip = S;
  }

  private run(inputs: Float64Array[]): ChannelBlock {
    const n = inputs[0].length;
    const skip = Math.min(this.toSkip, n);
    this.toSkip -= skip;
    // A channel without skew is a pure delay of S samples, which the skip undoes: only its samples move.
    const outs = inputs.map((v, c) =>
      (this.skew[CHANNEL_NAMES[c]] === 0 ? this.delayOne(c, v) : this.filterOne(c, v)).subarray(skip),
    );
    if (outs[0].length === 0 && n === 0) return emptyBlock('channels', this.sampleRate, this.sps);
    return {
      domain: 'channels',
      xi: outs[0],
      xq: outs[1],
      yi: outs[2],
      yq: outs[3],
      sampleRate: this.sampleRate,
      samplesPerSymbol: this.sps,
    };
  }

  /** The channel delayed by S samples (its filter is a unit impulse at S): history ‖ input, shifted. */
  private delayOne(c: number, input: Float64Array): Float64Array {
    const S = (this.L - 1) / 2;
    const hist = this.hist[c];
    const u = new Float64Array(hist.length + input.length);
    u.set(hist, 0);
    u.set(input, hist.length);
    this.hist[c] = u.slice(u.length - (this.L - 1));
    // z[m] = u[m + L − 1 − S]
    return u.subarray(this.L - 1 - S, this.L - 1 - S + input.length);
  }

  // z[m] = Σₖ h[k]·u[m + L − 1 − k], u = history ‖ input
  private filterOne(c: number, input: Float64Array): Float64Array {
    const L = this.L;
    const h = this.taps[c];
    const hist = this.hist[c];
    const u = new Float64Array(hist.length + input.length);
    u.set(hist, 0);
    u.set(input, hist.length);
    const n = input.length;
    const out = new Float64Array(n);
    for (let m = 0; m < n; m++) {
      let s = 0;
      const base = m + L - 1;
      for (let k = 0; k < L; k++) s += h[k] * u[base - k];
      out[m] = s;
    }
    this.hist[c] = u.slice(u.length - (L - 1));
    return out;
  }
}
