import type { DualPol, ModulationName } from '@intradyne/core';
import type { CompactReference } from '../counting/compact-reference.js';
import { referenceSource } from '../sync/reference-source.js';
import { type AlignedSymbols, alignedArrays, alignInto } from './align.js';
import { assemble, type Measurement } from './figures.js';
import { fitChannel, forEachAligned, synchronizeWith } from './fit.js';
import { type MeasureOptions, requireFinite, validate } from './options.js';
import { blockQuarterTurns, rotateQuarterTurns } from './quadrant-blocks.js';
import { requireReference } from './stream.js';
import { PolarizationTally } from './tally.js';

export type { AlignedSymbols } from './align.js';
export {
  type ErrorFigures,
  type Measurement,
  type PolMeasurement,
  type QualityFigures,
  ReferenceNotFoundError,
} from './figures.js';
export { DEFAULT_SLIP_BLOCK_SYMBOLS, type MeasureOptions, type SlipCorrection } from './options.js';
export { DEFAULT_FIT_SYMBOLS, MeasurementStream, type StreamMeasureOptions } from './stream.js';

/**
 * Measures received symbols against the transmitted reference: the one call
 * a receiver makes after its decisions stage.
 *
 * Steps, per polarization: {@link synchronize} (delay, swap, k·π/2, conjugation;
 * the first `skipSymbols` are left out of everything); undo the rotation and
 * conjugation; normalize by the real least-squares gain against the aligned
 * reference points, ĝ = Re Σ r·conj(a) / Σ|a|² (the received symbols may
 * have any scale; a residual phase stays in the error); then hard decisions
 * (BER, SER, exact 95 % intervals), data-aided EVM and SNR, Q from the BER,
 * and GMI/MI under a Gaussian channel fitted to the data (noise variance
 * σ̂² = mean |z − a|² per polarization). Totals pool the counts and error
 * powers of both polarizations; total GMI and MI are the mean per
 * polarization (bits per symbol per polarization).
 *
 * Cycle slips: by default each block of 512 measured symbols is turned by
 * the quarter turn that best fits the reference there before anything is
 * counted or fitted (see {@link MeasureOptions.slipCorrection}); the counts
 * with the first block's turn for the whole stream are in `uncorrected`.
 * @param received received symbols, Nr per polarization (e.g. after carrier recovery)
 * @param reference transmitted symbols, Nt per polarization, any scale; periodic when Nt < Nr; or their labels
 *   ({@link CompactReference})
 * @throws ReferenceNotFoundError when synchronization fails; OptionError for bad options;
 *   RangeError for non-finite symbols, too few symbols, or a reference not made of the modulation's points
 * @example const m = measure(rx, cap.reference, '16qam', { skipSymbols: 2000, symbolRate: 32e9 }); m.ber; m.perPol.y.gmi;
 */
export function measure(
  received: DualPol,
  reference: DualPol | CompactReference,
  modulation: ModulationName,
  options: MeasureOptions = {},
): Measurement {
  const o = validate(modulation, options);
  for (const p of ['x', 'y'] as const) requireFinite(received[p], `received ${p}`, 0);
  requireReference(reference, modulation);
  const { result: sync } = synchronizeWith(received, referenceSource(reference), o);
  const fit = fitChannel(received, reference, modulation, sync, o);
  const block = o.slipBlockSymbols;
  const scratch = alignedArrays(block);
  const tally = {
    x: new PolarizationTally(fit.c, fit.x, o, false),
    y: new PolarizationTally(fit.c, fit.y, o, false),
  };
  for (const p of ['x', 'y'] as const) {
    forEachAligned(fit, p, received[p], 0, sync.skipSymbols, block, scratch, (b) => tally[p].add(b, true));
  }
  const m = assemble(sync, tally, modulation, o);
  if (!options.keepAligned) return m;
  // The kept symbols as they were counted: each block turned as the tally turned it.
  const aligned = { x: alignedArrays(0), y: alignedArrays(0) };
  for (const p of ['x', 'y'] as const) {
    const n = (received[p].length >> 1) - sync.skipSymbols;
    const a: AlignedSymbols = alignedArrays(n);
    alignInto(fit.c, received[p], 0, sync.skipSymbols, n, fit.labels, fit[p].alignment, fit[p].gain, a);
    const { received: z, reference: ref } = a;
    const size = o.slipCorrection === 'per-block' ? block : n;
    const first = blockQuarterTurns(z, ref, 0, Math.min(n, size));
    for (let from = 0; from < n; from += size) {
      const to = Math.min(n, from + size);
      rotateQuarterTurns(z, o.slipCorrection === 'per-block' ? blockQuarterTurns(z, ref, from, to) : first, from, to);
    }
    aligned[p] = a;
  }
  return { ...m, aligned };
}
