import { type ComplexArray, complexArray, constellation, type DualPol, type ModulationName } from '@intradyne/core';
import { referenceLabels } from './reference-labels.js';
import { ReferenceMismatchError } from './reference-mismatch.js';
import { ReferencePriorError, referencePriorProblem } from './reference-prior.js';

/**
 * Transmitted reference symbols held as their constellation labels: 1 byte
 * per symbol per polarization instead of the 32 bytes of a dual-polarization
 * complex float64 reference, so that a reference as long as a capture costs
 * little memory. The labels are those of {@link referenceLabels} (any scale
 * fitted, every symbol checked to be a point of the modulation); symbol j of
 * polarization p is the point `constellation(modulation).points[labels[p][j]]`
 * at unit average power.
 */
export interface CompactReference {
  /** The modulation whose points the labels name. */
  readonly modulation: ModulationName;
  /** Nt, symbols per polarization. */
  readonly symbols: number;
  /** The labels, Nt per polarization. */
  readonly labels: {
    /** Of the x polarization. */
    readonly x: Uint8Array;
    /** Of the y polarization. */
    readonly y: Uint8Array;
  };
}

/**
 * A reference held as its labels (see {@link CompactReference}).
 * @param reference transmitted symbols, Nt per polarization, any scale
 * @throws ReferenceMismatchError when x and y differ in length, as {@link referenceLabels}, or (ReferencePriorError)
 *   for a shaped modulation whose prior the labels do not fit ({@link referencePriorProblem})
 * @example const ref = compactReference(cap.reference, '16qam'); ref.labels.x[0];
 */
export function compactReference(reference: DualPol, modulation: ModulationName): CompactReference {
  const c = constellation(modulation);
  const symbols = reference.x.length >> 1;
  if (reference.y.length >> 1 !== symbols)
    throw new ReferenceMismatchError(`compactReference: reference x has ${symbols} symbols, y has ${reference.y.length >> 1}`);
  const labels = { x: referenceLabels(c, reference.x), y: referenceLabels(c, reference.y) };
  const problem = referencePriorProblem(c, [labels.x, labels.y]);
  if (problem !== null) throw new ReferencePriorError(`compactReference: ${problem}`);
  return { modulation, symbols, labels };
}

/**
 * True for a {@link CompactReference}, false for a {@link DualPol} of symbols.
 * @example const n = isCompactReference(ref) ? ref.symbols : ref.x.length / 2;
 */
export function isCompactReference(reference: DualPol | CompactReference): reference is CompactReference {
  return 'labels' in reference;
}

/**
 * One polarization of a compact reference as complex points at unit average
 * power (16 bytes per symbol: for a caller that needs the symbols themselves,
 * such as a data-aided equalizer).
 * @example const x = referencePoints(ref, 'x'); // Nt interleaved complex points
 */
export function referencePoints(reference: CompactReference, pol: 'x' | 'y'): ComplexArray {
  const { points } = constellation(reference.modulation);
  const labels = reference.labels[pol];
  const out = complexArray(labels.length);
  for (let j = 0; j < labels.length; j++) {
    out[2 * j] = points[2 * labels[j]];
    out[2 * j + 1] = points[2 * labels[j] + 1];
  }
  return out;
}
