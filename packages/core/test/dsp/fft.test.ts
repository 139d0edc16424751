import { describe, expect, it } from 'vitest';
import { binFrequency, complexArray, fft, ifft, Rng } from '../../src/index.js';

/** Direct O(N²) DFT, X[k] = Σ x[n]·e^(−j2πkn/N): the definition the facade states. */
function naiveDft(x: Float64Array): Float64Array {
  const n = x.length >> 1;
  const out = new Float64Array(2 * n);
  for (let k = 0; k < n; k++) {
    let re = 0;
    let im = 0;
    for (let m = 0; m < n; m++) {
      const a = (-2 * Math.PI * ((k * m) % n)) / n;
      re += x[2 * m] * Math.cos(a) - x[2 * m + 1] * Math.sin(a);
      im += x[2 * m] * Math.sin(a) + x[2 * m + 1] * Math.cos(a);
    }
    out[2 * k] = re;
    out[2 * k + 1] = im;
  }
  return out;
}

describe('FFT facade', () => {
  for (const n of [1, 2, 16, 1024, 3, 12, 100, 625, 1000]) {
    it(`matches the DFT definition and inverts at N = ${n}`, () => {
      const x = complexArray(n);
      new Rng(n).fillGaussian(x);
      const X = fft(x);
      const ref = naiveDft(x);
      let worst = 0;
      for (let i = 0; i < X.length; i++) worst = Math.max(worst, Math.abs(X[i] - ref[i]));
      // Rounding grows like √N·log N·ε·|x|; 1e-10 is generous for N ≤ 1000.
      expect(worst).toBeLessThan(1e-10);
      const back = ifft(X);
      let err = 0;
      for (let i = 0; i < x.length; i++) err = Math.max(err, Math.abs(back[i] - x[i]));
      expect(err).toBeLessThan(1e-12);
    });
  }

  it('maps bins to signed frequencies', () => {
    expect(binFrequency(1, 8, 8e9)).toBe(1e9);
    expect(binFrequency(7, 8, 8e9)).toBe(-1e9);
    expect(binFrequency(4, 8, 8e9)).toBe(-4e9);
  });

  it('refuses to transform in place', () => {
    const x = complexArray(8);
    expect(() => fft(x, x)).toThrow(/different array/);
  });
});
