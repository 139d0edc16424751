import { complexArray, constellation, labelsToSymbols, Rng } from '@intradyne/core';
import erfc from '@stdlib/math-base-special-erfc';
import { describe, expect, it } from 'vitest';
import { evmRms } from '../../src/quality/evm.js';
import { leastSquaresGain } from '../../src/quality/gain.js';
import { dataAidedSnr, qFactorDb, snrFromEvm } from '../../src/quality/snr.js';
import { snrForBer } from '../../src/theory/qam-ber.js';

function randomSymbols(modulation: 'qpsk' | '16qam' | '64qam', n: number, seed: number) {
  const c = constellation(modulation);
  const rng = new Rng(seed);
  const labels = new Uint8Array(n);
  for (let i = 0; i < n; i++) labels[i] = rng.integer(c.order);
  return { c, a: labelsToSymbols(c, labels), rng };
}

describe('evmRms', () => {
  it('is the offset magnitude for a constant offset, and 0 without error', () => {
    const { c, a } = randomSymbols('16qam', 1000, 1);
    expect(evmRms(c, a, a)).toBe(0);
    const z = a.slice() as typeof a;
    for (let k = 0; k < 1000; k++) {
      z[2 * k] += 0.03;
      z[2 * k + 1] -= 0.04;
    }
    // |0.03 − 0.04j| = 0.05 against unit average power.
    expect(evmRms(c, z, a)).toBeCloseTo(0.05, 12);
    // Peak power of 16QAM is 18/10 (corner points ±3 ± 3j at scale √0.1).
    expect(evmRms(c, z, a, 'peak')).toBeCloseTo(0.05 / Math.sqrt(1.8), 12);
  });

  it('rejects mismatched lengths and unknown normalizations', () => {
    const { c, a } = randomSymbols('qpsk', 10, 2);
    expect(() => evmRms(c, a, complexArray(9))).toThrow(RangeError);
    expect(() => evmRms(c, a, a, 'median' as 'peak')).toThrow(RangeError);
  });
});

describe('dataAidedSnr and snrFromEvm', () => {
  it('recovers the SNR of Gaussian noise, and 1/EVM² agrees', () => {
    // 20,000 symbols: the noise power estimate has a relative standard deviation of 1/√20000 = 0.7 %
    // (0.03 dB); 0.1 dB is three of them.
    const n = 20000;
    const { c, a, rng } = randomSymbols('64qam', n, 4);
    const z = a.slice() as typeof a;
    const s = Math.sqrt(0.01 / 2); // σ² = 0.01 per complex symbol: 20 dB
    for (let i = 0; i < z.length; i++) z[i] += s * rng.gaussian();
    expect(Math.abs(10 * Math.log10(dataAidedSnr(z, a)) - 20)).toBeLessThan(0.1);
    const evm = evmRms(c, z, a);
    expect(Math.abs(10 * Math.log10(snrFromEvm(evm)) - 20)).toBeLessThan(0.1);
    expect(snrFromEvm(0.1)).toBeCloseTo(100, 12);
    expect(() => snrFromEvm(-1)).toThrow(RangeError);
  });
});

describe('leastSquaresGain', () => {
  it('finds the scale of a noisy stream without the bias of power normalization', () => {
    const n = 20000;
    const { a, rng } = randomSymbols('16qam', n, 5);
    const z = complexArray(n);
    for (let i = 0; i < z.length; i++) z[i] = 0.5 * a[i] + 0.2 * rng.gaussian();
    // Noise is independent of the data: the estimate's spread is ~0.2/√(2n)/1 ≈ 1e-3.
    expect(Math.abs(leastSquaresGain(z, a) - 0.5)).toBeLessThan(5e-3);
    // Power normalization would see √(0.25 + 0.08) = 0.574.
    expect(() => leastSquaresGain(z, complexArray(n - 1))).toThrow(RangeError);
    expect(() => leastSquaresGain(z, complexArray(n))).toThrow(RangeError);
  });
});

describe('qFactorDb', () => {
  it('equals the Es/N0 QPSK needs for the BER (identity of Q = √2·erfc⁻¹(2·BER))', () => {
    for (const ber of [0.1, 1e-2, 3.8e-3, 1e-3, 1e-6, 1e-9, 1e-14]) {
      // snrForBer bisects on @stdlib erfc; qFactorDb uses @stdlib erfcinv: two routes, 1e-6 dB apart at most.
      expect(Math.abs(qFactorDb(ber) - snrForBer('qpsk', ber))).toBeLessThan(1e-6);
    }
    // And by definition: BER = ½·erfc(Q/√2).
    const q = 10 ** (qFactorDb(2e-4) / 20);
    expect(0.5 * erfc(q / Math.SQRT2)).toBeCloseTo(2e-4, 15);
  });

  it('rejects a BER outside (0, 0.5)', () => {
    for (const bad of [0, 0.5, 0.7, Number.NaN]) expect(() => qFactorDb(bad)).toThrow(RangeError);
  });
});
