import type { ComplexArray, DualPol } from '../../src/index.js';

/** How one equalizer output matches one transmitted polarization. */
export interface PolMatch {
  /** Which reference polarization this output carries. */
  readonly source: 'x' | 'y';
  /** Output symbol k carries reference symbol k − lag (the reference is periodic). */
  readonly lag: number;
  /** Least-squares complex gain g of output ≈ g·reference (phase and scale). */
  readonly gainRe: number;
  readonly gainIm: number;
  /** Data-aided SNR: |g|²·Σ|a|² / Σ|z − g·a|², dB. */
  readonly snrDb: number;
  /** |Σ z·a*| / √(Σ|z|²·Σ|a|²): 1 for a clean copy of the source. */
  readonly correlation: number;
}

export interface Alignment {
  readonly x: PolMatch;
  readonly y: PolMatch;
  /** True when output x carries reference y (and output y reference x). */
  readonly swapped: boolean;
}

/**
 * Resolves what an equalizer leaves open — which output carries which
 * polarization, an integer symbol delay, and a constant complex gain (the
 * phase ambiguity) — by correlation with the transmitted symbols, then
 * measures the data-aided SNR of each output over symbols [skip, N − skip).
 * Each output is matched to its best source independently, so two outputs
 * carrying the same source (a singular equalizer) show as equal sources.
 */
export function alignOutputs(out: DualPol, ref: DualPol, maxLag: number, skip: number): Alignment {
  const x = bestMatch(out.x, ref, maxLag, skip);
  const y = bestMatch(out.y, ref, maxLag, skip);
  return { x, y, swapped: x.source === 'y' };
}

function bestMatch(z: ComplexArray, ref: DualPol, maxLag: number, skip: number): PolMatch {
  let best: PolMatch | null = null;
  for (const source of ['x', 'y'] as const) {
    for (let lag = -maxLag; lag <= maxLag; lag++) {
      const m = measure(z, source === 'x' ? ref.x : ref.y, lag, skip, source);
      if (!best || m.correlation > best.correlation) best = m;
    }
  }
  return best as PolMatch;
}

function measure(z: ComplexArray, a: ComplexArray, lag: number, skip: number, source: 'x' | 'y'): PolMatch {
  const n = Math.min(z.length, a.length) >> 1;
  let cr = 0;
  let ci = 0;
  let pa = 0;
  let pz = 0;
  for (let k = skip; k < n - skip; k++) {
    const j = (((k - lag) % n) + n) % n;
    const ar = a[2 * j];
    const ai = a[2 * j + 1];
    const zr = z[2 * k];
    const zi = z[2 * k + 1];
    // z·a*
    cr += zr * ar + zi * ai;
    ci += zi * ar - zr * ai;
    pa += ar * ar + ai * ai;
    pz += zr * zr + zi * zi;
  }
  const gr = cr / pa;
  const gi = ci / pa;
  let err = 0;
  for (let k = skip; k < n - skip; k++) {
    const j = (((k - lag) % n) + n) % n;
    const ar = a[2 * j];
    const ai = a[2 * j + 1];
    const er = z[2 * k] - (gr * ar - gi * ai);
    const ei = z[2 * k + 1] - (gr * ai + gi * ar);
    err += er * er + ei * ei;
  }
  const signal = (gr * gr + gi * gi) * pa;
  return {
    source,
    lag,
    gainRe: gr,
    gainIm: gi,
    snrDb: 10 * Math.log10(signal / err),
    correlation: Math.hypot(cr, ci) / Math.sqrt(pa * pz),
  };
}
