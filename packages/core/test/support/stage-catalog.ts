import {
  type AnyStage,
  type BlockOf,
  blindPhaseSearch,
  type ChannelBlock,
  combineChannels,
  complexArray,
  type Domain,
  differentialQuadrantDecoder,
  type FieldBlock,
  firFilter,
  frequencyOffsetRecovery,
  Rng,
  viterbiViterbi,
} from '../../src/index.js';

/**
 * Every stage of the library, with an input to stream through it. The
 * block-size property test runs each entry; a new stage adds an entry here.
 */
export interface CatalogEntry {
  readonly name: string;
  readonly make: () => AnyStage;
  readonly input: () => BlockOf<Domain>;
  /** Largest |difference| accepted between one block and many (default 0). */
  readonly tolerance?: number;
}

/** Random complex dual-pol block of `n` samples in domain `d`. */
export function randomField<D extends 'field' | 'twoSps' | 'symbols'>(
  d: D,
  n: number,
  seed: number,
  sampleRate = 64e9,
  sps = 2,
): FieldBlock<D> {
  const rng = new Rng(seed);
  const x = complexArray(n);
  const y = complexArray(n);
  rng.fillGaussian(x);
  rng.fillGaussian(y);
  return { domain: d, x, y, sampleRate, samplesPerSymbol: sps };
}

/** Random four-channel block. */
export function randomChannels(n: number, seed: number): ChannelBlock {
  const rng = new Rng(seed);
  const ch = () => rng.fillGaussian(new Float64Array(n));
  return { domain: 'channels', xi: ch(), xq: ch(), yi: ch(), yq: ch(), sampleRate: 80e9, samplesPerSymbol: 2.5 };
}

export const stageCatalog: CatalogEntry[] = [
  { name: 'combine-channels', make: () => combineChannels(), input: () => randomChannels(700, 1) },
  {
    name: 'fir (15 taps)',
    make: () => {
      const taps = complexArray(15);
      new Rng(9).fillGaussian(taps);
      return firFilter({ taps });
    },
    input: () => randomField('field', 900, 2),
  },
  {
    name: 'fir (1 tap, symbols)',
    make: () => firFilter({ domain: 'symbols', taps: Float64Array.of(0.5, -0.25) as never }),
    input: () => randomField('symbols', 300, 3, 32e9, 1),
  },
  // Carrier recovery: estimation spans, look-ahead windows and slip detectors straddle block edges.
  {
    name: 'frequency-offset (fixed, periodogram)',
    make: () => frequencyOffsetRecovery({ estimateSymbols: 200 }),
    input: () => randomField('symbols', 700, 21, 32e9, 1),
  },
  {
    name: 'frequency-offset (tracking, differential)',
    make: () => frequencyOffsetRecovery({ method: 'differential', trackingSymbols: 128 }),
    input: () => randomField('symbols', 700, 22, 32e9, 1),
  },
  {
    name: 'viterbi-viterbi (16qam, phase-jump slips)',
    make: () => viterbiViterbi({ modulation: '16qam', halfWindow: 5, slipWindow: 8 }),
    input: () => randomField('symbols', 600, 23, 32e9, 1),
  },
  {
    name: 'blind-phase-search (reference slips)',
    make: () => {
      const ref = randomField('symbols', 250, 24, 32e9, 1);
      return blindPhaseSearch({
        modulation: '16qam',
        testPhases: 8,
        halfWindow: 4,
        reference: { x: ref.x, y: ref.y },
        slipWindow: 8,
      });
    },
    input: () => randomField('symbols', 600, 25, 32e9, 1),
  },
  {
    name: 'blind-phase-search (coarse-fine)',
    make: () => blindPhaseSearch({ modulation: 'qpsk', testPhases: 6, halfWindow: 3, variant: 'coarse-fine', fineHalfWindow: 5 }),
    input: () => randomField('symbols', 600, 26, 32e9, 1),
  },
  {
    name: 'blind-phase-search (stream shorter than the look-ahead)',
    make: () => blindPhaseSearch({ modulation: '64qam', halfWindow: 20 }),
    input: () => randomField('symbols', 15, 27, 32e9, 1),
  },
  {
    name: 'differential-quadrant-decoder',
    make: () => differentialQuadrantDecoder(),
    input: () => randomField('symbols', 300, 28, 32e9, 1),
  },
];
