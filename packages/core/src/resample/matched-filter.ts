import { OverlapSave, overlapSaveSize, responseOfCenteredTaps } from '../dispersion/overlap-save.js';
import { ifft } from '../dsp/fft.js';
import { DEFAULT_ROLL_OFF, rootRaisedCosineSpectrum } from '../dsp/rrc.js';
import { checkBlock } from '../pipeline/block-checks.js';
import { type FieldBlock, fieldBlock } from '../pipeline/blocks.js';
import { type Pipeline, pipe } from '../pipeline/pipe.js';
import { OptionError, type Stage, type StageRecord } from '../pipeline/stage.js';
import { type ComplexArray, complexArray } from '../signal/complex.js';
import { type ResampleDiagnostics, type ResampleOptions, resampleToTwoSps } from './resampler.js';

/**
 * Root-raised-cosine taps at `samplesPerSymbol` samples per symbol, spanning
 * ±`spanSymbols` symbols (2·span·sps + 1 taps, the middle one at lag 0),
 * designed by frequency sampling of the RRC amplitude response √P(f)
 * (Proakis, Digital Communications, 5th ed., §9.2) on a fine grid:
 *
 *   h[n] = (1/M)·Σₖ √P(f_k)·e^(j2πkn/M),  f_k = k·sps·Rs/M,  M ≥ 64·(taps)
 *
 * The taps are real and even; the passband gain is 1 (Σ h[n] = √P(0) = 1 up
 * to the truncation), so that a transmitter RRC pulse and these taps make a
 * raised cosine with unit value at the symbol instant.
 * @throws RangeError for a roll-off outside (0, 1], an integer sps below 2 or a span below 1
 * @example const taps = rrcTaps(0.1, 2, 32); // 65 complex taps at 2 samples per symbol
 */
export function rrcTaps(rollOff: number, samplesPerSymbol: number, spanSymbols: number): ComplexArray {
  if (!(rollOff > 0 && rollOff <= 1)) throw new RangeError(`rrcTaps: expected a roll-off in (0, 1], received ${rollOff}`);
  if (!Number.isInteger(samplesPerSymbol) || samplesPerSymbol < 2) {
    throw new RangeError(`rrcTaps: expected an integer of at least 2 samples per symbol, received ${samplesPerSymbol}`);
  }
  if (!Number.isInteger(spanSymbols) || spanSymbols < 1) {
    throw new RangeError(`rrcTaps: expected a span of at least 1 symbol, received ${spanSymbols}`);
  }
  const K = spanSymbols * samplesPerSymbol;
  let M = 1024;
  while (M < 64 * (2 * K + 1)) M *= 2;
  const H = complexArray(M);
  for (let k = 0; k < M; k++) {
    const kk = k < M / 2 ? k : k - M;
    // Frequency in units of the symbol rate (Rs = 1).
    H[2 * k] = rootRaisedCosineSpectrum((kk * samplesPerSymbol) / M, 1, rollOff);
  }
  const h = ifft(H);
  const taps = complexArray(2 * K + 1);
  for (let n = -K; n <= K; n++) {
    const i = (n + M) % M;
    taps[2 * (n + K)] = h[2 * i];
  }
  return taps;
}

/** Options of the root-raised-cosine matched filter ({@link rrcMatchedFilter}). */
export interface MatchedFilterOptions {
  /** Transmitter roll-off β in (0, 1] (default 0.1). */
  readonly rollOff?: number;
  /**
   * Half-length of the filter, symbols (default 32: 129 taps at 2 samples per
   * symbol). An RRC pulse decays as cos(π(1 + β)t)/(4πβt²) (t in symbols); at
   * β = 0.1 the part beyond ±32 symbols holds about −46 dB of the pulse energy.
   */
  readonly spanSymbols?: number;
}

/** What the matched filter reports. */
export interface MatchedFilterDiagnostics {
  /** Taps of the root-raised-cosine filter. */
  readonly taps: number;
  /** FFT size of the overlap-save engine. */
  readonly fftSize: number;
  /** Samples delivered so far, per polarization. */
  readonly samples: number;
}

