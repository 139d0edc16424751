import { describe, expect, it } from 'vitest';
import { CoarseFinePhaseKernel, constellation, mapBits, PhaseRefinement, Rng } from '../../src/index.js';
import { rotate } from '../support/carrier-signals.js';

// The variance of the phase of known symbols estimated from M unit-power symbols at Es/N0 = ρ is
// 1/(2Mρ) at high SNR (the Cramér–Rao bound for the phase of a known signal in white Gaussian
// noise, which the maximum-likelihood estimate arg Σ r·a* meets; Rife & Boorstyn, IEEE Trans.
// Inf. Theory 20(5), 1974 — from memory). With decisions in place of the symbols the estimate
// keeps that variance while the decisions are nearly all right: 256QAM at ρ = 28.4 dB (its BER
// 1e-3 point) has a symbol error ratio near 1 %.
const ESN0_DB = 28.4;

function noisy256(n: number, seed: number, theta: number) {
  const c = constellation('256qam');
  const rng = new Rng(seed);
  const a = mapBits(c, rng.fillBits(new Uint8Array(n * c.bitsPerSymbol)));
  const r = rotate(a, theta);
  const sigma = Math.sqrt(10 ** (-ESN0_DB / 10) / 2);
  for (let k = 0; k < r.length; k++) r[k] += sigma * rng.gaussian();
  return { c, a, r };
}

describe('decision-directed phase refinement', () => {
  it('turns back a constant rotation exactly on clean 256QAM', () => {
    const { c, a } = noisy256(2000, 1, 0);
    const r = new PhaseRefinement(c, 5);
    const x = rotate(a, 0.02);
    const y = rotate(a, 0.02);
    const head = r.process(x, y);
    const tail = r.finish();
    expect((head.x.length + tail.x.length) >> 1).toBe(2000);
    const out = new Float64Array(4000);
    out.set(head.x);
    out.set(tail.x, head.x.length);
    for (let k = 0; k < out.length; k++) expect(Math.abs(out[k] - a[k])).toBeLessThan(1e-12);
  });

  it('estimates the phase with variance 1/(2Mρ) over M = 2(2N + 1) symbols, the bound for known symbols', () => {
    const N = 8;
    const n = 1 << 16;
    // A residual of the size blind phase search leaves: a rotation comparable with the angular
    // spacing of the outer points (0.1 rad for 256QAM) turns decisions and pulls the estimate towards 0.
    const theta = 0.005;
    const x = noisy256(n, 2, theta);
    const y = noisy256(n, 3, theta);
    const head = new PhaseRefinement(x.c, N).process(x.r, y.r);
    // The phase each symbol was turned back by: arg(r·out*).
    let s = 0;
    let q = 0;
    const m = head.x.length >> 1;
    for (let k = 0; k < m; k++) {
      const re = x.r[2 * k] * head.x[2 * k] + x.r[2 * k + 1] * head.x[2 * k + 1];
      const im = x.r[2 * k + 1] * head.x[2 * k] - x.r[2 * k] * head.x[2 * k + 1];
      const e = Math.atan2(im, re) - theta;
      s += e;
      q += e * e;
    }
    const variance = q / m - (s / m) ** 2;
    const bound = 1 / (2 * 2 * (2 * N + 1) * 10 ** (ESN0_DB / 10));
    expect(Math.abs(s / m)).toBeLessThan(1e-3);
    // 2^16 overlapping windows (about 3,900 independent ones): the variance within ±5 %; 1/Σ|a|² over
    // 34 symbols of 256QAM is about 1 % above 1/M, and the few wrong decisions add a little more.
    expect(variance / bound).toBeGreaterThan(0.9);
    expect(variance / bound).toBeLessThan(1.15);
  });

  it('rejects a half window that is not a whole number ≥ 0', () => {
    expect(() => new PhaseRefinement(constellation('16qam'), -1)).toThrow(RangeError);
    expect(() => new PhaseRefinement(constellation('16qam'), 1.5)).toThrow(RangeError);
  });
});

describe('coarse-fine blind phase search on both polarizations', () => {
  it('estimates a common phase with the variance of the known-symbol bound over 2(2N + 1) symbols', () => {
    const n = 1 << 15;
    const x = noisy256(n, 4, 0.2);
    const y = noisy256(n, 5, 0.2);
    const rho = 10 ** (ESN0_DB / 10);
    for (const N of [8, 16]) {
      const k = new CoarseFinePhaseKernel(x.c, { testPhases: 64, halfWindow: N });
      let s = 0;
      let q = 0;
      let m = 0;
      for (let i = 0; i < n + k.delay; i++) {
        const p = i < n;
        const t = k.pushPair(p ? x.r[2 * i] : 0, p ? x.r[2 * i + 1] : 0, p ? y.r[2 * i] : 0, p ? y.r[2 * i + 1] : 0, p);
        // The ends, with windows cut short, are left out.
        if (Number.isNaN(t) || i < 2 * k.delay || i >= n) continue;
        s += t - 0.2;
        q += (t - 0.2) ** 2;
        m++;
      }
      const variance = q / m - (s / m) ** 2;
      const bound = 1 / (2 * 2 * (2 * N + 1) * rho);
      expect(Math.abs(s / m)).toBeLessThan(1e-3);
      expect(variance / bound, `N = ${N}`).toBeGreaterThan(0.85);
      expect(variance / bound, `N = ${N}`).toBeLessThan(1.2);
    }
  });
});
