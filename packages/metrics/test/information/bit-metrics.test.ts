import { type ComplexArray, complexArray, constellation, decide, idealMatchedFilter, Rng, simulate } from '@intradyne/core';
import { describe, expect, it } from 'vitest';
import { airBitsPerSecond } from '../../src/information/air.js';
import { fittedNoiseVariance, informationEstimate } from '../../src/information/bit-metrics.js';
import { theoryGmi, theoryMi } from '../../src/theory/awgn-information.js';
import { randomSymbols } from '../support/streams.js';

// The estimator's formulas written out directly with plain sums of exponentials (no log-sum-exp,
// no shared exponentials): valid where nothing underflows, i.e. moderate SNR.
function naive(c: ReturnType<typeof constellation>, z: ComplexArray, sent: Uint8Array, s2: number) {
  const m = c.bitsPerSymbol;
  let gmiLoss = 0;
  let miLoss = 0;
  for (let k = 0; k < sent.length; k++) {
    const q = (l: number) => Math.exp(-((z[2 * k] - c.points[2 * l]) ** 2 + (z[2 * k + 1] - c.points[2 * l + 1]) ** 2) / s2);
    let all = 0;
    for (let l = 0; l < c.order; l++) all += q(l);
    miLoss += Math.log2(all / q(sent[k]));
    for (let i = 0; i < m; i++) {
      const mask = 1 << (m - 1 - i);
      let own = 0;
      for (let l = 0; l < c.order; l++) if ((l & mask) === (sent[k] & mask)) own += q(l);
      gmiLoss += Math.log2(all / own);
    }
  }
  return { gmi: m - gmiLoss / sent.length, mi: m - miLoss / sent.length };
}

function noisy(modulation: 'qpsk' | '16qam' | '64qam', n: number, snrDb: number, seed: number) {
  const rng = new Rng(seed);
  const { symbols, labels } = randomSymbols(modulation, n, rng);
  const z = symbols.slice() as ComplexArray;
  const s = Math.sqrt(10 ** (-snrDb / 10) / 2);
  for (let i = 0; i < z.length; i++) z[i] += s * rng.gaussian();
  return { c: constellation(modulation), a: symbols, z, labels };
}

