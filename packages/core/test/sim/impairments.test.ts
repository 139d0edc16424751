import { describe, expect, it } from 'vitest';
import {
  type ComplexArray,
  complexArray,
  fft,
  idealMatchedFilter,
  OptionError,
  simulate,
  unitarityError,
} from '../../src/index.js';

function powerOf(a: ArrayLike<number>): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i] * a[i];
  return s / a.length;
}

describe('simulator impairments', () => {
  it('draws unitary SOP and PSP matrices and preserves total power', () => {
    const cap = simulate({
      seed: 11,
      modulation: '16qam',
      symbols: 8192,
      symbolRate: 32e9,
      channel: { sop: 'random', dgdPs: 10 },
    });
    expect(unitarityError(cap.truth.sop)).toBeLessThan(1e-12);
    expect(unitarityError(cap.truth.psp)).toBeLessThan(1e-12);
    // SOP and DGD are unitary at every frequency, so (Parseval) the field's
    // total power equals that of the same symbols through an identity channel.
    const sent = powerOf(cap.reference.x) + powerOf(cap.reference.y);
    const total = powerOf(cap.truth.field.x) + powerOf(cap.truth.field.y);
    const ideal = simulate({ seed: 11, modulation: '16qam', symbols: 8192, symbolRate: 32e9 });
    const totalIdeal = powerOf(ideal.truth.field.x) + powerOf(ideal.truth.field.y);
    expect(Math.abs(total / totalIdeal - 1)).toBeLessThan(1e-9);
    expect(sent).toBeGreaterThan(0);
  });

  it('applies the IQ model Q′ = g·(Q·cos φ + I·sin φ)', () => {
    const cap = simulate({
      seed: 4,
      modulation: 'qpsk',
      symbols: 4096,
      symbolRate: 32e9,
      receiver: { iqPhaseDeg: { x: 10 }, iqGainDb: { y: 1 } },
    });
    const f = cap.truth.field.x;
    const phi = (10 * Math.PI) / 180;
    let worst = 0;
    for (let k = 0; k < cap.channels.xq.length; k++) {
      worst = Math.max(worst, Math.abs(cap.channels.xq[k] - (f[2 * k + 1] * Math.cos(phi) + f[2 * k] * Math.sin(phi))));
    }
    expect(worst).toBeLessThan(1e-12);
    const g = Math.sqrt(powerOf(cap.channels.yq) / powerOf(cap.channels.yi));
    // 1 dB of amplitude gain is ×1.122; QPSK's I and Q carry equal power, to within sampling noise.
    expect(g).toBeCloseTo(10 ** (1 / 20), 1);
  });

  it('delays a channel by the given skew', () => {
    const n = 8192;
    const cap = simulate({ seed: 8, modulation: 'qpsk', symbols: n, symbolRate: 32e9, receiver: { skewPs: { xq: 3 } } });
    const ref = simulate({ seed: 8, modulation: 'qpsk', symbols: n, symbolRate: 32e9 });
    // A delay τ turns the cross-spectrum B·conj(A) into |A|²·e^(−j2πfτ):
    // estimate τ by a power-weighted least-squares fit of its phase slope.
    const toComplex = (v: Float64Array) => {
      const z = complexArray(v.length);
      for (let k = 0; k < v.length; k++) z[2 * k] = v[k];
      return fft(z);
    };
    const A = toComplex(ref.channels.xq);
    const B = toComplex(cap.channels.xq);
    const N = A.length >> 1;
    const fs = 64e9;
    let num = 0;
    let den = 0;
    for (let m = 1; m < N / 2; m++) {
      const f = (m * fs) / N;
      const cr = B[2 * m] * A[2 * m] + B[2 * m + 1] * A[2 * m + 1];
      const ci = B[2 * m + 1] * A[2 * m] - B[2 * m] * A[2 * m + 1];
      const w = Math.hypot(cr, ci);
      if (w === 0) continue;
      const w2 = 2 * Math.PI * f;
      num += w * w2 * -Math.atan2(ci, cr);
      den += w * w2 * w2;
    }
    // Noiseless: the fit returns the delay to rounding.
    expect((num / den) * 1e12).toBeCloseTo(3, 6);
    expect(cap.channels.xi).toEqual(ref.channels.xi);
  });

  it('clips and quantizes at the ADC and reports the clipped fraction', () => {
    const cap = simulate({
      seed: 1,
      modulation: '16qam',
      symbols: 4096,
      symbolRate: 32e9,
      receiver: { adc: { bits: 6, loading: 0.5 } },
    });
    // At rms = half of full scale, a Gaussian-like signal exceeds 2σ about 4.6 % of the time (normal tail).
    expect(cap.truth.clipped.xi).toBeGreaterThan(0.01);
    expect(cap.truth.clipped.xi).toBeLessThan(0.1);
    const levels = new Set(Array.from(cap.channels.xi));
    expect(levels.size).toBeLessThanOrEqual(64);
  });

  it('is reproducible: same seed, same samples; another seed, other samples', () => {
    const o = {
      seed: 5,
      modulation: '16qam' as const,
      symbols: 1024,
      symbolRate: 32e9,
      channel: { esN0Db: 20, linewidthHz: 1e5 },
    };
    expect(simulate(o).channels.xi).toEqual(simulate(o).channels.xi);
    expect(simulate({ ...o, seed: 6 }).channels.xi).not.toEqual(simulate(o).channels.xi);
  });

  it('rejects options out of range with the option named', () => {
    const base = { seed: 1, modulation: 'qpsk' as const, symbols: 1024, symbolRate: 32e9 };
    expect(() => simulate({ ...base, samplesPerSymbol: 1.05 })).toThrow(OptionError);
    expect(() => simulate({ ...base, samplesPerSymbol: 1.05 })).toThrow(/samplesPerSymbol/);
    expect(() => simulate({ ...base, symbols: 1001, samplesPerSymbol: 2.5 })).toThrow(/symbols/);
    expect(() => simulate({ ...base, channel: { esN0Db: Number.NaN } })).toThrow(/esN0Db/);
    expect(() => simulate({ ...base, modulation: '8psk' as never })).toThrow(/modulation/);
    expect(() => simulate({ ...base, channel: { esN0Db: 10, osnrDb: 14 } })).toThrow(/osnrDb/);
  });

  it('holds samples × (1 + ppm) per capture for a clock offset', () => {
    const cap = simulate({ seed: 1, modulation: 'qpsk', symbols: 50_000, symbolRate: 32e9, receiver: { clockOffsetPpm: 20 } });
    expect(cap.channels.xi.length).toBe(100_002);
    expect(cap.truth.clockOffsetPpm).toBeCloseTo(20, 6);
    expect(cap.channels.sampleRate).toBe(64e9);
  });

  it('keeps the dispersion sign of dispersionPhase (round trip through the conjugate filter)', async () => {
    const { dispersionPhase, fft, ifft } = await import('../../src/index.js');
    const n = 4096;
    const cap = simulate({ seed: 3, modulation: 'qpsk', symbols: n, symbolRate: 32e9, channel: { dispersionPsPerNm: 1360 } });
    const X = fft(cap.truth.field.x);
    const N = X.length >> 1;
    const fs = 64e9;
    for (let m = 0; m < N; m++) {
      const f = ((m < N / 2 ? m : m - N) * fs) / N;
      const p = -dispersionPhase(f, 1360);
      const re = X[2 * m] * Math.cos(p) - X[2 * m + 1] * Math.sin(p);
      const im = X[2 * m] * Math.sin(p) + X[2 * m + 1] * Math.cos(p);
      X[2 * m] = re;
      X[2 * m + 1] = im;
    }
    const back = ifft(X) as ComplexArray;
    const r = idealMatchedFilter(back, n, 32e9, cap.rollOff);
    let worst = 0;
    for (let i = 0; i < r.length; i++) worst = Math.max(worst, Math.abs(r[i] - cap.reference.x[i]));
    expect(worst).toBeLessThan(1e-9);
  });
});
