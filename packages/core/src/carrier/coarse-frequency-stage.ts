import { checkBlock } from '../pipeline/block-checks.js';
import { type BlockOf, emptyBlock, type FieldBlock, fieldBlock } from '../pipeline/blocks.js';
import { LeadingSpan } from '../pipeline/leading-span.js';
import { OptionError, type Stage, type StageRecord } from '../pipeline/stage.js';
import type { ComplexArray } from '../signal/complex.js';
import { estimateOffsetPeriodogram } from './fourth-power-periodogram.js';
import { removeFrequencyOffset } from './frequency-removal.js';

/** The waveform domains the stage runs on. */
type WaveformDomain = 'field' | 'twoSps';

/** Options of {@link coarseFrequencyShift}. */
export interface CoarseFrequencyOptions<D extends WaveformDomain = 'twoSps'> {
  /** Domain of the waveform: 'twoSps' (default) or 'field' (scope rate). */
  readonly domain?: D;
  /** Leading samples per polarization the estimate is made on (held back until then), at least 1,024 (default 65,536). */
  readonly estimateSamples?: number;
  /**
   * A known offset, Hz (x rotating as exp(+j2π·f·t)): removed as it is,
   * nothing estimated and nothing held back (excludes `estimateSamples`).
   * For signals whose fourth power holds no tone, as shaped QAM's, whose
   * offset is found against the reference instead.
   */
  readonly freqOffsetHz?: number;
}

/** What the coarse frequency stage learned. */
export interface CoarseFrequencyDiagnostics {
  /** The offset removed, Hz (x rotated as exp(+j2π·f·t)); NaN until estimated. */
  readonly freqOffsetHz: number;
  /** Samples delivered so far, per polarization. */
  readonly samples: number;
}

const NAME = 'coarse-frequency';

/**
 * Coarse frequency-offset removal on a waveform (2 samples per symbol by
 * default, or the field at the scope rate), before the matched filter and
 * after dispersion compensation (dispersion smears the fourth-power tone): a matched filter centred on the local oscillator cuts one
 * band edge of a signal offset by Δf and lets in noise at the other (at
 * 32 GBd with roll-off 0.1, a 2 GHz offset costs about 0.7 dB of SNR), so
 * the offset is taken out first. The estimate is the fourth-power
 * periodogram (Selmi, Jaouën, Ciblat, ECOC 2009) of the oversampled field,
 * whose fourth power still holds a tone at 4Δf; range |Δf| < fs/8 (±8 GHz at 64 GSa/s). The
 * symbol-rate frequency stage after the equalizer then removes what is left.
 *
 * Block-size invariant: the estimate uses the first `estimateSamples`
 * samples of the stream, and each sample's phase depends only on its index.
 * @throws OptionError for a span below 1,024 samples
 * @example const shift = coarseFrequencyShift({ estimateSamples: 32768 });
 */
export function coarseFrequencyShift<D extends WaveformDomain = 'twoSps'>(
  options: CoarseFrequencyOptions<D> = {},
): Stage<D, D, CoarseFrequencyDiagnostics> {
  return new CoarseFrequency<D>(options);
}

class CoarseFrequency<D extends WaveformDomain> implements Stage<D, D, CoarseFrequencyDiagnostics> {
  readonly name = NAME;
  readonly input: D;
  readonly output: D;
  private readonly spanSamples: number;
  private readonly span: LeadingSpan<FieldBlock>;
  private estimate = Number.NaN;
  private delivered = 0;
  /** The offset given, or null to estimate it. */
  private readonly known: number | null;

  constructor(options: CoarseFrequencyOptions<D>) {
    this.input = (options.domain ?? 'twoSps') as D;
    this.output = this.input;
    if (this.input !== 'twoSps' && this.input !== 'field')
      throw new OptionError(NAME, 'domain', "'twoSps' or 'field'", this.input);
    const span = options.estimateSamples ?? 65_536;
    if (!Number.isInteger(span) || span < 1024) throw new OptionError(NAME, 'estimateSamples', 'an integer ≥ 1024', span);
    const known = options.freqOffsetHz;
    if (known !== undefined) {
      if (typeof known !== 'number' || !Number.isFinite(known))
        throw new OptionError(NAME, 'freqOffsetHz', 'a finite offset in Hz', known);
      if (options.estimateSamples !== undefined)
        throw new OptionError(NAME, 'estimateSamples', 'no estimate span with a known freqOffsetHz', options.estimateSamples);
    }
    this.known = known ?? null;
    this.spanSamples = span;
    this.span = new LeadingSpan(span);
    if (this.known !== null) this.estimate = this.known;
  }

  process(input: BlockOf<D>): BlockOf<D> {
    const block = input as FieldBlock;
    checkBlock(NAME, block, this.input);
    if (this.known !== null || this.span.ready) return this.shift(block);
    const r = this.span.push(block);
    if (!r) return emptyBlock(this.output, block.sampleRate, block.samplesPerSymbol);
    return this.estimateAndShift(r.calibration, r.all);
  }

  flush(): BlockOf<D> | null {
    if (this.known !== null) return null;
    const r = this.span.finish();
    return r ? this.estimateAndShift(r.calibration, r.all) : null;
  }

  reset(): void {
    this.span.reset();
    this.estimate = this.known ?? Number.NaN;
    this.delivered = 0;
  }

  diagnostics(): CoarseFrequencyDiagnostics {
    return { freqOffsetHz: this.estimate, samples: this.delivered };
  }

  describe(): StageRecord {
    if (this.known !== null) return { stage: NAME, options: { domain: this.input, freqOffsetHz: this.known } };
    return { stage: NAME, options: { domain: this.input, estimateSamples: this.spanSamples } };
  }

  private estimateAndShift(calibration: FieldBlock, all: FieldBlock): BlockOf<D> {
    this.estimate =
      calibration.x.length === 0 ? 0 : estimateOffsetPeriodogram(calibration.x, calibration.y, calibration.sampleRate);
    return this.shift(all);
  }

  // z[n] ← z[n]·e^(−j2π·Δf·n/fs), n counted from the start of the stream.
  private shift(block: FieldBlock): BlockOf<D> {
    const x = block.x.slice() as ComplexArray;
    const y = block.y.slice() as ComplexArray;
    removeFrequencyOffset(x, this.estimate, block.sampleRate, 0, this.delivered);
    removeFrequencyOffset(y, this.estimate, block.sampleRate, 0, this.delivered);
    this.delivered += x.length >> 1;
    return fieldBlock(this.output as WaveformDomain, x, y, block.sampleRate, block.samplesPerSymbol) as BlockOf<D>;
  }
}