describe('informationEstimate', () => {
  it('computes the GMI and MI formulas of Alvarado et al. (JLT 2018) within 1e-6 bit', () => {
    for (const [modulation, snrDb] of [
      ['qpsk', 3],
      ['16qam', 10],
      ['64qam', 16],
    ] as const) {
      const { c, a, z, labels } = noisy(modulation, 2000, snrDb, 1);
      const s2 = fittedNoiseVariance(z, a);
      const got = informationEstimate(c, z, labels, s2);
      const want = naive(c, z, labels, s2);
      // The per-axis losses come from a table with cubic interpolation, stated within 4e-7 bit of
      // the exact sums (see AxisTable); the estimate's own spread over 2,000 symbols is ~0.01 bit.
      expect(Math.abs(got.gmi - want.gmi)).toBeLessThan(1e-6);
      expect(Math.abs(got.mi - want.mi)).toBeLessThan(1e-6);
    }
  });

  it('gives GMI = MI for Gray QPSK, sample by sample, and max-log changes nothing there', () => {
    const { c, a, z, labels } = noisy('qpsk', 5000, 4, 2);
    const s2 = fittedNoiseVariance(z, a);
    const exact = informationEstimate(c, z, labels, s2);
    // The Gaussian metric factorizes over I and Q and each axis carries one bit (see the theory test).
    expect(Math.abs(exact.gmi - exact.mi)).toBeLessThan(1e-12);
    expect(Math.abs(informationEstimate(c, z, labels, s2, 'max-log').gmi - exact.gmi)).toBeLessThan(1e-12);
  });

  it('gives less with max-log bit metrics for 16QAM and 64QAM at low SNR', () => {
    // The max-log loss is largest at low SNR (measured on 20,000 symbols: 0.02–0.04 bit for 16QAM
    // at 0–4 dB, 0.06–0.1 bit for 64QAM at 4–8 dB; it vanishes at high SNR). Both estimates use
    // the same samples, so their difference fluctuates far less than either.
    for (const [modulation, snrDb] of [
      ['16qam', 2],
      ['64qam', 6],
    ] as const) {
      const { c, a, z, labels } = noisy(modulation, 4000, snrDb, 3);
      const s2 = fittedNoiseVariance(z, a);
      const exact = informationEstimate(c, z, labels, s2).gmi;
      const maxLog = informationEstimate(c, z, labels, s2, 'max-log').gmi;
      expect(maxLog).toBeLessThan(exact - 0.01);
    }
  });

  it('stays finite when a symbol lands far from its point at high SNR (no underflow)', () => {
    const { c, a, z, labels } = noisy('64qam', 1000, 40, 4);
    // Symbol 0 moved onto the opposite corner: its own-bit sums are e^(−|Δ|²/σ²) with |Δ|²/σ² ≈ 9e4.
    z[0] = -a[0];
    z[1] = -a[1];
    const s2 = fittedNoiseVariance(z, a);
    const got = informationEstimate(c, z, labels, s2);
    expect(Number.isFinite(got.gmi)).toBe(true);
    expect(Number.isFinite(got.mi)).toBe(true);
    expect(got.gmi).toBeLessThan(6);
  });

  it('estimates the theoretical GMI of 16QAM at 10 dB within 0.01 bit from simulated data', () => {
    // simulate(): Es/N0 = 10 dB at the ideal matched filter; 2 × 65,536 symbols. The per-symbol
    // GMI term has a standard deviation of about 1.1 bit here (measured), so the estimate's standard
    // error is 1.1/√131072 ≈ 0.003 bit and 0.01 bit is more than three of them.
    const n = 65536;
    const cap = simulate({ seed: 12, modulation: '16qam', symbols: n, symbolRate: 32e9, channel: { esN0Db: 10 } });
    const c = constellation('16qam');
    let gmi = 0;
    let mi = 0;
    for (const p of ['x', 'y'] as const) {
      const z = idealMatchedFilter(cap.truth.field[p], n, 32e9, cap.rollOff);
      const est = informationEstimate(c, z, decide(c, cap.reference[p]), fittedNoiseVariance(z, cap.reference[p]));
      gmi += est.gmi / 2;
      mi += est.mi / 2;
    }
    expect(Math.abs(gmi - 3.1636)).toBeLessThan(0.01);
    expect(Math.abs(gmi - theoryGmi('16qam', 10))).toBeLessThan(0.01);
    expect(Math.abs(mi - theoryMi('16qam', 10))).toBeLessThan(0.01);
  });

  it('rejects bad inputs', () => {
    const { c, z, labels } = noisy('qpsk', 10, 5, 5);
    expect(() => informationEstimate(c, z, labels, 0)).toThrow(RangeError);
    expect(() => informationEstimate(c, z, labels, Number.POSITIVE_INFINITY)).toThrow(RangeError);
    expect(() => informationEstimate(c, z, labels.subarray(1), 0.1)).toThrow(RangeError);
    expect(() => informationEstimate(c, z, labels, 0.1, 'soft' as 'exact')).toThrow(RangeError);
    expect(() => fittedNoiseVariance(z, complexArray(3))).toThrow(RangeError);
  });
});

describe('airBitsPerSecond', () => {
  it('is (GMIx + GMIy)·Rs, with a negative GMI estimate counted as 0', () => {
    expect(airBitsPerSecond(3.5, 3.25, 32e9)).toBe(6.75 * 32e9);
    expect(airBitsPerSecond(-0.1, 1, 1e9)).toBe(1e9);
    expect(() => airBitsPerSecond(1, 1, 0)).toThrow(RangeError);
    expect(() => airBitsPerSecond(Number.NaN, 1, 1e9)).toThrow(RangeError);
  });
});
