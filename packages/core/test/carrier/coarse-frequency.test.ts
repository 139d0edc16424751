import { describe, expect, it } from 'vitest';
import { coarseFrequencyShift, type FieldBlock, OptionError, simulate } from '../../src/index.js';

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
});
