import { type ComplexArray, type Constellation, decide } from '@intradyne/core';

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
  if (n === 0) throw new RangeError('referenceLabels: the reference holds no symbols');
  let power = 0;
  for (let i = 0; i < reference.length; i++) power += reference[i] * reference[i];
  power /= n;
  if (!(power > 0) || !Number.isFinite(power)) {
    throw new RangeError(`referenceLabels: the reference must have finite, non-zero power (mean power ${power})`);
  }
  const scaled = new Float64Array(reference.length) as ComplexArray;
  const g0 = 1 / Math.sqrt(power);
  for (let i = 0; i < reference.length; i++) scaled[i] = reference[i] * g0;
  const labels = decide(c, scaled);
  // ŝ = Σ|a|² / Re Σ r·conj(a): the least-squares scale onto the decided points.
  let num = 0;
  let den = 0;
  for (let k = 0; k < n; k++) {
    const ar = c.points[2 * labels[k]];
    const ai = c.points[2 * labels[k] + 1];
    num += ar * ar + ai * ai;
    den += scaled[2 * k] * ar + scaled[2 * k + 1] * ai;
  }
  const g1 = num / den;
  for (let i = 0; i < scaled.length; i++) scaled[i] *= g1;
  decide(c, scaled, labels);
  const tolerance = 0.1 * c.scale;
  for (let k = 0; k < n; k++) {
    const dr = scaled[2 * k] - c.points[2 * labels[k]];
    const di = scaled[2 * k + 1] - c.points[2 * labels[k] + 1];
    if (Math.abs(dr) > tolerance || Math.abs(di) > tolerance) {
      throw new RangeError(
        `referenceLabels: reference symbol ${k} (${reference[2 * k]}, ${reference[2 * k + 1]}) is not a ${c.name} point ` +
          '(more than a twentieth of the level spacing away after scaling)',
      );
    }
  }
  return labels;
}
