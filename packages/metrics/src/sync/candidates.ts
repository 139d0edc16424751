import { type ComplexArray, complexArray } from '@intradyne/core';
import { SYNC_BLOCK_SYMBOLS } from './constants.js';
import type { ReferenceSource } from './reference-source.js';
import type { PolName } from './synchronize.js';

/** Reference symbols read at a time by the checks below. */
const RUN = 4096;

/** A delay checked over every used symbol. */
export interface CheckedDelay {
  /** The correlation over the used symbols, as the phase of the alignment (see {@link coherentCheck}, {@link blockCorrelation}). */
  readonly re: number;
  /** Its imaginary part. */
  readonly im: number;
  /** Normalized correlation ρ over the used symbols, in [0, 1]. */
  readonly correlation: number;
}

/**
 * The coherent correlation at one delay over received symbols start … N − 1,
 * c = Σₙ rₙ·conj(t̃[(n − D) mod Nt]) (t̃ = t, or conj(t) when `conjugated`),
 * normalized by Cauchy–Schwarz, ρ = |c| / √(Σ|rₙ|²·Σ|t̃|²) over the same symbols.
 * @param scratch at least RUN complex values
 */
export function coherentCheck(
  rx: ComplexArray,
  start: number,
  source: ReferenceSource,
  q: PolName,
  delay: number,
  conjugated: boolean,
  scratch: Float64Array,
): CheckedDelay {
  const n = rx.length >> 1;
  const sign = conjugated ? -1 : 1;
  let re = 0;
  let im = 0;
  let rxEnergy = 0;
  let refEnergy = 0;
  for (let from = start; from < n; from += RUN) {
    const count = Math.min(RUN, n - from);
    source.read(q, from - delay, count, scratch);
    for (let i = 0; i < count; i++) {
      const zr = rx[2 * (from + i)];
      const zi = rx[2 * (from + i) + 1];
      const tr = scratch[2 * i];
      const ti = sign * scratch[2 * i + 1];
      // z·conj(t̃)
      re += zr * tr + zi * ti;
      im += zi * tr - zr * ti;
      rxEnergy += zr * zr + zi * zi;
      refEnergy += tr * tr + ti * ti;
    }
  }
  const norm = Math.sqrt(rxEnergy * refEnergy);
  return { re, im, correlation: norm > 0 ? Math.min(1, Math.hypot(re, im) / norm) : 0 };
}

/**
 * The differential method's check of a delay: the block correlation
 * Σ_b |c_b| / √(Σ|r|²·Σ|t|²) (blocks of {@link SYNC_BLOCK_SYMBOLS} from the
 * first used symbol, `start`) as its correlation, and the first block's c₀ as
 * its phase (the quarter turns and residual phase).
 * @param scratch at least RUN complex values
 */
export function blockCorrelation(
  rx: ComplexArray,
  start: number,
  source: ReferenceSource,
  q: PolName,
  delay: number,
  conjugated: boolean,
  scratch: Float64Array,
): CheckedDelay {
  const n = rx.length >> 1;
  const sign = conjugated ? -1 : 1;
  let blockRe = 0;
  let blockIm = 0;
  let firstRe = 0;
  let firstIm = 0;
  let magnitudes = 0;
  let rxEnergy = 0;
  let refEnergy = 0;
  let inBlock = 0;
  for (let from = start; from < n; from += RUN) {
    const count = Math.min(RUN, n - from);
    source.read(q, from - delay, count, scratch);
    for (let i = 0; i < count; i++) {
      const k = from + i;
      const zr = rx[2 * k];
      const zi = rx[2 * k + 1];
      const tr = scratch[2 * i];
      const ti = sign * scratch[2 * i + 1];
      // z·conj(t)
      blockRe += zr * tr + zi * ti;
      blockIm += zi * tr - zr * ti;
      rxEnergy += zr * zr + zi * zi;
      refEnergy += tr * tr + ti * ti;
      if (++inBlock === SYNC_BLOCK_SYMBOLS || k === n - 1) {
        if (k - start < SYNC_BLOCK_SYMBOLS) {
          firstRe = blockRe;
          firstIm = blockIm;
        }
        magnitudes += Math.hypot(blockRe, blockIm);
        blockRe = 0;
        blockIm = 0;
        inBlock = 0;
      }
    }
  }
  const norm = Math.sqrt(rxEnergy * refEnergy);
  return { re: firstRe, im: firstIm, correlation: norm > 0 ? Math.min(1, magnitudes / norm) : 0 };
}

/**
 * Received symbols from `start` to `end` (exclusive) for which delays d1 and
 * d2 name different reference symbols of polarization q, counted up to `limit`.
 */
export function disagreements(
  source: ReferenceSource,
  q: PolName,
  start: number,
  end: number,
  d1: number,
  d2: number,
  limit: number,
): number {
  const nt = source.length;
  let i = (((start - d1) % nt) + nt) % nt;
  let j = (((start - d2) % nt) + nt) % nt;
  let count = 0;
  for (let k = start; k < end && count < limit; k++) {
    if (!source.same(q, i, j)) count++;
    if (++i === nt) i = 0;
    if (++j === nt) j = 0;
  }
  return count;
}

/** Scratch for the checks: RUN complex values. */
export function checkScratch(): Float64Array {
  return complexArray(RUN);
}
