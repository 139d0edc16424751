import {
  type AnyStage,
  type BlockOf,
  blindPhaseSearch,
  butterflyEqualizer,
  type ChannelBlock,
  coarseFrequencyShift,
  combineChannels,
  compensateDispersion,
  complexArray,
  type Domain,
  decisionEqualizer,
  deskewChannels,
  differentialQuadrantDecoder,
  type FieldBlock,
  fieldBlock,
  firFilter,
  frequencyOffsetRecovery,
  gardnerClockRecovery,
  normalizeChannels,
  orthogonalizeIq,
  Rng,
  resampleAndMatchedFilter,
  resampleToTwoSps,
  rrcMatchedFilter,
  simulate,
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
/** A simulated QPSK field at 2 samples per symbol whose xq rail is 5 ps late: a timing line to find the skew by. */
function skewedField(samples: number, seed: number): BlockOf<'twoSps'> {
  const cap = simulate({
    seed,
    modulation: 'qpsk',
    symbols: samples / 2,
    symbolRate: 32e9,
    rollOff: 0.5,
    channel: { esN0Db: 20, dispersionPsPerNm: 200 },
    receiver: { skewPs: { xq: 5 } },
  });
  const { xi, xq, yi, yq } = cap.channels;
  const x = complexArray(samples);
  const y = complexArray(samples);
  for (let k = 0; k < samples; k++) {
    x[2 * k] = xi[k];
    x[2 * k + 1] = xq[k];
    y[2 * k] = yi[k];
    y[2 * k + 1] = yq[k];
  }
  return fieldBlock('twoSps', x, y, 64e9, 2);
}

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
    name: 'blind-phase-search (coarse-fine, joint, window chosen on the start)',
    make: () =>
      blindPhaseSearch({
        modulation: '16qam',
        testPhases: 8,
        halfWindow: 'auto',
        variant: 'coarse-fine',
        polarizations: 'joint',
        calibrationSymbols: 300,
      }),
    input: () => randomField('symbols', 900, 47, 32e9, 1),
  },
  {
    name: 'blind-phase-search (stream shorter than the look-ahead)',
    make: () => blindPhaseSearch({ modulation: '64qam', halfWindow: 20 }),
    input: () => randomField('symbols', 15, 27, 32e9, 1),
  },
  {
    name: 'blind-phase-search (joint, window chosen on the start)',
    make: () =>
      blindPhaseSearch({
        modulation: '16qam',
        testPhases: 8,
        halfWindow: 'auto',
        polarizations: 'joint',
        calibrationSymbols: 400,
      }),
    input: () => randomField('symbols', 900, 41, 32e9, 1),
  },
  {
    name: 'viterbi-viterbi (joint, stream shorter than the calibration)',
    make: () => viterbiViterbi({ modulation: 'qpsk', halfWindow: 6, polarizations: 'joint', calibrationSymbols: 1000 }),
    input: () => randomField('symbols', 300, 42, 32e9, 1),
  },
  {
    name: 'differential-quadrant-decoder',
    make: () => differentialQuadrantDecoder(),
    input: () => randomField('symbols', 300, 28, 32e9, 1),
  },
  {
    name: 'normalize-channels (calibration span across blocks)',
    make: () => normalizeChannels({ calibrationSamples: 150 }),
    input: () => randomChannels(700, 4),
  },
  {
    name: 'normalize-channels (span longer than the stream, full scale)',
    make: () => normalizeChannels({ calibrationSamples: 5000, fullScale: 1.5 }),
    input: () => randomChannels(300, 5),
  },
  {
    name: 'orthogonalize-iq (gsop)',
    make: () => orthogonalizeIq({ calibrationSamples: 200 }),
    input: () => randomChannels(600, 6),
  },
  {
    name: 'orthogonalize-iq (lowdin)',
    make: () => orthogonalizeIq({ method: 'lowdin', calibrationSamples: 90 }),
    input: () => randomChannels(500, 7),
  },
  {
    name: 'deskew-channels',
    make: () => deskewChannels({ skewPs: { xi: 5, xq: -12.5, yq: 40 } }),
    input: () => randomChannels(600, 8),
  },
  {
    name: 'resample-to-two-sps (80 → 64 GSa/s)',
    make: () => resampleToTwoSps(),
    input: () => randomField('field', 800, 9, 80e9, 2.5),
  },
  {
    name: 'resample-to-two-sps (50 → 56 GSa/s)',
    make: () => resampleToTwoSps({ symbolRate: 28e9 }),
    input: () => randomField('field', 500, 10, 50e9, 50 / 28),
  },
  {
    name: 'rrc-matched-filter',
    make: () => rrcMatchedFilter({ rollOff: 0.2, spanSymbols: 8 }),
    input: () => randomField('twoSps', 900, 11),
  },
  {
    name: 'resample + matched filter pipeline',
    make: () => resampleAndMatchedFilter({ spanSymbols: 16 }),
    input: () => randomField('field', 1000, 12, 80e9, 2.5),
  },
  {
    name: 'compensate-dispersion (given)',
    make: () => compensateDispersion({ dispersionPsPerNm: 1000 }),
    input: () => randomField('twoSps', 900, 13),
  },
  {
    name: 'compensate-dispersion (blind, estimation span across blocks)',
    make: () => compensateDispersion({ blind: { samples: 1024, minPsPerNm: 0, maxPsPerNm: 2000 } }),
    input: () => randomField('twoSps', 1500, 14),
  },
  {
    name: 'compensate-dispersion (given, I/Q skew estimated and removed)',
    make: () => compensateDispersion({ dispersionPsPerNm: 200, iqSkew: 'estimate', iqSkewSamples: 4096 }),
    input: () => skewedField(5000, 45),
  },
  {
    name: 'gardner-clock-recovery (clock offset acquired over segments across blocks)',
    make: () => gardnerClockRecovery({ acquisitionSamples: 6144, loopBandwidth: 5e-3 }),
    input: () => skewedField(8000, 46),
  },
  {
    name: 'gardner-clock-recovery (square-timing start across blocks)',
    make: () => gardnerClockRecovery({ acquisitionSamples: 300, loopBandwidth: 5e-3 }),
    input: () => randomField('twoSps', 1200, 15),
  },
  {
    name: 'gardner-clock-recovery (given start)',
    make: () => gardnerClockRecovery({ initialTiming: 0.7, rollOff: 0.5 }),
    input: () => randomField('twoSps', 700, 16),
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
  {
    name: 'decision equalizer (passes over the start)',
    make: () => decisionEqualizer({ modulation: '16qam', taps: 5, convergeOnStart: { symbols: 200, passes: 2 } }),
    input: () => randomField('symbols', 700, 43, 32e9, 1),
  },
  {
    name: 'decision equalizer (phase refinement of the output)',
    make: () =>
      decisionEqualizer({
        modulation: '16qam',
        taps: 5,
        convergeOnStart: { symbols: 200, passes: 2 },
        phaseRefinement: { halfWindow: 6 },
      }),
    input: () => randomField('symbols', 700, 45, 32e9, 1),
  },
  {
    name: 'decision equalizer (phase refinement, stream shorter than its window)',
    make: () =>
      decisionEqualizer({
        modulation: '256qam',
        taps: 3,
        convergeOnStart: { symbols: 1, passes: 0 },
        phaseRefinement: { halfWindow: 9 },
      }),
    input: () => randomField('symbols', 5, 46, 32e9, 1),
  },
  {
    name: 'decision equalizer (streaming, stream shorter than the window)',
    make: () => decisionEqualizer({ modulation: 'qpsk', taps: 9, convergeOnStart: { symbols: 1, passes: 0 } }),
    input: () => randomField('symbols', 3, 44, 32e9, 1),
  },
  {
    name: 'coarse-frequency (estimate span across blocks)',
    make: () => coarseFrequencyShift({ estimateSamples: 1024 }),
    input: () => randomField('twoSps', 2500, 40),
  },
  {
    name: 'coarse-frequency (stream shorter than the span, field domain)',
    make: () => coarseFrequencyShift({ domain: 'field', estimateSamples: 4096 }),
    input: () => randomField('field', 1500, 41),
  },
];
