import { type FieldBlock, fieldBlock } from '../pipeline/blocks.js';
import { BlockError, OptionError, type Stage, type StageRecord } from '../pipeline/stage.js';
import { type ComplexArray, concatComplex } from '../signal/complex.js';
import { estimateOffsetPeriodogram } from './fourth-power-periodogram.js';
import { removeFrequencyOffset } from './frequency-removal.js';

/** Options of {@link coarseFrequencyShift}. */
export interface CoarseFrequencyOptions {
  /** Leading samples per polarization the estimate is made on (held back until then), at least 1,024 (default 65,536). */
  readonly estimateSamples?: number;
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
 * Coarse frequency-offset removal on the field at the scope rate, before the
 * matched filter: a matched filter centred on the local oscillator cuts one
 * band edge of a signal offset by Δf and lets in noise at the other (at
 * 32 GBd with roll-off 0.1, a 2 GHz offset costs about 0.7 dB of SNR), so
 * the offset is taken out first. The estimate is the fourth-power
 * periodogram (Selmi, Jaouën, Ciblat, ECOC 2009) of the oversampled field,
 * whose fourth power still holds a tone at 4Δf; range |Δf| < fs/8. The
 * symbol-rate frequency stage after the equalizer then removes what is left.
 *
 * Block-size invariant: the estimate uses the first `estimateSamples`
 * samples of the stream, and each sample's phase depends only on its index.
 * @throws OptionError for a span below 1,024 samples
 * @example const shift = coarseFrequencyShift({ estimateSamples: 32768 });
 */
export function coarseFrequencyShift(options: CoarseFrequencyOptions = {}): Stage<'field', 'field', CoarseFrequencyDiagnostics> {
  return new CoarseFrequency(options);
}

class CoarseFrequency implements Stage<'field', 'field', CoarseFrequencyDiagnostics> {
  readonly name = NAME;
  readonly input = 'field' as const;
  readonly output = 'field' as const;
  private readonly span: number;
  private held: FieldBlock<'field'>[] = [];
  private heldSamples = 0;
  private estimate = Number.NaN;
  private delivered = 0;

  constructor(options: CoarseFrequencyOptions) {
    const span = options.estimateSamples ?? 65_536;
    if (!Number.isInteger(span) || span < 1024) throw new OptionError(NAME, 'estimateSamples', 'an integer ≥ 1024', span);
    this.span = span;
  }

  process(block: FieldBlock<'field'>): FieldBlock<'field'> {
    if (block.domain !== 'field') throw new BlockError(`${NAME}: expected a 'field' block, received '${block.domain}'`);
    if (!Number.isNaN(this.estimate)) return this.shift(block.x.slice() as ComplexArray, block.y.slice() as ComplexArray, block);
    this.held.push(block);
    this.heldSamples += block.x.length >> 1;
    if (this.heldSamples < this.span)
      return fieldBlock(
        'field',
        block.x.subarray(0, 0) as ComplexArray,
        block.y.subarray(0, 0) as ComplexArray,
        block.sampleRate,
        block.samplesPerSymbol,
      );
    return this.release();
  }

  flush(): FieldBlock<'field'> | null {
    return this.held.length > 0 ? this.release() : null;
  }

  reset(): void {
    this.held = [];
    this.heldSamples = 0;
    this.estimate = Number.NaN;
    this.delivered = 0;
  }

  diagnostics(): CoarseFrequencyDiagnostics {
    return { freqOffsetHz: this.estimate, samples: this.delivered };
  }

  describe(): StageRecord {
    return { stage: NAME, options: { estimateSamples: this.span } };
  }

  private release(): FieldBlock<'field'> {
    const first = this.held[0];
    const x = concatComplex(this.held.map((b) => b.x));
    const y = concatComplex(this.held.map((b) => b.y));
    this.held = [];
    this.heldSamples = 0;
    const n = Math.min(this.span, x.length >> 1);
    this.estimate =
      n === 0
        ? 0
        : estimateOffsetPeriodogram(x.subarray(0, 2 * n) as ComplexArray, y.subarray(0, 2 * n) as ComplexArray, first.sampleRate);
    return this.shift(x, y, first);
  }

  // z[n] ← z[n]·e^(−j2π·Δf·n/fs), n counted from the start of the stream.
  private shift(x: ComplexArray, y: ComplexArray, like: FieldBlock<'field'>): FieldBlock<'field'> {
    removeFrequencyOffset(x, this.estimate, like.sampleRate, 0, this.delivered);
    removeFrequencyOffset(y, this.estimate, like.sampleRate, 0, this.delivered);
    this.delivered += x.length >> 1;
    return fieldBlock('field', x, y, like.sampleRate, like.samplesPerSymbol);
  }
}
