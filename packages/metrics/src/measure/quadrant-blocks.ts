import type { ComplexArray } from '@intradyne/core';

/**
 * The quarter turn k ∈ {0, 1, 2, 3} that best explains received symbols
 * z[from…to) as e^(jkπ/2)·a: the k that maximizes Re(e^(−jkπ/2)·Σ zᵢ·a*ᵢ),
 * i.e. k = round(arg(Σ zᵢ·a*ᵢ)/(π/2)) mod 4. A cycle slip of the carrier
 * recovery changes it from one stretch of symbols to the next.
 * @param z received symbols, aligned with `a` (interleaved)
 * @param a the transmitted points they carry
 * @param from first symbol of the block
 * @param to one past its last symbol
 * @example blockQuarterTurns(z, a, 0, 512) // 1 when z ≈ j·a over those symbols
 */
export function blockQuarterTurns(z: ComplexArray, a: ComplexArray, from: number, to: number): 0 | 1 | 2 | 3 {
  let re = 0;
  let im = 0;
  for (let i = 2 * from; i < 2 * to; i += 2) {
    // z·conj(a)
    re += z[i] * a[i] + z[i + 1] * a[i + 1];
    im += z[i + 1] * a[i] - z[i] * a[i + 1];
  }
  if (re === 0 && im === 0) return 0;
  return (((Math.round(Math.atan2(im, re) / (Math.PI / 2)) % 4) + 4) % 4) as 0 | 1 | 2 | 3;
}

/**
 * Multiplies z[from…to) by e^(−jkπ/2) in place (undoes k quarter turns), exactly (no rounding).
 * @example rotateQuarterTurns(z, 1, 0, 512) // z ← −j·z on the first 512 symbols
 */
export function rotateQuarterTurns(z: Float64Array, k: number, from: number, to: number): void {
  const q = ((k % 4) + 4) % 4;
  if (q === 0) return;
  for (let i = 2 * from; i < 2 * to; i += 2) {
    const re = z[i];
    const im = z[i + 1];
    if (q === 1) {
      z[i] = im;
      z[i + 1] = -re;
    } else if (q === 2) {
      z[i] = -re;
      z[i + 1] = -im;
    } else {
      z[i] = -im;
      z[i + 1] = re;
    }
  }
}

/** The sums a least-squares fit of z against a needs (see {@link quadrantResolvedSums}). */
export interface ResolvedSums {
  /** Σ|zᵢ|². */
  readonly zz: number;
  /** Σ|aᵢ|². */
  readonly aa: number;
  /** Re Σ zᵢ·a*ᵢ, each block turned by its best quarter turn first. */
  readonly za: number;
}

/**
 * The sums of a least-squares gain that a cycle slip does not spoil: Σ|z|²,
 * Σ|a|², and Re Σ zᵢ·a*ᵢ with each block of `blockSymbols` (from symbol 0;
 * the last one may be shorter) first turned by its own
 * {@link blockQuarterTurns}. All three are summed block by block in the same
 * order, so that z = a gives za = aa = zz exactly.
 * @example const { za, aa } = quadrantResolvedSums(z, a, 512); const gain = za / aa;
 */
export function quadrantResolvedSums(z: ComplexArray, a: ComplexArray, blockSymbols: number): ResolvedSums {
  const n = z.length >> 1;
  let zz = 0;
  let aa = 0;
  let za = 0;
  for (let from = 0; from < n; from += blockSymbols) {
    const to = Math.min(n, from + blockSymbols);
    let re = 0;
    let im = 0;
    let z2 = 0;
    let a2 = 0;
    for (let i = 2 * from; i < 2 * to; i += 2) {
      re += z[i] * a[i] + z[i + 1] * a[i + 1];
      im += z[i + 1] * a[i] - z[i] * a[i + 1];
      z2 += z[i] * z[i] + z[i + 1] * z[i + 1];
      a2 += a[i] * a[i] + a[i + 1] * a[i + 1];
    }
    // max over k of Re(e^(−jkπ/2)·c): the largest of ±re, ±im.
    za += Math.max(re, -re, im, -im);
    zz += z2;
    aa += a2;
  }
  return { zz, aa, za };
}
