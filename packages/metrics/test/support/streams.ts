import {
  type ComplexArray,
  complexArray,
  constellation,
  type DualPol,
  labelsToSymbols,
  type ModulationName,
  meanPower,
  type Rng,
} from '@intradyne/core';

/** Random unit-power symbols of a modulation, with their labels. */
export function randomSymbols(modulation: ModulationName, n: number, rng: Rng): { symbols: ComplexArray; labels: Uint8Array } {
  const c = constellation(modulation);
  const labels = new Uint8Array(n);
  for (let i = 0; i < n; i++) labels[i] = rng.integer(c.order);
  return { symbols: labelsToSymbols(c, labels), labels };
}

/** How a test stream is made from a reference polarization. */
export interface Impairment {
  /** Reference polarization carried. */
  readonly source: 'x' | 'y';
  /** Received n carries reference (n − delay) mod Nt. */
  readonly delay: number;
  readonly quarterTurns: 0 | 1 | 2 | 3;
  readonly conjugated: boolean;
  /** Static phase on top of the quarter turns, rad. */
  readonly phase?: number;
}

/**
 * Received symbols as a blind receiver leaves them:
 * r[n] = g·e^(j(kπ/2 + φ))·T(t[(n − delay) mod Nt]) + noise, T the identity or conjugation,
 * with Gaussian noise of variance g²·P/SNR per complex symbol (P the mean power of the
 * reference); the first `garbage` symbols are replaced by noise of the signal's power
 * (an equalizer not yet converged).
 */
export function impairedStream(
  reference: DualPol,
  nr: number,
  imp: Impairment,
  options: { gain: number; snrDb: number; garbage: number; rng: Rng },
): ComplexArray {
  const t = reference[imp.source];
  const nt = t.length >> 1;
  const out = complexArray(nr);
  const a = (imp.quarterTurns * Math.PI) / 2 + (imp.phase ?? 0);
  const cr = options.gain * Math.cos(a);
  const ci = options.gain * Math.sin(a);
  const rms = Math.sqrt(meanPower(t));
  const s = Number.isFinite(options.snrDb) ? options.gain * rms * Math.sqrt(10 ** (-options.snrDb / 10) / 2) : 0;
  const g = options.gain * rms * Math.SQRT1_2;
  for (let n = 0; n < nr; n++) {
    if (n < options.garbage) {
      out[2 * n] = g * options.rng.gaussian();
      out[2 * n + 1] = g * options.rng.gaussian();
      continue;
    }
    const j = (((n - imp.delay) % nt) + nt) % nt;
    const tr = t[2 * j];
    const ti = imp.conjugated ? -t[2 * j + 1] : t[2 * j + 1];
    out[2 * n] = cr * tr - ci * ti + s * options.rng.gaussian();
    out[2 * n + 1] = cr * ti + ci * tr + s * options.rng.gaussian();
  }
  return out;
}
