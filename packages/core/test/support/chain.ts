import {
  type AnyStage,
  type BlockOf,
  type ChannelBlock,
  combineChannels,
  concatBlocks,
  type Domain,
  type FieldBlock,
  pipe,
  resampleToTwoSps,
  rrcMatchedFilter,
  type SimulatedCapture,
} from '../../src/index.js';

/** The capture's four channels as one block. */
export function channelBlock(c: SimulatedCapture): ChannelBlock {
  return { domain: 'channels', ...c.channels, samplesPerSymbol: c.samplesPerSymbol };
}

/** Runs a stage over one block and its flush, and joins the output. */
export function runAll<Out extends Domain>(stage: AnyStage, input: BlockOf<Domain>): BlockOf<Out> {
  const head = stage.process(input);
  const tail = stage.flush();
  return (tail ? concatBlocks([head, tail]) : head) as BlockOf<Out>;
}

/** Channels → field → 2 samples per symbol, matched-filtered (roll-off of the capture). */
export function toTwoSps(c: SimulatedCapture): FieldBlock<'twoSps'> {
  return runAll<'twoSps'>(pipe(combineChannels(), resampleToTwoSps(), rrcMatchedFilter({ rollOff: c.rollOff })), channelBlock(c));
}

/**
 * Data-aided SNR (dB) of symbol-spaced samples `out[start + k·step]` against
 * the reference symbols `ref[k + lag]` (circularly), after a least-squares
 * complex gain: SNR = |g|²·Σ|a|² / Σ|y − g·a|² (EVM = 1/√SNR, Shafik, Rahman
 * & Islam 2006). Symbols k < skip and the last `skip` are left out.
 */
export function snrDb(
  out: Float64Array,
  ref: Float64Array,
  opts: { step?: number; start?: number; skip?: number; lag?: number } = {},
): number {
  const { step = 2, start = 0, skip = 0, lag = 0 } = opts;
  const nRef = ref.length >> 1;
  const n = Math.floor(((out.length >> 1) - start - 1) / step) + 1;
  let ar = 0;
  let ai = 0;
  let p = 0;
  const idx = (k: number) => (2 * (((k + lag) % nRef) + nRef)) % (2 * nRef);
  for (let k = skip; k < n - skip; k++) {
    const yr = out[2 * (start + k * step)];
    const yi = out[2 * (start + k * step) + 1];
    const j = idx(k);
    ar += yr * ref[j] + yi * ref[j + 1];
    ai += yi * ref[j] - yr * ref[j + 1];
    p += ref[j] ** 2 + ref[j + 1] ** 2;
  }
  const gr = ar / p;
  const gi = ai / p;
  let e = 0;
  for (let k = skip; k < n - skip; k++) {
    const j = idx(k);
    const er = out[2 * (start + k * step)] - (gr * ref[j] - gi * ref[j + 1]);
    const ei = out[2 * (start + k * step) + 1] - (gr * ref[j + 1] + gi * ref[j]);
    e += er * er + ei * ei;
  }
  return 10 * Math.log10(((gr * gr + gi * gi) * p) / e);
}
