import { checkBlock } from '../pipeline/block-checks.js';
import { type BlockOf, type FieldBlock, fieldBlock } from '../pipeline/blocks.js';
import { BlockError, OptionError, type Stage, type StageRecord } from '../pipeline/stage.js';
import { type ComplexArray, complexArray } from '../signal/complex.js';

type FieldDomain = 'field' | 'twoSps' | 'symbols';

/**
 * Complex FIR filtering kernel over a contiguous input.
 *
 *   z[m] = Σₖ h[k]·u[m + L − 1 − k],  m = 0 … count − 1
 *
 * `u` holds L − 1 samples of history followed by the new samples, so that
 * `count` = samples(u) − (L − 1). Pure: no allocation.
 * @example firKernel(taps, delayLine, out, 256); // 256 outputs
 */
export function firKernel(taps: ComplexArray, u: Float64Array, out: Float64Array, count: number): void {
  const L = taps.length >> 1;
  for (let m = 0; m < count; m++) {
    let re = 0;
    let im = 0;
    const base = 2 * (m + L - 1);
    for (let k = 0; k < L; k++) {
      const hr = taps[2 * k];
      const hi = taps[2 * k + 1];
      const ur = u[base - 2 * k];
      const ui = u[base - 2 * k + 1];
      re += hr * ur - hi * ui;
      im += hr * ui + hi * ur;
    }
    out[2 * m] = re;
    out[2 * m + 1] = im;
  }
}

/** Options of {@link firFilter}. */
export interface FirFilterOptions<D extends FieldDomain> {
  /** Domain filtered (input and output), default 'field'. */
  readonly domain?: D;
  /** Complex taps, an odd number L ≥ 1; the same filter for x and y. */
  readonly taps: ComplexArray;
  /** Stage name in records (default 'fir'). */
  readonly name?: string;
}

/**
 * A linear-phase-aligned FIR filter on both polarizations: output sample n is
 * Σₖ h[k]·x[n + (L − 1)/2 − k], so a symmetric filter adds no delay and the
 * output has exactly as many samples as the input (the stream is taken as
 * zero outside the capture).
 * @throws OptionError when the tap count is even or zero, or a tap is not finite
 * @example const lowpass = firFilter({ taps: fromParts([0.25, 0.5, 0.25], [0, 0, 0]) }); const y = lowpass.process(block);
 */
export function firFilter<D extends FieldDomain = 'field'>(options: FirFilterOptions<D>): Stage<D, D, FirDiagnostics> {
  return new FirFilter(options);
}

/** What {@link firFilter} reports. */
export interface FirDiagnostics {
  /** Taps of the filter. */
  readonly taps: number;
  /** Samples delivered so far, per polarization. */
  readonly samples: number;
}

class FirFilter<D extends FieldDomain> implements Stage<D, D, FirDiagnostics> {
  readonly name: string;
  readonly input: D;
  readonly output: D;
  private readonly taps: ComplexArray;
  private readonly L: number;
  private histX: Float64Array;
  private histY: Float64Array;
  private toSkip: number;
  private delivered = 0;
  private sampleRate = Number.NaN;
  private sps = Number.NaN;

  constructor(options: FirFilterOptions<D>) {
    this.name = options.name ?? 'fir';
    this.input = (options.domain ?? 'field') as D;
    this.output = this.input;
    const L = options.taps.length >> 1;
    if (L < 1 || L % 2 === 0 || options.taps.length % 2 !== 0) {
      throw new OptionError(this.name, 'taps', 'an odd number of complex taps', L);
    }
    for (const v of options.taps) if (!Number.isFinite(v)) throw new OptionError(this.name, 'taps', 'finite values', v);
    this.taps = options.taps.slice() as ComplexArray;
    this.L = L;
    this.histX = new Float64Array(2 * (L - 1));
    this.histY = new Float64Array(2 * (L - 1));
    this.toSkip = (L - 1) / 2;
  }

  process(input: BlockOf<D>): BlockOf<D> {
    const block = input as FieldBlock;
    checkBlock(this.name, block, this.input);
    this.sampleRate = block.sampleRate;
    this.sps = block.samplesPerSymbol;
    return this.run(block.x, block.y);
  }

  flush(): BlockOf<D> | null {
    const c = (this.L - 1) / 2;
    if (c === 0 || Number.isNaN(this.sampleRate)) return null;
    // Zeros after the end of the stream push out the last c outputs.
    return this.run(complexArray(c), complexArray(c));
  }

  reset(): void {
    this.histX.fill(0);
    this.histY.fill(0);
    this.toSkip = (this.L - 1) / 2;
    this.delivered = 0;
    this.sampleRate = Number.NaN;
    this.sps = Number.NaN;
  }

  diagnostics(): FirDiagnostics {
    return { taps: this.L, samples: this.delivered };
  }

  describe(): StageRecord {
    return { stage: this.name, options: { taps: Array.from(this.taps) } };
  }

  private run(x: ComplexArray, y: ComplexArray): BlockOf<D> {
    const n = x.length >> 1;
    if (y.length !== x.length) throw new BlockError(`${this.name}: x has ${n} samples, y has ${y.length >> 1}`);
    const zx = this.filterOne(x, 'x');
    const zy = this.filterOne(y, 'y');
    // The first (L − 1)/2 outputs of the full convolution precede the aligned output.
    const skip = Math.min(this.toSkip, n);
    this.toSkip -= skip;
    const outX = zx.subarray(2 * skip) as ComplexArray;
    const outY = zy.subarray(2 * skip) as ComplexArray;
    this.delivered += n - skip;
    return fieldBlock(this.output as FieldDomain, outX, outY, this.sampleRate, this.sps) as BlockOf<D>;
  }

  private filterOne(input: ComplexArray, pol: 'x' | 'y'): ComplexArray {
    const n = input.length >> 1;
    const hist = pol === 'x' ? this.histX : this.histY;
    const h = hist.length;
    const u = new Float64Array(h + input.length);
    u.set(hist, 0);
    u.set(input, h);
    const out = complexArray(n);
    firKernel(this.taps, u, out, n);
    const next = u.subarray(u.length - h);
    if (pol === 'x') this.histX = next.slice();
    else this.histY = next.slice();
    return out;
  }
}
