import { describe, expect, it } from 'vitest';
import { summarizeSpectrum } from '../../src/dsp/spectrum-summary.js';
import { WelchEstimator, welchPsd } from '../../src/dsp/welch.js';
import { OptionError } from '../../src/pipeline/stage.js';
import { Rng } from '../../src/random/rng.js';
import { complexArray, fromParts } from '../../src/signal/complex.js';
import { simulate } from '../../src/sim/simulate.js';

const fs = 64e9;

function power(x: Float64Array): number {
  let s = 0;
  for (const v of x) s += v * v;
  return s / (x.length / 2);
}

describe('Welch power spectral density', () => {
  it('satisfies Parseval exactly for one rectangular segment', () => {
    // Parseval's theorem for the DFT (Oppenheim & Schafer, Discrete-Time
    // Signal Processing, §8.6): Σ|X[k]|² = N·Σ|x[n]|², so Σ P[k]·fs/N = mean |x|².
    const x = complexArray(256);
    new Rng(1).fillGaussian(x);
    const s = welchPsd(x, fs, { segmentLength: 256, window: 'rectangular' });
    let integral = 0;
    for (const p of s.psd) integral += p * s.resolutionHz;
    expect(integral).toBeCloseTo(power(x), 12);
    expect(s.segments).toBe(1);
  });

  it('puts a complex exponential at its frequency with its power', () => {
    // A·e^(j2πf0 n/fs) with f0 on bin 100 of 1024: all power within the Hann
    // main lobe (±1 bin); the Hann window's energy is exactly preserved by the
    // scaling, so the integral is A² to rounding.
    const n = 8192;
    const a = 0.7;
    const f0 = (100 * fs) / 1024;
    const x = complexArray(n);
    for (let i = 0; i < n; i++) {
      x[2 * i] = a * Math.cos((2 * Math.PI * f0 * i) / fs);
      x[2 * i + 1] = a * Math.sin((2 * Math.PI * f0 * i) / fs);
    }
    const s = welchPsd(x, fs);
    let peak = 0;
    let integral = 0;
    for (let j = 0; j < s.psd.length; j++) {
      if (s.psd[j] > s.psd[peak]) peak = j;
      integral += s.psd[j] * s.resolutionHz;
    }
    expect(s.frequency[peak]).toBeCloseTo(f0, 0);
    expect(integral).toBeCloseTo(a * a, 10);
    // Hann equivalent noise bandwidth is 1.5 bins (Harris, Proc. IEEE 66(1), 1978, table 1).
    expect(s.noiseBandwidthHz / s.resolutionHz).toBeCloseTo(1.5, 10);
  });

  it('gives a flat level σ²/fs for white noise of variance σ²', () => {
    // 2^16 samples, 127 half-overlapping segments: each bin's estimate has a
    // relative spread near 1/√(127·0.9) ≈ 9 %; the mean over 1024 bins is
    // within 1 % (about 3 standard errors), the Parseval sum likewise.
    const sigma2 = 2.5;
    const x = complexArray(1 << 16);
    new Rng(2).fillGaussian(x);
    for (let i = 0; i < x.length; i++) x[i] *= Math.sqrt(sigma2 / 2);
    const s = welchPsd(x, fs);
    let mean = 0;
    for (const p of s.psd) mean += p;
    mean /= s.psd.length;
    expect(Math.abs((mean * fs) / sigma2 - 1)).toBeLessThan(0.01);
  });

  it('gives the same estimate whatever the block sizes pushed', () => {
    const x = complexArray(5000);
    new Rng(3).fillGaussian(x);
    const one = welchPsd(x, fs, { segmentLength: 256, overlap: 0.75 });
    const w = new WelchEstimator(fs, { segmentLength: 256, overlap: 0.75 });
    const rng = new Rng(4);
    for (let at = 0; at < 5000; ) {
      const take = Math.min(5000 - at, Math.floor(rng.uniform() * 700));
      w.push(x.subarray(2 * at, 2 * (at + take)) as typeof x);
      at += take;
    }
    expect(Array.from(w.result().psd)).toEqual(Array.from(one.psd));
  });

  it('refuses bad options and a signal shorter than a segment', () => {
    expect(() => new WelchEstimator(fs, { segmentLength: 4 })).toThrow(OptionError);
    expect(() => new WelchEstimator(fs, { overlap: 1 })).toThrow(/overlap' expected a fraction in \[0, 1\)/);
    expect(() => new WelchEstimator(-1)).toThrow(OptionError);
    expect(() => welchPsd(complexArray(100), fs)).toThrow(/at least one segment of 1024 samples/);
  });
});

describe('spectrum summary', () => {
  // Raised-cosine spectrum (Proakis & Salehi, Digital Communications, §9.2):
  // half power at ±Rs/2 and area S0·Rs for any roll-off, so both the -3 dB
  // bandwidth and the area estimate are Rs. 16384 symbols per case: over
  // seeds the area estimate spreads by about ±1 % at 4096 symbols (measured);
  // 16384 symbols halve that, and 2 % leaves a margin of 4 spreads.
  const cases = [
    { modulation: 'qpsk', samplesPerSymbol: 2, rollOff: 0.1, esN0Db: 12, freqOffsetHz: 0 },
    { modulation: '16qam', samplesPerSymbol: 2.5, rollOff: 0.2, esN0Db: 20, freqOffsetHz: 1.5e9 },
    { modulation: '64qam', samplesPerSymbol: 2, rollOff: 0.5, esN0Db: 25, freqOffsetHz: -2e9 },
  ] as const;
  for (const [i, c] of cases.entries()) {
    it(`finds 32 GBd within 2 % for ${c.modulation} at ${c.samplesPerSymbol} Sa/symbol, roll-off ${c.rollOff}`, () => {
      const sim = simulate({
        seed: 40 + i,
        modulation: c.modulation,
        symbols: 16384,
        symbolRate: 32e9,
        samplesPerSymbol: c.samplesPerSymbol,
        rollOff: c.rollOff,
        channel: { esN0Db: c.esN0Db, sop: 'random', freqOffsetHz: c.freqOffsetHz },
      });
      const ch = sim.channels;
      const s = welchPsd(fromParts(ch.xi, ch.xq), ch.sampleRate, { segmentLength: 512 });
      const summary = summarizeSpectrum(s);
      expect(Math.abs(summary.symbolRateBd / 32e9 - 1)).toBeLessThan(0.02);
      expect(Math.abs(summary.bandwidth3dBHz / 32e9 - 1)).toBeLessThan(0.02);
      // The band centre follows the carrier offset to within a few bins.
      expect(Math.abs(summary.centreHz - c.freqOffsetHz)).toBeLessThan(4 * s.resolutionHz);
      // Plateau over floor is Es/N0: the symbol energy is Es = S0·Rs·T = S0
      // for a raised-cosine spectrum of area S0·Rs, and white noise has PSD N0.
      // Within 1 dB (the plateau's mean over ~100 noisy bins, and the floor's).
      expect(Math.abs(summary.plateauToFloorDb - c.esN0Db)).toBeLessThan(1);
    });
  }
});
