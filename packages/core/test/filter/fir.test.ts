import { describe, expect, it } from 'vitest';
import { complexArray, type FieldBlock, firFilter, OptionError, Rng } from '../../src/index.js';
import { randomField } from '../support/stage-catalog.js';

describe('FIR filter stage', () => {
  it('equals the centred direct convolution y[n] = Σ h[k]·x[n + c − k]', () => {
    const taps = complexArray(7);
    new Rng(1).fillGaussian(taps);
    const n = 50;
    const input = randomField('field', n, 2);
    const stage = firFilter({ taps });
    const head = stage.process(input);
    const tail = stage.flush() as FieldBlock<'field'>;
    const y = new Float64Array(2 * n);
    y.set(head.x);
    y.set(tail.x, head.x.length);
    expect(head.x.length + tail.x.length).toBe(2 * n);
    for (let m = 0; m < n; m++) {
      let re = 0;
      let im = 0;
      for (let k = 0; k < 7; k++) {
        const j = m + 3 - k;
        if (j < 0 || j >= n) continue;
        re += taps[2 * k] * input.x[2 * j] - taps[2 * k + 1] * input.x[2 * j + 1];
        im += taps[2 * k] * input.x[2 * j + 1] + taps[2 * k + 1] * input.x[2 * j];
      }
      expect(y[2 * m]).toBeCloseTo(re, 12);
      expect(y[2 * m + 1]).toBeCloseTo(im, 12);
    }
  });

  it('rejects an even tap count', () => {
    expect(() => firFilter({ taps: complexArray(4) })).toThrow(OptionError);
  });
});
