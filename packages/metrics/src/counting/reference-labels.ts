import { type ComplexArray, type Constellation, decide } from '@intradyne/core';
import { ReferenceMismatchError } from './reference-mismatch.js';

/**
 * A reference polarization handed over in consecutive chunks: calls `visit`
 * once per chunk, in order, with its symbols (interleaved) and the index of
 * its first symbol; it must give the same chunks each time it is called.
 */
export type ReferenceChunks = (visit: (chunk: ComplexArray, first: number) => void) => void;

/**
 * The constellation labels of transmitted reference symbols given at any
 * scale (DESIGN.md: a reference file has any scale).
 *
 * The scale is fitted in two passes: first to unit mean power, then by least
 * squares against the decided points, ŝ = Σ|a|² / Re Σ r·conj(a) with
 * r the scaled reference and a its decisions, which is exact for any mix of
 * points (a short 16QAM or 64QAM reference does not have unit mean power).
 * Every symbol must then lie within 0.1·scale per axis of its point, a
 * twentieth of the level spacing (rounded reference files pass; another
 * modulation does not).
 * @param reference N complex symbols, N ≥ 1
 * @returns N labels
 * @throws RangeError when the reference is empty, all zero, not finite, or not made of the constellation's points
 * @example referenceLabels(constellation('qpsk'), fromParts([3, -3], [3, 3])) // labels of (1+j)/√2 and (−1+j)/√2
 */
export function referenceLabels(c: Constellation, reference: ComplexArray): Uint8Array {
  const n = reference.length >> 1;
  const labels = new Uint8Array(n);
  referenceLabelsInChunks(c, n, (visit) => visit(reference, 0), labels);
  return labels;
}

/**
 * {@link referenceLabels} over a reference read in chunks (three times), in
 * memory that does not grow with its length: see {@link ReferenceLabeler}.
 * @param n symbols the chunks hold in all
 * @param out n labels to write
 * @throws RangeError as {@link referenceLabels}
 * @example referenceLabelsInChunks(constellation('16qam'), n, (visit) => blocks.forEach((b, i) => visit(b, i * 4096)), labels);
 */
export function referenceLabelsInChunks(c: Constellation, n: number, chunks: ReferenceChunks, out: Uint8Array): void {
  if (n === 0) throw new ReferenceMismatchError('referenceLabels: the reference holds no symbols');
  const labeler = new ReferenceLabeler(c);
  chunks((chunk) => labeler.addPower(chunk));
  labeler.beginScale(out.subarray(0, n));
  chunks((chunk, first) => labeler.addScale(chunk, first));
  labeler.beginLabels();
  chunks((chunk, first) => {
    const k = labeler.label(chunk, first);
    if (k >= 0) {
      throw new ReferenceMismatchError(
        `referenceLabels: reference symbol ${first + k} (${chunk[2 * k]}, ${chunk[2 * k + 1]}) is not a ${c.name} point ` +
          '(more than a twentieth of the level spacing away after scaling)',
      );
    }
  });
}

/** Symbols per scratch block of {@link ReferenceLabeler}: 2^14. */
const SCRATCH_SYMBOLS = 1 << 14;

/**
 * {@link referenceLabels} in three passes over the reference, chunk by
 * chunk, for a caller that reads a long reference from a file without
 * holding it: `addPower` on every chunk, `beginScale` (with the array of
 * labels to fill), `addScale` on every chunk, `beginLabels`, `label` on
 * every chunk. Each sum is taken in the same
 * order as on the whole array, so that the labels, and any error, are those
 * of {@link referenceLabels}. Memory: the labels and a scratch block of
 * 2^14 symbols.
 * @example const l = new ReferenceLabeler(constellation('qpsk')); // then the three passes
 */
export class ReferenceLabeler {
  private power = 0;
  private seen = 0;
  private g0 = 0;
  private g1 = 0;
  private num = 0;
  private den = 0;
  private out: Uint8Array = new Uint8Array(0);
  private readonly scratch = new Float64Array(2 * SCRATCH_SYMBOLS);

  constructor(private readonly c: Constellation) {}

  /** Pass 1: adds a chunk's Σ|r|². */
  addPower(chunk: ComplexArray): void {
    let power = this.power;
    for (let i = 0; i < chunk.length; i++) power += chunk[i] * chunk[i];
    this.power = power;
    this.seen += chunk.length >> 1;
  }

  /**
   * Ends pass 1: the unit-power scale.
   * @param out one label per symbol seen, written by the next passes
   * @throws RangeError when `out` does not hold one label per symbol seen, or for a reference of zero or non-finite power
   */
  beginScale(out: Uint8Array): void {
    if (out.length !== this.seen) throw new RangeError(`referenceLabels: ${out.length} labels for ${this.seen} symbols`);
    this.out = out;
    const power = this.power / this.seen;
    if (!(power > 0) || !Number.isFinite(power)) {
      throw new ReferenceMismatchError(`referenceLabels: the reference must have finite, non-zero power (mean power ${power})`);
    }
    this.g0 = 1 / Math.sqrt(power);
  }

  /**
   * Pass 2: decides a chunk at unit power and adds its share of the
   * least-squares scale ŝ = Σ|a|² / Re Σ r·conj(a).
   * @param first index of the chunk's first symbol
   */
  addScale(chunk: ComplexArray, first: number): void {
    const { c } = this;
    for (let from = 0; from < chunk.length >> 1; from += SCRATCH_SYMBOLS) {
      const count = Math.min(SCRATCH_SYMBOLS, (chunk.length >> 1) - from);
      const s = this.scratch.subarray(0, 2 * count) as ComplexArray;
      for (let i = 0; i < 2 * count; i++) s[i] = chunk[2 * from + i] * this.g0;
      const labels = decide(c, s, this.out.subarray(first + from, first + from + count));
      let num = this.num;
      let den = this.den;
      for (let k = 0; k < count; k++) {
        const ar = c.points[2 * labels[k]];
        const ai = c.points[2 * labels[k] + 1];
        num += ar * ar + ai * ai;
        den += s[2 * k] * ar + s[2 * k + 1] * ai;
      }
      this.num = num;
      this.den = den;
    }
  }

  /** Ends pass 2. */
  beginLabels(): void {
    this.g1 = this.num / this.den;
  }

  /**
   * Pass 3: the labels of a chunk at the fitted scale, checked.
   * @returns −1, or the index in the chunk of the first symbol more than 0.1·scale per axis
   *   from its point (its labels and those after it are then not written)
   */
  label(chunk: ComplexArray, first: number): number {
    const { c } = this;
    const tolerance = 0.1 * c.scale;
    for (let from = 0; from < chunk.length >> 1; from += SCRATCH_SYMBOLS) {
      const count = Math.min(SCRATCH_SYMBOLS, (chunk.length >> 1) - from);
      const s = this.scratch.subarray(0, 2 * count) as ComplexArray;
      // (r·g0)·g1, rounded as the whole-array computation rounds it.
      for (let i = 0; i < 2 * count; i++) s[i] = chunk[2 * from + i] * this.g0 * this.g1;
      const labels = decide(c, s, this.out.subarray(first + from, first + from + count));
      for (let k = 0; k < count; k++) {
        const dr = s[2 * k] - c.points[2 * labels[k]];
        const di = s[2 * k + 1] - c.points[2 * labels[k] + 1];
        if (Math.abs(dr) > tolerance || Math.abs(di) > tolerance) return from + k;
      }
    }
    return -1;
  }
}
