import { constellation, type DualPol } from '@intradyne/core';
import { type CompactReference, isCompactReference } from '../counting/compact-reference.js';
import type { PolName } from './synchronize.js';

/**
 * Read access to a periodic reference, whether it is held as complex
 * symbols or as labels: the synchronization reads it in runs, so that it
 * never needs a copy as long as the reference.
 */
export interface ReferenceSource {
  /** Nt, symbols per polarization. */
  readonly length: number;
  /**
   * Writes symbols j = from, from + 1, … of polarization q, taken modulo Nt
   * (the reference repeats), into out[0 … 2·count) interleaved.
   */
  read(q: PolName, from: number, count: number, out: Float64Array): void;
  /** True when polarization q holds the same symbol at i and at j (both in [0, Nt)). */
  same(q: PolName, i: number, j: number): boolean;
}

/**
 * The {@link ReferenceSource} of a reference as given: complex symbols read
 * as they are, or labels read as their points at unit average power.
 * @throws RangeError when the polarizations differ in length
 */
export function referenceSource(reference: DualPol | CompactReference): ReferenceSource {
  return isCompactReference(reference) ? labelSource(reference) : symbolSource(reference);
}

function symbolSource(reference: DualPol): ReferenceSource {
  const length = reference.x.length >> 1;
  return {
    length,
    read(q, from, count, out) {
      const t = reference[q];
      let j = ((from % length) + length) % length;
      for (let i = 0; i < count; i++) {
        out[2 * i] = t[2 * j];
        out[2 * i + 1] = t[2 * j + 1];
        if (++j === length) j = 0;
      }
    },
    same(q, i, j) {
      const t = reference[q];
      return t[2 * i] === t[2 * j] && t[2 * i + 1] === t[2 * j + 1];
    },
  };
}

function labelSource(reference: CompactReference): ReferenceSource {
  const { points } = constellation(reference.modulation);
  const length = reference.symbols;
  return {
    length,
    read(q, from, count, out) {
      const labels = reference.labels[q];
      let j = ((from % length) + length) % length;
      for (let i = 0; i < count; i++) {
        const l = labels[j];
        out[2 * i] = points[2 * l];
        out[2 * i + 1] = points[2 * l + 1];
        if (++j === length) j = 0;
      }
    },
    same(q, i, j) {
      const labels = reference.labels[q];
      return labels[i] === labels[j];
    },
  };
}
