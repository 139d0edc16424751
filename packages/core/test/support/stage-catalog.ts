import {
  type AnyStage,
  type BlockOf,
  butterflyEqualizer,
  type ChannelBlock,
  combineChannels,
  complexArray,
  type Domain,
  type FieldBlock,
  firFilter,
  Rng,
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
  {
    // Every path: buffered start with 2 passes (the buffer ends mid-stream), pre-convergence with the
    // orthogonal y-filters and its annealed step, RDE, DD-LMS, updates every 2nd symbol, restarts.
    name: 'butterfly equalizer (passes over the start, CMA → RDE → DD-LMS)',
    make: () =>
      butterflyEqualizer({
        modulation: '16qam',
        taps: 7,
        preConvergenceSymbols: 100,
        convergeOnStart: { symbols: 150, passes: 2 },
        ddLms: { startSymbol: 400 },
        updateEvery: 2,
        traceEvery: 16,
        singularity: { orthogonalStart: true, restart: true },
        convergence: { window: 64 },
      }),
    input: () => randomField('twoSps', 1201, 4, 64e9, 2),
  },
  {
    name: 'butterfly equalizer (streaming from the first sample, QPSK)',
    make: () =>
      butterflyEqualizer({ modulation: 'qpsk', taps: 9, preConvergenceSymbols: 64, convergeOnStart: { symbols: 1, passes: 0 } }),
    input: () => randomField('twoSps', 900, 5, 64e9, 2),
  },
];
