import { describe, expect, it } from 'vitest';
import { combineChannels, gardnerClockRecovery, pipe, resampleToTwoSps, rrcMatchedFilter, simulate } from '../../src/index.js';
import { runAll } from '../support/chain.js';

// The clock offset estimated on the acquisition span from the drift of the square-timing line
// (Oerder & Meyr, IEEE Trans. Commun. 36(5), 1988), against the simulator's offset, which is exact:
// the capture holds N·sps·(1 + ppm·1e-6) samples for N symbols.
function acquire(ppm: number, dgdPs: number, seed: number) {
  const N = 100_000; // N·2·(1 + 2e-4) is a whole number for ±200 and ±100 ppm
  const cap = simulate({
    seed,
    modulation: '16qam',
    symbols: N,
    symbolRate: 32e9,
    samplesPerSymbol: 2,
    channel: { esN0Db: 18, sop: 'random', dgdPs },
    receiver: { clockOffsetPpm: ppm },
  });
  const clock = gardnerClockRecovery({ rollOff: 0.1, loopBandwidth: 1e-4 });
  runAll(pipe(combineChannels(), resampleToTwoSps(), rrcMatchedFilter({ rollOff: 0.1 }), clock), {
    domain: 'channels',
    ...cap.channels,
    samplesPerSymbol: 2,
  });
  return clock.diagnostics();
}

describe('clock-offset acquisition', () => {
  for (const ppm of [200, -200, 100]) {
    it(`finds ${ppm} ppm within 5 ppm and the loop holds it within 2`, () => {
      const d = acquire(ppm, 5, 1);
      // The slope over 32 segments of 2,048 samples: its standard error is about 1 ppm here.
      expect(Math.abs(d.acquiredClockOffsetPpm - ppm)).toBeLessThan(5);
      expect(Math.abs(d.clockOffsetPpm - ppm)).toBeLessThan(2);
      expect(d.acquisitionCoherence).toBeGreaterThan(0.5);
    });
  }

  it('leaves no offset loaded without one, nor when half a symbol of DGD cancels the timing line', () => {
    // No offset: a slope within three of its standard errors of 0 is left to the loop.
    expect(acquire(0, 5, 2).acquiredClockOffsetPpm).toBe(0);
    // 15.6 ps at 32 GBd: the principal states carry equal power, their lines are half a period apart.
    const faded = acquire(0, 15.625, 3);
    expect(faded.acquisitionLineStrength).toBeLessThan(0.003);
    expect(faded.acquiredClockOffsetPpm).toBe(0);
  });
});
