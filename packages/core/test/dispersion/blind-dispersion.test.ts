import { describe, expect, it } from 'vitest';
import { compensateDispersion, estimateDispersion, simulate, sliceBlock } from '../../src/index.js';
import { snrDb, toTwoSps } from '../support/chain.js';

// Captures with everything a blind estimate must not be fooled by: a random
// SOP, 5 ps DGD, a 1 GHz carrier offset and 100 kHz linewidth, at Es/N0 14 dB.
// 16,400 symbols give the 32,768 samples at 2 samples per symbol the
// estimate uses by default.
function capture(dispersionPsPerNm: number, seed: number, modulation: 'qpsk' | '16qam' = 'qpsk') {
  return simulate({
    seed,
    modulation,
    symbols: 16_400,
    symbolRate: 32e9,
    samplesPerSymbol: 2.5,
    channel: { esN0Db: 14, dispersionPsPerNm, sop: 'random', dgdPs: 5, freqOffsetHz: 1e9, linewidthHz: 100e3 },
  });
}

describe('estimateDispersion (minimum of E|z|⁴/E²|z|², a Godard-type cost)', () => {
  for (const [d, modulation] of [
    [1360, 'qpsk'],
    [5000, '16qam'],
    [17_000, 'qpsk'],
  ] as const) {
    it(`finds ${d} ps/nm within ±50 ps/nm (${modulation})`, () => {
      const two = toTwoSps(capture(d, 7, modulation));
      const e = estimateDispersion(two.x, two.y, two.sampleRate);
      expect(Math.abs(e.dispersionPsPerNm - d)).toBeLessThan(50);
      // The cost at the estimate is below the whole coarse scan's median: a real minimum.
      const sorted = Array.from(e.scan.cost).sort((a, b) => a - b);
      expect(e.cost).toBeLessThan(sorted[sorted.length >> 1]);
    });
  }

  it('the blind stage compensates a capture streamed in blocks', () => {
    const cap = simulate({
      seed: 8,
      modulation: 'qpsk',
      symbols: 16_400,
      symbolRate: 32e9,
      samplesPerSymbol: 2.5,
      channel: { esN0Db: 14, dispersionPsPerNm: 8000 },
    });
    const two = toTwoSps(cap);
    const s = compensateDispersion({ blind: { minPsPerNm: 0, maxPsPerNm: 20_000 } });
    const n = two.x.length >> 1;
    const parts = [s.process(sliceBlock(two, 0, 10_000)), s.process(sliceBlock(two, 10_000, n)), s.flush()!];
    expect(parts[0].x.length).toBe(0); // held back until the 32,768 estimation samples arrived
    const x = Float64Array.from(parts.flatMap((p) => Array.from(p.x)));
    expect(x.length).toBe(two.x.length);
    expect(Math.abs(s.diagnostics().dispersionPsPerNm - 8000)).toBeLessThan(50);
    // QPSK at 14 dB, residual < 50 ps/nm: close to the channel's SNR (the
    // estimate of 16,000 symbols is within ±0.1 dB at 2σ).
    expect(snrDb(x, cap.reference.x, { skip: 400 })).toBeGreaterThan(13.5);
  });

  it('rejects an empty range and too few samples', () => {
    const z = new Float64Array(4096) as never;
    expect(() => estimateDispersion(z, z, 64e9, { minPsPerNm: 10, maxPsPerNm: 0 })).toThrow(RangeError);
    expect(() => estimateDispersion(new Float64Array(100) as never, new Float64Array(100) as never, 64e9)).toThrow(/1,024/);
  });
});
