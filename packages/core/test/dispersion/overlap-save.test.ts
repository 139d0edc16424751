import { describe, expect, it } from 'vitest';
import { type ComplexArray, complexArray, OverlapSave, Rng, responseOfCenteredTaps } from '../../src/index.js';

describe('OverlapSave (Oppenheim & Schafer, 3rd ed., §8.7.3)', () => {
  it('equals the direct centred convolution y[n] = Σ h[k]·x[n − k], |k| ≤ P', () => {
    const rng = new Rng(4);
    const P = 10;
    const taps = rng.fillGaussian(complexArray(2 * P + 1)) as ComplexArray;
    const x = rng.fillGaussian(complexArray(1000)) as ComplexArray;
    const os = new OverlapSave(responseOfCenteredTaps(taps, 64), 2 * P);
    const a = os.process(x.subarray(0, 2 * 333) as ComplexArray);
    const b = os.process(x.subarray(2 * 333) as ComplexArray);
    const c = os.flush();
    const y = new Float64Array(a.length + b.length + c.length);
    y.set(a);
    y.set(b, a.length);
    y.set(c, a.length + b.length);
    expect(y.length).toBe(x.length);
    for (let n = 0; n < 1000; n++) {
      let re = 0;
      let im = 0;
      for (let k = -P; k <= P; k++) {
        const m = n - k;
        if (m < 0 || m >= 1000) continue;
        const hr = taps[2 * (k + P)];
        const hi = taps[2 * (k + P) + 1];
        re += hr * x[2 * m] - hi * x[2 * m + 1];
        im += hr * x[2 * m + 1] + hi * x[2 * m];
      }
      expect(Math.abs(y[2 * n] - re)).toBeLessThan(1e-12);
      expect(Math.abs(y[2 * n + 1] - im)).toBeLessThan(1e-12);
    }
  });

  it('rejects a size that is not a power of two and an odd overlap', () => {
    expect(() => new OverlapSave(complexArray(100), 10)).toThrow(RangeError);
    expect(() => new OverlapSave(complexArray(64), 7)).toThrow(RangeError);
  });
});
