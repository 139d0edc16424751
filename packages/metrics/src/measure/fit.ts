import { type ComplexArray, type Constellation, constellation, type DualPol, type ModulationName } from '@intradyne/core';
import { type CompactReference, isCompactReference } from '../counting/compact-reference.js';
import { referenceLabels } from '../counting/reference-labels.js';
import type { ReferenceSource } from '../sync/reference-source.js';
import { type SyncOutcome, synchronizeSource, validateSyncOptions } from '../sync/search.js';
import type { PolAlignment, PolName, SyncResult } from '../sync/synchronize.js';
import { type AlignedSymbols, alignedArrays, alignedView, alignInto } from './align.js';
import { ReferenceNotFoundError } from './figures.js';
import { NAME, type Validated } from './options.js';
import { quadrantResolvedSums } from './quadrant-blocks.js';

/** One polarization's fit: alignment, gain and noise variance. */
export interface PolFit {
  /** What the synchronization found for it. */
  readonly alignment: PolAlignment;
  /** Least-squares gain ĝ. */
  readonly gain: number;
  /** Noise variance per complex symbol at unit constellation power. */
  readonly noiseVariance: number;
}

/** What the measurement fitted on its leading symbols. */
export interface ChannelFit {
  /** The constellation measured against. */
  readonly c: Constellation;
  /** The synchronization's findings. */
  readonly sync: SyncResult;
  /** The reference's labels per polarization. */
  readonly labels: Readonly<Record<PolName, Uint8Array>>;
  /** The fit of received x. */
  readonly x: PolFit;
  /** The fit of received y. */
  readonly y: PolFit;
}

/**
 * Synchronizes received symbols with a reference source.
 * @throws OptionError for bad synchronization options; RangeError for too few symbols
 */
export function synchronizeWith(received: DualPol, source: ReferenceSource, o: Validated): SyncOutcome {
  return synchronizeSource(received, source, validateSyncOptions(o));
}

/**
 * Fits each polarization of `received` once synchronized: over the aligned
 * symbols from `skipSymbols` on, ĝ = Re Σ r·conj(a) / Σ|a|², then
 * σ̂² = mean |r/ĝ − a|², with each block of `slipBlockSymbols` turned by its
 * best quarter turn first, whatever the slip correction (the gain is a
 * scale, which a slip must not spoil): ĝ = Σ_b max_k Re(e^(−jkπ/2)·Σ_b r·a*) / Σ|a|²
 * and σ̂² = (Σ|r|²/ĝ² − Σ|a|²)/N (the plain sums for a stream without
 * slips). The sums are taken block by block on one block's aligned copy at a
 * time, so that memory does not grow with the symbols fitted.
 * @throws ReferenceNotFoundError when the synchronization did not find the reference;
 *   RangeError for a reference not made of the modulation's points, or a gain that is not positive
 */
export function fitChannel(
  received: DualPol,
  reference: DualPol | CompactReference,
  modulation: ModulationName,
  sync: SyncResult,
  o: Validated,
): ChannelFit {
  if (!sync.found) throw new ReferenceNotFoundError(sync);
  const c = constellation(modulation);
  const labels = isCompactReference(reference)
    ? reference.labels
    : { x: referenceLabels(c, reference.x), y: referenceLabels(c, reference.y) };
  const block = o.slipBlockSymbols;
  const scratch = alignedArrays(block);
  const pol = (rx: ComplexArray, a: PolAlignment): PolFit => {
    const n = (rx.length >> 1) - sync.skipSymbols;
    let zz = 0;
    let aa = 0;
    let za = 0;
    for (let from = 0; from < n; from += block) {
      const count = Math.min(block, n - from);
      alignInto(c, rx, 0, sync.skipSymbols + from, count, labels, a, 1, scratch);
      const v = alignedView(scratch, count);
      // One block at a time: the sums of quadrantResolvedSums over the whole, in the same order.
      const s = quadrantResolvedSums(v.received, v.reference, block);
      zz += s.zz;
      aa += s.aa;
      za += s.za;
    }
    const gain = za / aa;
    if (!(gain > 0)) throw new RangeError(`${NAME}: the least-squares gain of the aligned symbols is ${gain}, not positive`);
    const noiseVariance = Math.max(0, zz / (gain * gain) - aa) / n;
    return { alignment: a, gain, noiseVariance };
  };
  return { c, sync, labels, x: pol(received.x, sync.perPol.x), y: pol(received.y, sync.perPol.y) };
}

/**
 * Aligns and normalizes received symbols with a fit, one block of
 * `blockSymbols` at a time, and hands each block to `visit` (a view into one
 * scratch, valid until the next call). rx[from …] are received symbols
 * `first + from …` of the stream.
 */
export function forEachAligned(
  fit: ChannelFit,
  p: PolName,
  rx: ComplexArray,
  first: number,
  from: number,
  blockSymbols: number,
  scratch: AlignedSymbols,
  visit: (block: AlignedSymbols) => void,
): void {
  const n = rx.length >> 1;
  for (let at = from; at < n; at += blockSymbols) {
    const count = Math.min(blockSymbols, n - at);
    alignInto(fit.c, rx, first, at, count, fit.labels, fit[p].alignment, fit[p].gain, scratch);
    visit(alignedView(scratch, count));
  }
}
