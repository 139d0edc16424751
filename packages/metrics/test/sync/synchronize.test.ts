import { complexArray, type DualPol, type ModulationName, OptionError, Rng } from '@intradyne/core';
import { describe, expect, it } from 'vitest';
import { MIN_SYNC_SYMBOLS, synchronize } from '../../src/sync/synchronize.js';
import { type Impairment, impairedStream, randomSymbols } from '../support/streams.js';

const MODULATIONS = ['qpsk', '16qam', '64qam'] as const;
// SNRs near each format's BER 1e-2 (Cho & Yoon): the hard end of what a receiver hands over.
const SNR_DB: Record<'qpsk' | '16qam' | '64qam', number> = { qpsk: 7.5, '16qam': 14, '64qam': 20 };

function reference(modulation: ModulationName, nt: number, rng: Rng, scale: number): DualPol {
  const x = randomSymbols(modulation, nt, rng).symbols;
  const y = randomSymbols(modulation, nt, rng).symbols;
  for (let i = 0; i < x.length; i++) {
    x[i] *= scale;
    y[i] *= scale;
  }
  return { x, y };
}

describe('synchronize', () => {
  it('finds the delay and every ambiguity in 500 seeded random cases', () => {
    // Each case: 2,000–4,000 received symbols against a reference that repeats (shorter, 256 symbols
    // up to half the capture, or up to the capture) or is longer; independent delays per
    // polarization, a random swap, k·π/2 and conjugation per polarization, any gain, a static phase
    // up to ±0.1 rad, up to 300 leading symbols of garbage that are skipped, and noise at the SNR
    // of BER 1e-2. Small sizes keep the 500 cases within seconds.
    const rng = new Rng(6006);
    const misses: string[] = [];
    let minCorrelation = 1;
    let minPeakToFloor = Number.POSITIVE_INFINITY;
    for (let trial = 0; trial < 500; trial++) {
      const modulation = MODULATIONS[trial % 3];
      const nr = 2000 + rng.integer(2001);
      const mode = rng.integer(3);
      const nt =
        mode === 0
          ? 256 + rng.integer(Math.floor(nr / 2) - 255)
          : mode === 1
            ? Math.floor(nr / 2) + rng.integer(Math.ceil(nr / 2))
            : nr + rng.integer(2001);
      const ref = reference(modulation, nt, rng, 0.1 + 10 * rng.uniform());
      const swapped = rng.uniform() < 0.5;
      const skip = rng.integer(301);
      const gain = 0.2 + 5 * rng.uniform();
      const imp = (p: 'x' | 'y'): Impairment => ({
        source: swapped ? (p === 'x' ? 'y' : 'x') : p,
        delay: rng.integer(nt),
        quarterTurns: rng.integer(4) as 0 | 1 | 2 | 3,
        conjugated: rng.uniform() < 0.5,
        phase: 0.2 * (rng.uniform() - 0.5),
      });
      const want = { x: imp('x'), y: imp('y') };
      const opts = { gain, snrDb: SNR_DB[modulation], garbage: skip, rng };
      const rx = { x: impairedStream(ref, nr, want.x, opts), y: impairedStream(ref, nr, want.y, opts) };
      const s = synchronize(rx, ref, { skipSymbols: skip });
      let ok = s.found && s.swapped === swapped && s.reason === null;
      for (const p of ['x', 'y'] as const) {
        const a = s.perPol[p];
        const w = want[p];
        ok &&= a.source === w.source && a.delay === w.delay && a.quarterTurns === w.quarterTurns && a.conjugated === w.conjugated;
        ok &&= Math.abs(a.residualPhaseRad - (w.phase ?? 0)) < 0.05;
        minCorrelation = Math.min(minCorrelation, a.correlation);
        minPeakToFloor = Math.min(minPeakToFloor, a.peakToFloor);
      }
      if (!ok)
        misses.push(`case ${trial}: ${modulation} nr ${nr} nt ${nt} want ${JSON.stringify(want)} got ${JSON.stringify(s)}`);
    }
    expect(misses).toEqual([]);
    // Every peak clears the thresholds (0.2 and 6) by a wide margin: measured minima over the 500
    // cases are ρ = 0.886 and a peak-to-floor ratio of 15.2.
    expect(minCorrelation).toBeGreaterThan(0.5);
    expect(minPeakToFloor).toBeGreaterThan(12);
  });

  it('says the reference was not found in unrelated data, and why', () => {
    const rng = new Rng(7);
    for (let trial = 0; trial < 30; trial++) {
      const ref = reference('16qam', 1000 + rng.integer(3000), rng, 1);
      const other = reference('16qam', 3000, rng, 1);
      const s = synchronize(other, ref);
      expect(s.found).toBe(false);
      expect(s.reason).toMatch(/received x: reference . not found/);
      expect(s.perPol.x.found || s.perPol.y.found).toBe(false);
    }
  });

  it('names a singularity: both received polarizations carrying the same reference polarization', () => {
    const rng = new Rng(8);
    const ref = reference('qpsk', 2048, rng, 1);
    const opts = { gain: 1, snrDb: 12, garbage: 0, rng };
    const x = impairedStream(ref, 3000, { source: 'x', delay: 5, quarterTurns: 0, conjugated: false }, opts);
    const y = impairedStream(ref, 3000, { source: 'x', delay: 9, quarterTurns: 2, conjugated: false }, opts);
    const s = synchronize({ x, y }, ref);
    expect(s.found).toBe(false);
    expect(s.reason).toMatch(/singularity/);
  });

  it('keeps the straight assignment when y is a delayed copy of x (a short repeating pattern)', () => {
    const rng = new Rng(9);
    const x = randomSymbols('qpsk', 1024, rng).symbols;
    const y = complexArray(1024);
    for (let n = 0; n < 1024; n++) {
      y[2 * n] = x[2 * ((n + 300) % 1024)];
      y[2 * n + 1] = x[2 * ((n + 300) % 1024) + 1];
    }
    const ref = { x, y };
    const opts = { gain: 1, snrDb: 12, garbage: 0, rng };
    const rx = {
      x: impairedStream(ref, 4000, { source: 'x', delay: 17, quarterTurns: 1, conjugated: false }, opts),
      y: impairedStream(ref, 4000, { source: 'y', delay: 17, quarterTurns: 3, conjugated: false }, opts),
    };
    const s = synchronize(rx, ref);
    expect(s.found).toBe(true);
    expect(s.swapped).toBe(false);
    expect([s.perPol.x.delay, s.perPol.y.delay]).toEqual([17, 17]);
  });

  it('states the delay convention: a capture of reference symbols 1000… has delay Nt − 1000', () => {
    const rng = new Rng(10);
    const ref = reference('64qam', 8000, rng, 1);
    const opts = { gain: 1, snrDb: Number.POSITIVE_INFINITY, garbage: 0, rng };
    const imp = { source: 'x', delay: 8000 - 1000, quarterTurns: 0, conjugated: false } as const;
    const x = impairedStream(ref, 2000, imp, opts);
    // Received symbol 0 is reference symbol 1000.
    expect(x[0]).toBe(ref.x[2000]);
    const y = impairedStream(ref, 2000, { ...imp, source: 'y' }, opts);
    const s = synchronize({ x, y }, ref);
    expect(s.perPol.x.delay).toBe(7000);
    expect(s.symbolsUsed).toBe(2000);
    expect(s.referenceLength).toBe(8000);
  });

  it('rejects bad options and too few symbols', () => {
    const rng = new Rng(11);
    const ref = reference('qpsk', 512, rng, 1);
    expect(() => synchronize(ref, ref, { skipSymbols: -1 })).toThrow(OptionError);
    expect(() => synchronize(ref, ref, { minCorrelation: 1.5 })).toThrow(OptionError);
    expect(() => synchronize(ref, ref, { minPeakToFloor: 0.5 })).toThrow(OptionError);
    expect(() => synchronize(ref, ref, { skipSymbols: 512 - MIN_SYNC_SYMBOLS + 1 })).toThrow(RangeError);
    const short = reference('qpsk', MIN_SYNC_SYMBOLS - 1, rng, 1);
    expect(() => synchronize(ref, short)).toThrow(RangeError);
    expect(() => synchronize({ x: ref.x, y: ref.y.subarray(2) as typeof ref.y }, ref)).toThrow(RangeError);
  });
});
