import type { Constellation } from '@intradyne/core';
import { ReferenceMismatchError } from './reference-mismatch.js';

/**
 * Thrown when a shaped reference's points fit the constellation but its
 * symbols do not look drawn from the stated prior ({@link referencePriorProblem}).
 * @example try { compactReference(ref, 'ps-64qam:entropy=4.5'); } catch (e) { if (e instanceof ReferencePriorError) console.log('is the shaping right?'); }
 */
export class ReferencePriorError extends ReferenceMismatchError {
  /** Always 'ReferencePriorError'. */
  override readonly name: string = 'ReferencePriorError';
}

/**
 * Standard errors by which the mean energy of a shaped reference may
 * differ from 1 (the prior's): 6 (a genuine reference fails with
 * probability of order 1e-9 in the Gaussian approximation of the mean).
 */
const PRIOR_STANDARD_ERRORS = 6;

/**
 * Whether reference labels look drawn from a shaped constellation's prior:
 * their points' mean energy ē = (1/N)·Σ|a_{labelₖ}|² must be within six
 * standard errors of 1 (the prior's, by construction), the standard error
 * being √((E|a|⁴ − 1)/N) (E|a|⁴ = R2 at unit power). A reference of
 * another entropy of the same base lands on the same grid but not with
 * this mean (PS-64QAM at 5 bits read as 4.5 bits: ē ≈ 1.3). Uniform
 * formats are not checked (null).
 * @param labels the labels of the reference's symbols, both polarizations
 * @returns null when they fit, else what was found (for a message)
 * @example referencePriorProblem(constellation('ps-64qam:entropy=4.5'), [ref.labels.x, ref.labels.y]) // null
 */
export function referencePriorProblem(c: Constellation, labels: readonly Uint8Array[]): string | null {
  if (!c.shaped) return null;
  let n = 0;
  let sum = 0;
  for (const l of labels) {
    for (let k = 0; k < l.length; k++) sum += c.points[2 * l[k]] ** 2 + c.points[2 * l[k] + 1] ** 2;
    n += l.length;
  }
  if (n === 0) return null;
  const mean = sum / n;
  const standardError = Math.sqrt(Math.max(c.cmaRadius2 - 1, 0) / n);
  if (Math.abs(mean - 1) <= PRIOR_STANDARD_ERRORS * standardError + 0.01) return null;
  return `symbols whose mean energy is ${mean.toFixed(3)} of the ${c.name} prior's (expected 1 ± ${(PRIOR_STANDARD_ERRORS * standardError + 0.01).toFixed(3)}; is the shaping right?)`;
}
