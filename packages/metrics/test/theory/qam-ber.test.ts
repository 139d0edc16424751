import { constellation, type ModulationName } from '@intradyne/core';
import erfc from '@stdlib/math-base-special-erfc';
import { describe, expect, it } from 'vitest';
import { implementationPenaltyDb, snrForBer, theoryBer } from '../../src/theory/qam-ber.js';

// First-principles BER of Gray square QAM in AWGN, independent of the Cho &
// Yoon sum: per axis, sum over every transmitted level and every decision
// region the probability of landing there (differences of erfc from
// @stdlib) times the Hamming distance of the Gray labels.
function enumeratedBer(modulation: ModulationName, snrDb: number): number {
  const c = constellation(modulation);
  const L = c.levelsPerAxis;
  const b = c.bitsPerSymbol / 2;
  // Per-axis noise standard deviation for unit symbol power: σ² = 1/(2·SNR).
  const sigma = Math.sqrt(1 / (2 * 10 ** (snrDb / 10)));
  const level = (i: number) => (2 * i - (L - 1)) * c.scale;
  // P(n > t) for n ~ N(0, σ²).
  const tail = (t: number) => 0.5 * erfc(t / (Math.SQRT2 * sigma));
  // P(lo < n < hi), from the tails on the side away from 0 (no cancellation of values near 1).
  const between = (lo: number, hi: number) =>
    hi <= 0 ? tail(-hi) - tail(-lo) : lo >= 0 ? tail(lo) - tail(hi) : 1 - tail(-lo) - tail(hi);
  let errors = 0;
  for (let tx = 0; tx < L; tx++) {
    for (let rx = 0; rx < L; rx++) {
      const lo = rx === 0 ? Number.NEGATIVE_INFINITY : level(rx) - c.scale;
      const hi = rx === L - 1 ? Number.POSITIVE_INFINITY : level(rx) + c.scale;
      const p = between(lo - level(tx), hi - level(tx));
      let d = tx ^ (tx >> 1) ^ (rx ^ (rx >> 1));
      let h = 0;
      for (; d; d &= d - 1) h++;
      errors += p * h;
    }
  }
  return errors / (L * b);
}

describe('theoryBer (Cho & Yoon 2002)', () => {
  it('is ½·erfc(√(SNR/2)) for QPSK (closed form, @stdlib erfc)', () => {
    for (const snrDb of [-5, 0, 4, 9.8, 13, 16]) {
      const snr = 10 ** (snrDb / 10);
      // Same erfc on both sides: only rounding differs.
      expect(theoryBer('qpsk', snrDb)).toBeCloseTo(0.5 * erfc(Math.sqrt(snr / 2)), 15);
      expect(Math.abs(theoryBer('qpsk', snrDb) / (0.5 * erfc(Math.sqrt(snr / 2))) - 1)).toBeLessThan(1e-12);
    }
  });

  it("is 3/8·erfc(a) + 1/4·erfc(3a) − 1/8·erfc(5a), a = √(SNR/10), for 16QAM (Cho & Yoon's 16QAM case)", () => {
    for (const snrDb of [0, 8, 12, 16.54, 20]) {
      const a = Math.sqrt(10 ** (snrDb / 10) / 10);
      const closed = (3 / 8) * erfc(a) + (1 / 4) * erfc(3 * a) - (1 / 8) * erfc(5 * a);
      expect(Math.abs(theoryBer('16qam', snrDb) / closed - 1)).toBeLessThan(1e-12);
    }
  });

  it('matches the enumeration of decision regions for QPSK, 16QAM and 64QAM', () => {
    for (const modulation of ['qpsk', '16qam', '64qam'] as const) {
      for (const snrDb of [-3, 5, 10, 15, 20, 25]) {
        const exact = enumeratedBer(modulation, snrDb);
        // Both sums are exact; they differ in rounding and in cancellation of erfc terms only.
        expect(Math.abs(theoryBer(modulation, snrDb) / exact - 1)).toBeLessThan(1e-9);
      }
    }
  });

  it('tends to 0.5 with no signal and rejects NaN', () => {
    expect(theoryBer('16qam', Number.NEGATIVE_INFINITY)).toBe(0.5);
    expect(() => theoryBer('qpsk', Number.NaN)).toThrow(RangeError);
  });
});

describe('snrForBer', () => {
  // Check points of DOMAIN.md (Cho & Yoon 2002 curves), given to 0.01 dB: the tolerance is their rounding.
  it.each([
    ['qpsk', 9.8],
    ['16qam', 16.54],
    ['64qam', 22.55],
  ] as const)('needs %s dB of Es/N0 at BER 1e-3 for %s', (modulation, expected) => {
    const snr = snrForBer(modulation, 1e-3);
    expect(Math.abs(snr - expected)).toBeLessThanOrEqual(0.005);
    // And the closed forms above (@stdlib erfc) give 1e-3 there.
    expect(Math.abs(enumeratedBer(modulation, snr) / 1e-3 - 1)).toBeLessThan(1e-8);
  });

  it('inverts theoryBer over nine decades', () => {
    for (const modulation of ['qpsk', '16qam', '64qam'] as const) {
      for (const ber of [0.2, 1e-2, 3.8e-3, 1e-4, 1e-6, 1e-9]) {
        // Bisection to 1e-10 dB; the BER slope is below 10 decades per dB, so 1e-8 relative is loose.
        expect(Math.abs(theoryBer(modulation, snrForBer(modulation, ber)) / ber - 1)).toBeLessThan(1e-8);
      }
    }
  });

  it('rejects a BER outside (0, 0.5)', () => {
    for (const bad of [0, 0.5, -1, Number.NaN]) expect(() => snrForBer('qpsk', bad)).toThrow(RangeError);
  });
});

describe('implementationPenaltyDb', () => {
  it('is the SNR above what theory needs for the measured BER', () => {
    const need = snrForBer('16qam', 2e-3);
    expect(implementationPenaltyDb('16qam', need + 1.5, 2e-3)).toBeCloseTo(1.5, 9);
    expect(implementationPenaltyDb('16qam', need, 2e-3)).toBeCloseTo(0, 9);
  });

  it('rejects a non-finite SNR or a BER out of range', () => {
    expect(() => implementationPenaltyDb('qpsk', Number.POSITIVE_INFINITY, 1e-3)).toThrow(RangeError);
    expect(() => implementationPenaltyDb('qpsk', 10, 0)).toThrow(RangeError);
  });
});
