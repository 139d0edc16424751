import { describe, expect, it } from 'vitest';
import { BlockError, blindPhaseSearch, frequencyOffsetRecovery, type Stage, viterbiViterbi } from '../../src/index.js';
import { carrierSignal, runSymbols } from '../support/carrier-signals.js';

// The shared property test compares outputs; the diagnostics (estimates,
// tracks, slips, linewidth) must not depend on the block sizes either.
describe('carrier-recovery diagnostics do not depend on the block sizes', () => {
  const s = carrierSignal({ seed: 101, modulation: '16qam', symbols: 12000, esN0Db: 15, linewidthHz: 4e6, freqOffsetHz: 1.1e9 });
  const cases: [string, () => Stage<'symbols', 'symbols', unknown>][] = [
    ['frequency-offset (fixed)', () => frequencyOffsetRecovery({ estimateSymbols: 5000 })],
    ['frequency-offset (fixed, stream shorter than the span)', () => frequencyOffsetRecovery({ estimateSymbols: 20000 })],
    ['frequency-offset (tracking)', () => frequencyOffsetRecovery({ trackingSymbols: 2500 })],
    // 4 MHz of linewidth with N = 4 makes slips to find.
    ['viterbi-viterbi', () => viterbiViterbi({ modulation: '16qam', halfWindow: 4, recordPhase: true })],
    [
      'blind-phase-search with reference',
      () => blindPhaseSearch({ modulation: '16qam', halfWindow: 3, testPhases: 16, reference: { x: s.refX, y: s.refY } }),
    ],
  ];
  for (const [name, make] of cases) {
    it(name, () => {
      const whole = make();
      const split = make();
      const a = runSymbols(whole, s.x, s.y, 12000);
      const b = runSymbols(split, s.x, s.y, 777);
      expect(Array.from(b.x)).toEqual(Array.from(a.x));
      expect(split.diagnostics()).toEqual(whole.diagnostics());
    });
  }

  it('a phase-recovery stage refuses a symbol rate that changes mid-stream', () => {
    const st = viterbiViterbi({ modulation: 'qpsk' });
    st.process({ domain: 'symbols', x: s.x, y: s.y, sampleRate: 32e9, samplesPerSymbol: 1 });
    expect(() => st.process({ domain: 'symbols', x: s.x, y: s.y, sampleRate: 16e9, samplesPerSymbol: 1 })).toThrow(BlockError);
  });
});
