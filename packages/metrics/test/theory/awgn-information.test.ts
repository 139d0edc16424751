import { describe, expect, it } from 'vitest';
import { snrForNgmi, theoryGmi, theoryMi } from '../../src/theory/awgn-information.js';

// MI of BPSK (±1) in real AWGN of variance s², by the trapezoid rule on a
// fine grid — another quadrature than the one under test:
// C = 1 − E[log2(1 + e^(−2y/s²))], y ~ N(1, s²).
function bpskMiTrapezoid(s2: number): number {
  const s = Math.sqrt(s2);
  const h = s / 400;
  let sum = 0;
  for (let n = -12 * s; n <= 12 * s; n += h) {
    const y = 1 + n;
    const pdf = Math.exp((-n * n) / (2 * s2)) / Math.sqrt(2 * Math.PI * s2);
    const x = (-2 * y) / s2;
    const l = x > 0 ? x + Math.log1p(Math.exp(-x)) : Math.log1p(Math.exp(x));
    sum += pdf * l * h;
  }
  return 1 - sum / Math.LN2;
}

describe('theoryGmi and theoryMi (AWGN, Gauss–Hermite)', () => {
  it('gives 3.1636 bit for Gray 16QAM at 10 dB (issue check value, to its 4 decimals)', () => {
    expect(Math.abs(theoryGmi('16qam', 10) - 3.1636)).toBeLessThan(5e-5);
  });

  it('has converged at the default 64 nodes', () => {
    for (const m of ['qpsk', '16qam', '64qam'] as const) {
      for (const snrDb of [0, 10, 20]) {
        expect(Math.abs(theoryGmi(m, snrDb) - theoryGmi(m, snrDb, { nodes: 150 }))).toBeLessThan(1e-6);
        expect(Math.abs(theoryMi(m, snrDb) - theoryMi(m, snrDb, { nodes: 150 }))).toBeLessThan(1e-6);
      }
    }
  });

  it('gives GMI = MI for Gray QPSK, equal to twice the BPSK MI integrated by the trapezoid rule', () => {
    for (const snrDb of [-5, 0, 5, 10]) {
      const gmi = theoryGmi('qpsk', snrDb);
      expect(Math.abs(gmi - theoryMi('qpsk', snrDb))).toBeLessThan(1e-12);
      // QPSK at Es/N0 = SNR is two BPSK of amplitude 1/√2 at per-axis variance 1/(2·SNR): scaled, s² = 1/SNR.
      const s2 = 1 / 10 ** (snrDb / 10);
      expect(Math.abs(gmi - 2 * bpskMiTrapezoid(s2))).toBeLessThan(1e-6);
    }
  });

  it('orders GMI ≤ MI ≤ log2(1 + SNR) and tends to log2 M and 0', () => {
    for (const m of ['16qam', '64qam'] as const) {
      for (const snrDb of [0, 5, 10, 15, 20]) {
        const gmi = theoryGmi(m, snrDb);
        const mi = theoryMi(m, snrDb);
        // Near log2 M the two agree to rounding (16QAM at 20 dB), hence the 1e-12 slack.
        expect(gmi).toBeLessThanOrEqual(mi + 1e-12);
        // Shannon's capacity of the complex AWGN channel bounds every constellation.
        expect(mi).toBeLessThan(Math.log2(1 + 10 ** (snrDb / 10)));
      }
    }
    expect(theoryMi('64qam', 10) - theoryGmi('64qam', 10)).toBeGreaterThan(0.05);
    expect(theoryGmi('16qam', 35)).toBeCloseTo(4, 9);
    expect(theoryMi('64qam', -20)).toBeLessThan(0.015);
  });

  it('rejects NaN', () => {
    expect(() => theoryGmi('qpsk', Number.NaN)).toThrow(RangeError);
  });
});

describe('snrForNgmi', () => {
  it('inverts theoryGmi', () => {
    for (const m of ['qpsk', '16qam', '64qam'] as const) {
      const bits = m === 'qpsk' ? 2 : m === '16qam' ? 4 : 6;
      for (const ngmi of [0.3, 0.8, 1 / 1.2, 0.95]) {
        // Bisection to 1e-9 dB; the GMI slope is below 1 bit/dB, so 1e-8 bit is loose.
        expect(Math.abs(theoryGmi(m, snrForNgmi(m, ngmi)) / bits - ngmi)).toBeLessThan(1e-8);
      }
    }
    // 16QAM at 10 dB has GMI 3.1636 bit: NGMI 0.7909.
    expect(Math.abs(snrForNgmi('16qam', 3.1636 / 4) - 10)).toBeLessThan(1e-3);
  });

  it('rejects an NGMI outside (0, 1)', () => {
    for (const bad of [0, 1, 1.5, Number.NaN]) expect(() => snrForNgmi('qpsk', bad)).toThrow(RangeError);
  });
});
