import { describe, expect, it } from 'vitest';
import { idealMatchedFilter, simulate } from '../../src/index.js';

describe('simulated Es/N0', () => {
  // SNR is defined at the symbol instants after an ideal matched filter
  // (DOMAIN.md conventions). Over 2^20 symbols the measured noise variance has
  // a relative standard deviation of √(1/N) ≈ 0.1 %, i.e. 0.004 dB, so
  // 0.05 dB (the bound) is over ten standard deviations.
  it('is within 0.05 dB of the set value over 2^20 symbols per polarization', () => {
    const n = 2 ** 20;
    const cap = simulate({ seed: 2024, modulation: '16qam', symbols: n, symbolRate: 32e9, channel: { esN0Db: 15 } });
    for (const pol of ['x', 'y'] as const) {
      const r = idealMatchedFilter(cap.truth.field[pol], n, 32e9, cap.rollOff);
      const a = cap.reference[pol];
      let signal = 0;
      let noise = 0;
      for (let i = 0; i < r.length; i++) {
        signal += a[i] * a[i];
        noise += (r[i] - a[i]) ** 2;
      }
      expect(Math.abs(10 * Math.log10(signal / noise) - 15)).toBeLessThan(0.05);
    }
  });

  it('holds at a non-integer 2.5 samples per symbol and with OSNR given instead', () => {
    // Essiambre et al., JLT 2010: SNR = OSNR − 4.08 dB at 32 GBd dual polarization.
    const n = 2 ** 16;
    const cap = simulate({
      seed: 7,
      modulation: 'qpsk',
      symbols: n,
      symbolRate: 32e9,
      samplesPerSymbol: 2.5,
      channel: { osnrDb: 16.08 },
    });
    expect(cap.truth.esN0Db).toBeCloseTo(12.0, 2);
    const r = idealMatchedFilter(cap.truth.field.x, n, 32e9, cap.rollOff);
    let noise = 0;
    for (let i = 0; i < r.length; i++) noise += (r[i] - cap.reference.x[i]) ** 2;
    // 2^16 symbols: relative std of the variance estimate 0.4 % → 0.017 dB; 0.1 dB is ~6σ.
    expect(Math.abs(10 * Math.log10(n / noise) - 12)).toBeLessThan(0.1);
  });

  it('returns the transmitted symbols exactly when noiseless (the pulse normalization)', () => {
    const cap = simulate({ seed: 3, modulation: '64qam', symbols: 2000, symbolRate: 32e9, samplesPerSymbol: 2.5, rollOff: 0.3 });
    const r = idealMatchedFilter(cap.truth.field.y, 2000, 32e9, 0.3);
    let worst = 0;
    for (let i = 0; i < r.length; i++) worst = Math.max(worst, Math.abs(r[i] - cap.reference.y[i]));
    // Only floating-point rounding of the FFTs remains.
    expect(worst).toBeLessThan(1e-12);
  });
});
