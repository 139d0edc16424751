import { describe, expect, it } from 'vitest';
import {
  type ComplexArray,
  type FieldBlock,
  idealMatchedFilter,
  OptionError,
  raisedCosineSpectrum,
  resampleAndMatchedFilter,
  rrcMatchedFilter,
  rrcTaps,
  simulate,
} from '../../src/index.js';

function errorDb(a: Float64Array, b: Float64Array, from: number, to: number): number {
  let e = 0;
  let p = 0;
  for (let k = from; k < to; k++) {
    e += (a[2 * k] - b[2 * k]) ** 2 + (a[2 * k + 1] - b[2 * k + 1]) ** 2;
    p += b[2 * k] ** 2 + b[2 * k + 1] ** 2;
  }
  return 10 * Math.log10(e / p);
}

describe('rrcTaps (Proakis, Digital Communications, 5th ed., §9.2)', () => {
  it('the taps convolved with themselves make a raised cosine: 1 at t = 0, zero at the other symbol instants', () => {
    const h = rrcTaps(0.25, 2, 32);
    const n = h.length >> 1;
    const g = (lag: number) => {
      let s = 0;
      for (let k = 0; k < n; k++) if (k + lag >= 0 && k + lag < n) s += h[2 * k] * h[2 * (k + lag)];
      return s * 2; // Σ over samples at 2 per symbol approximates (1/T)∫ at T/2 spacing
    };
    expect(g(0)).toBeCloseTo(1, 3);
    for (const m of [1, 2, 3, 10]) expect(Math.abs(g(2 * m))).toBeLessThan(2e-3);
    // Its spectrum at f = 0 and at the band edge: √P(0) = 1, √P(Rs/2) = √½.
    let dc = 0;
    let edge = 0;
    for (let k = 0; k < n; k++) {
      const t = (k - (n - 1) / 2) / 2;
      dc += h[2 * k];
      edge += h[2 * k] * Math.cos(Math.PI * t);
    }
    // The truncated tails decay as cos(π(1 + β)t)/(4πβt²) (Proakis' closed form,
    // large t): beyond ±32 symbols they sum to ~1e-4 of the passband gain.
    expect(Math.abs(dc - 1)).toBeLessThan(1e-3);
    expect(Math.abs(edge - Math.sqrt(raisedCosineSpectrum(0.5, 1, 0.25)))).toBeLessThan(1e-3);
  });

  it('rejects bad arguments', () => {
    expect(() => rrcTaps(0, 2, 8)).toThrow(RangeError);
    expect(() => rrcMatchedFilter({ rollOff: 2 })).toThrow(OptionError);
    expect(() => rrcMatchedFilter({ spanSymbols: 0 })).toThrow(/spanSymbols/);
  });
});

describe('resampleAndMatchedFilter', () => {
  it('80 GSa/s → 2 samples per symbol matched-filtered output agrees with the ideal matched filter to −55 dB', () => {
    const cap = simulate({
      seed: 6,
      modulation: '16qam',
      symbols: 8192,
      symbolRate: 32e9,
      samplesPerSymbol: 2.5,
      rollOff: 0.1,
      channel: { esN0Db: 25 },
    });
    const block: FieldBlock<'field'> = {
      domain: 'field',
      x: cap.truth.field.x,
      y: cap.truth.field.y,
      sampleRate: 80e9,
      samplesPerSymbol: 2.5,
    };
    const chain = resampleAndMatchedFilter({ rollOff: 0.1 });
    const a = chain.process(block);
    const b = chain.flush()!;
    const out = new Float64Array(a.x.length + b.x.length) as ComplexArray;
    out.set(a.x);
    out.set(b.x, a.x.length);
    expect(out.length).toBe(2 * 2 * 8192);
    const ideal = idealMatchedFilter(cap.truth.field.x, 8192, 32e9, 0.1, 2);
    // Away from the edges (where the stream sees zeros and the ideal filter a
    // periodic capture), the differences are the RRC truncation at ±32 symbols
    // and the 80 dB resampler ripple.
    expect(errorDb(out, ideal, 200, 16_384 - 200)).toBeLessThan(-55);
  });
});