/**
 * The receiver's root-raised-cosine matched filter at 2 samples per symbol,
 * {@link rrcTaps} applied by overlap-save (no delay: the output has as many
 * samples as the input and output n is centred on input n).
 * @throws OptionError for a roll-off outside (0, 1] or a span that is not a positive integer
 * @example const mf = rrcMatchedFilter({ rollOff: 0.1 });
 */
export function rrcMatchedFilter(options: MatchedFilterOptions = {}): Stage<'twoSps', 'twoSps', MatchedFilterDiagnostics> {
  return new RrcMatchedFilter(options);
}

class RrcMatchedFilter implements Stage<'twoSps', 'twoSps', MatchedFilterDiagnostics> {
  readonly name = 'rrc-matched-filter';
  readonly input = 'twoSps' as const;
  readonly output = 'twoSps' as const;
  private readonly rollOff: number;
  private readonly span: number;
  private readonly ex: OverlapSave;
  private readonly ey: OverlapSave;
  private readonly taps: number;
  private sampleRate = Number.NaN;
  private delivered = 0;

  constructor(o: MatchedFilterOptions) {
    this.rollOff = o.rollOff ?? DEFAULT_ROLL_OFF;
    if (!(this.rollOff > 0 && this.rollOff <= 1)) throw new OptionError(this.name, 'rollOff', 'a roll-off in (0, 1]', o.rollOff);
    this.span = o.spanSymbols ?? 32;
    if (!Number.isInteger(this.span) || this.span < 1 || this.span > 4096) {
      throw new OptionError(this.name, 'spanSymbols', 'an integer from 1 to 4096', o.spanSymbols);
    }
    const taps = rrcTaps(this.rollOff, 2, this.span);
    this.taps = taps.length >> 1;
    const overlap = this.taps - 1;
    const n = overlapSaveSize(overlap);
    const response = responseOfCenteredTaps(taps, n);
    this.ex = new OverlapSave(response, overlap);
    this.ey = new OverlapSave(response, overlap);
  }

  process(block: FieldBlock<'twoSps'>): FieldBlock<'twoSps'> {
    checkBlock(this.name, block, 'twoSps');
    this.sampleRate = block.sampleRate;
    const x = this.ex.process(block.x);
    const y = this.ey.process(block.y);
    this.delivered += x.length >> 1;
    return fieldBlock('twoSps', x, y, block.sampleRate, 2);
  }

  flush(): FieldBlock<'twoSps'> | null {
    if (Number.isNaN(this.sampleRate)) return null;
    const x = this.ex.flush();
    const y = this.ey.flush();
    this.delivered += x.length >> 1;
    return fieldBlock('twoSps', x, y, this.sampleRate, 2);
  }

  reset(): void {
    this.ex.reset();
    this.ey.reset();
    this.sampleRate = Number.NaN;
    this.delivered = 0;
  }

  diagnostics(): MatchedFilterDiagnostics {
    return { taps: this.taps, fftSize: this.ex.fftSize, samples: this.delivered };
  }

  describe(): StageRecord {
    return { stage: this.name, options: { rollOff: this.rollOff, spanSymbols: this.span } };
  }
}

/**
 * The default chain's step from the scope rate to 2 samples per symbol:
 * {@link resampleToTwoSps} then {@link rrcMatchedFilter}.
 * @example const step = resampleAndMatchedFilter({ rollOff: 0.1 });
 */
export function resampleAndMatchedFilter(
  options: ResampleOptions & MatchedFilterOptions = {},
): Pipeline<'field', 'twoSps', [ResampleDiagnostics, MatchedFilterDiagnostics]> {
  return pipe(
    resampleToTwoSps({ symbolRate: options.symbolRate, attenuationDb: options.attenuationDb }),
    rrcMatchedFilter({ rollOff: options.rollOff, spanSymbols: options.spanSymbols }),
  );
}
