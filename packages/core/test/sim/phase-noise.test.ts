import { describe, expect, it } from 'vitest';
import { simulate } from '../../src/index.js';

describe('laser phase noise and frequency offset', () => {
  // Wiener model (common practice; Pfau et al., JLT 2009): the per-symbol
  // phase increment is Gaussian with variance 2π·Δν·T.
  it('has a per-symbol increment variance within 5 % of 2π·Δν·T', () => {
    const n = 200_000;
    const rs = 32e9;
    const lw = 1e6;
    const cap = simulate({ seed: 99, modulation: 'qpsk', symbols: n, symbolRate: rs, channel: { linewidthHz: lw } });
    const p = cap.truth.carrierPhase;
    let s = 0;
    for (let k = 1; k < n; k++) s += (p[k] - p[k - 1]) ** 2;
    const measured = s / (n - 1);
    const expected = (2 * Math.PI * lw) / rs;
    // 2e5 increments: relative std of the variance estimate √(2/N) = 0.3 %; 5 % is the bound.
    expect(Math.abs(measured / expected - 1)).toBeLessThan(0.05);
  });

  it('rotates x as exp(+j·2π·f·t) for a positive frequency offset', () => {
    // DESIGN.md: freqOffsetHz is signed so that x = xi + j·xq rotates as exp(+j·2π·f·t).
    const base = { seed: 5, modulation: 'qpsk' as const, symbols: 4096, symbolRate: 32e9 };
    const f = 1.5e9;
    const fs = 64e9;
    const still = simulate(base).truth.field.x;
    const moving = simulate({ ...base, channel: { freqOffsetHz: f } }).truth.field.x;
    let worst = 0;
    for (let n = 0; n < still.length >> 1; n++) {
      const a = (2 * Math.PI * f * n) / fs;
      const re = still[2 * n] * Math.cos(a) - still[2 * n + 1] * Math.sin(a);
      const im = still[2 * n] * Math.sin(a) + still[2 * n + 1] * Math.cos(a);
      worst = Math.max(worst, Math.hypot(moving[2 * n] - re, moving[2 * n + 1] - im));
    }
    expect(worst).toBeLessThan(1e-12);
  });
});
