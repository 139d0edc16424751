import { describe, expect, it } from 'vitest';
import {
  type ComplexArray,
  coarseFrequencyShift,
  complexArray,
  type FieldBlock,
  OptionError,
  simulate,
} from '../../src/index.js';

describe('coarse frequency-offset removal', () => {
  // Fourth-power periodogram (Selmi, Jaouën, Ciblat, ECOC 2009) applied to the
  // oversampled waveform: range |Δf| < fs/8 (8 GHz at 64 GSa/s).
  for (const [mod, f] of [
    ['qpsk', 2e9],
    ['16qam', -3.5e9],
    ['64qam', 6e9],
  ] as const) {
    it(`finds ${f / 1e9} GHz on ${mod} at 2 samples per symbol within 5 MHz`, () => {
      const cap = simulate({
        seed: 3,
        modulation: mod,
        symbols: 32768,
        symbolRate: 32e9,
        channel: { esN0Db: 15, freqOffsetHz: f },
      });
      const block: FieldBlock<'twoSps'> = { domain: 'twoSps', ...cap.truth.field, sampleRate: 64e9, samplesPerSymbol: 2 };
      const stage = coarseFrequencyShift();
      const out = stage.process(block);
      expect(out.x.length).toBe(block.x.length);
      // 5 MHz: far below the 0.1 GHz that a matched filter of roll-off 0.1 at 32 GBd notices,
      // and the residual is removed after the equalizer.
      expect(Math.abs(stage.diagnostics().freqOffsetHz - f)).toBeLessThan(5e6);
    });
  }

  it('rejects a span shorter than 1,024 samples', () => {
    expect(() => coarseFrequencyShift({ estimateSamples: 100 })).toThrow(OptionError);
  });

  it('removes a known offset as given, sample by sample from the start of the stream, holding nothing back', () => {
    const f = 1.25e9;
    const fs = 64e9;
    const n = 3000;
    const x = complexArray(n);
    const y = complexArray(n);
    for (let k = 0; k < n; k++) {
      // A pure tone at f on x, its conjugate on y: removing f leaves x at DC and y at −2f.
      x[2 * k] = Math.cos((2 * Math.PI * f * k) / fs);
      x[2 * k + 1] = Math.sin((2 * Math.PI * f * k) / fs);
      y[2 * k] = x[2 * k];
      y[2 * k + 1] = -x[2 * k + 1];
    }
    const stage = coarseFrequencyShift({ freqOffsetHz: f });
    const first = stage.process({
      domain: 'twoSps',
      x: x.subarray(0, 2000) as ComplexArray,
      y: y.subarray(0, 2000) as ComplexArray,
      sampleRate: fs,
      samplesPerSymbol: 2,
    });
    const second = stage.process({
      domain: 'twoSps',
      x: x.subarray(2000) as ComplexArray,
      y: y.subarray(2000) as ComplexArray,
      sampleRate: fs,
      samplesPerSymbol: 2,
    });
    expect(first.x.length + second.x.length).toBe(2 * n);
    expect(stage.flush()).toBeNull();
    for (const b of [first, second]) for (let k = 0; k < b.x.length; k += 2) expect(Math.abs(b.x[k] - 1)).toBeLessThan(1e-9);
    expect(stage.diagnostics().freqOffsetHz).toBe(f);
    expect(stage.describe().options).toEqual({ domain: 'twoSps', freqOffsetHz: f });
    expect(() => coarseFrequencyShift({ freqOffsetHz: Number.NaN })).toThrow(/freqOffsetHz/);
    expect(() => coarseFrequencyShift({ freqOffsetHz: 1e9, estimateSamples: 4096 })).toThrow(/estimateSamples/);
  });
});
