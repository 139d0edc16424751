import { describe, expect, it } from 'vitest';
import { constellation, mapBits, OptionError, Rng, viterbiViterbi, viterbiViterbiPhase } from '../../src/index.js';
import { carrierSignal, countBitErrors, qpskBer, rotate, runSymbols, snrForBer } from '../support/carrier-signals.js';

function randomSymbols(modulation: 'qpsk' | '16qam' | '64qam', n: number, seed: number) {
  const c = constellation(modulation);
  const bits = new Rng(seed).fillBits(new Uint8Array(n * c.bitsPerSymbol));
  return mapBits(c, bits);
}

describe('Viterbi–Viterbi (Viterbi & Viterbi, IEEE Trans. Inf. Theory 29(4), 1983)', () => {
  it('returns a constant rotation θ exactly on noiseless QPSK (mod π/2)', () => {
    const c = constellation('qpsk');
    const a = randomSymbols('qpsk', 2000, 1);
    for (const theta of [0.3, -0.7, 1.0]) {
      const phase = viterbiViterbiPhase(c, rotate(a, theta), { halfWindow: 6 });
      // The estimate is defined mod π/2 and starts in (−π/4, π/4].
      const expected = theta - (Math.PI / 2) * Math.round(theta / (Math.PI / 2));
      for (let k = 0; k < phase.length; k++) {
        // Exact up to floating-point rounding of atan2 over a sum of 13 terms.
        expect(Math.abs(phase[k] - expected)).toBeLessThan(1e-12);
      }
    }
  });

  it('is exact on noiseless 16QAM and 64QAM through QPSK partitioning (diagonal rings)', () => {
    for (const m of ['16qam', '64qam'] as const) {
      const phase = viterbiViterbiPhase(constellation(m), rotate(randomSymbols(m, 3000, 2), 0.2), { halfWindow: 10 });
      let worst = 0;
      for (const p of phase) worst = Math.max(worst, Math.abs(p - 0.2));
      expect(worst).toBeLessThan(1e-12);
    }
  });

  it('follows the carrier of noisy 16QAM through QPSK partitioning, where the plain fourth power slips', () => {
    // 16QAM at 18 dB, 100 kHz, N = 16. With only the diagonal rings in the
    // sum the track stays on the true phase (rms error 0.03 rad measured);
    // with every symbol the weak tone of 16QAM (|E[a⁴]| = 0.68 against
    // E|a|⁸ = 3.12 of self-noise) lets the track slip. 0.06 rad is twice
    // the measured error and far below what one slip adds (π/2 thereafter).
    const s = carrierSignal({ seed: 1, modulation: '16qam', symbols: 1 << 15, esN0Db: 18, linewidthHz: 100e3 });
    const rms = (selection: 'diagonal-rings' | 'all') => {
      const th = viterbiViterbiPhase(constellation('16qam'), s.x, { halfWindow: 16, selection });
      const q = (Math.PI / 2) * Math.round((th[0] - s.carrierPhase[0]) / (Math.PI / 2));
      let e2 = 0;
      for (let k = 0; k < th.length; k++) e2 += (th[k] - s.carrierPhase[k] - q) ** 2;
      return Math.sqrt(e2 / th.length);
    };
    expect(rms('diagonal-rings')).toBeLessThan(0.06);
    expect(rms('all')).toBeGreaterThan(0.3);
  });

  it('unwraps a carrier that turns through many quarter turns', () => {
    // A phase ramp of 2 mrad per symbol: 20 rad over 10000 symbols, 12.7 quarter turns.
    const n = 10000;
    const a = randomSymbols('qpsk', n, 3);
    const r = a.slice() as typeof a;
    for (let k = 0; k < n; k++) {
      const t = 0.002 * k + 0.1;
      r[2 * k] = a[2 * k] * Math.cos(t) - a[2 * k + 1] * Math.sin(t);
      r[2 * k + 1] = a[2 * k] * Math.sin(t) + a[2 * k + 1] * Math.cos(t);
    }
    const N = 8;
    const phase = viterbiViterbiPhase(constellation('qpsk'), r, { halfWindow: N });
    // A centred window on a linear phase is unbiased: exact away from the ends of the stream.
    for (let k = N; k < n - N; k++) expect(Math.abs(phase[k] - (0.002 * k + 0.1))).toBeLessThan(1e-9);
  });

  it('reaches a BER within 1.25× of theory for QPSK at 200 kHz and 32 GBd', () => {
    // SNR where QPSK theory gives 1e-3: ½·erfc(√(SNR/2)) = 1e-3 (Proakis), 9.80 dB.
    const snr = snrForBer(qpskBer, 1e-3);
    expect(snr).toBeCloseTo(9.8, 1);
    // 2^17 symbols per polarization, 2 bits each: about 520 errors expected,
    // a ±4.4 % (1σ) count; the window N = 32 suits Δν·T = 6.25e-6 (phase
    // drift over the window ≈ 0.03 rad) at this SNR.
    const s = carrierSignal({ seed: 7, modulation: 'qpsk', symbols: 1 << 17, esN0Db: snr, linewidthHz: 200e3 });
    const stage = viterbiViterbi({ modulation: 'qpsk', halfWindow: 32, reference: { x: s.refX, y: s.refY } });
    const out = runSymbols(stage, s.x, s.y);
    const c = constellation('qpsk');
    const ex = countBitErrors(c, out.x, s.refX);
    const ey = countBitErrors(c, out.y, s.refY);
    const ratio = (ex.errors + ey.errors) / (ex.bits + ey.bits) / 1e-3;
    expect(ratio).toBeLessThan(1.25);
    // A carrier recovery cannot beat a known phase by more than the count's spread.
    expect(ratio).toBeGreaterThan(0.85);
    expect(stage.diagnostics().cycleSlips).toMatchObject({ method: 'reference', count: 0 });
  });

  it('validates its options', () => {
    expect(() => viterbiViterbi({ modulation: '8psk' as never })).toThrow(OptionError);
    expect(() => viterbiViterbi({ modulation: 'qpsk', halfWindow: -1 })).toThrow(/halfWindow/);
    expect(() => viterbiViterbi({ modulation: 'qpsk', amplitudeExponent: Number.NaN })).toThrow(/amplitudeExponent/);
    expect(() => viterbiViterbi({ modulation: '16qam', selection: 'outer' as never })).toThrow(/selection/);
    expect(() => viterbiViterbi({ modulation: 'qpsk', slipWindow: 4 })).toThrow(/slipWindow/);
    expect(() => viterbiViterbi({ modulation: 'qpsk', linewidthLags: [10, 5] })).toThrow(/linewidthLags/);
  });
});
