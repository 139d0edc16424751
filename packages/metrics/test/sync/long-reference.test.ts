import { type ComplexArray, complexArray, type DualPol, type ModulationName, Rng } from '@intradyne/core';
import { describe, expect, it } from 'vitest';
import { compactReference } from '../../src/counting/compact-reference.js';
import { FULL_PERIOD_SYMBOLS, MAX_TIED_DELAYS, SEGMENT_SYMBOLS, synchronize } from '../../src/sync/synchronize.js';
import { type Impairment, impairedStream, randomSymbols } from '../support/streams.js';

// SNRs near each format's BER 1e-2 (Cho & Yoon): the hard end of what a receiver hands over.
const SNR_DB: Record<'qpsk' | '16qam' | '64qam', number> = { qpsk: 7.5, '16qam': 14, '64qam': 20 };

/** A reference whose polarizations repeat `pattern` symbols of random data, cut at nt. */
function repeating(modulation: ModulationName, pattern: number, nt: number, rng: Rng): DualPol {
  const make = () => {
    const p = randomSymbols(modulation, pattern, rng).symbols;
    const t = complexArray(nt);
    for (let j = 0; j < nt; j++) {
      t[2 * j] = p[2 * (j % pattern)];
      t[2 * j + 1] = p[2 * (j % pattern) + 1];
    }
    return t;
  };
  return { x: make(), y: make() };
}

/** True when delays d1 and d2 name the same reference symbols for received symbols start … end − 1. */
function sameSymbols(t: ComplexArray, start: number, end: number, d1: number, d2: number): boolean {
  const nt = t.length >> 1;
  for (let n = start; n < end; n++) {
    const i = (((n - d1) % nt) + nt) % nt;
    const j = (((n - d2) % nt) + nt) % nt;
    if (t[2 * i] !== t[2 * j] || t[2 * i + 1] !== t[2 * j + 1]) return false;
  }
  return true;
}

describe('synchronize with a reference longer than one full-period search', () => {
  it('finds the delay and every ambiguity, and gives the same findings from the labels', () => {
    // Ten seeded cases: references of 65,537 to 140,000 symbols, captures from 3,000 symbols to longer
    // than the reference, the impairments of the 500-case test (delays per polarization, swap, k·π/2,
    // conjugation, gain, static phase, skipped garbage), noise at the SNR of BER 1e-2.
    const rng = new Rng(9090);
    for (let trial = 0; trial < 10; trial++) {
      const modulation = (['qpsk', '16qam', '64qam'] as const)[trial % 3];
      const nt = FULL_PERIOD_SYMBOLS + 1 + rng.integer(140000 - FULL_PERIOD_SYMBOLS);
      const nr = trial === 9 ? nt + 5000 : 3000 + rng.integer(40000);
      const ref = { x: randomSymbols(modulation, nt, rng).symbols, y: randomSymbols(modulation, nt, rng).symbols };
      const swapped = rng.uniform() < 0.5;
      const skip = rng.integer(301);
      const imp = (p: 'x' | 'y'): Impairment => ({
        source: swapped ? (p === 'x' ? 'y' : 'x') : p,
        delay: rng.integer(nt),
        quarterTurns: rng.integer(4) as 0 | 1 | 2 | 3,
        conjugated: rng.uniform() < 0.5,
        phase: 0.2 * (rng.uniform() - 0.5),
      });
      const want = { x: imp('x'), y: imp('y') };
      const opts = { gain: 0.2 + 5 * rng.uniform(), snrDb: SNR_DB[modulation], garbage: skip, rng };
      const rx = { x: impairedStream(ref, nr, want.x, opts), y: impairedStream(ref, nr, want.y, opts) };
      const s = synchronize(rx, ref, { skipSymbols: skip });
      const label = `case ${trial}: ${modulation} nt ${nt} nr ${nr}`;
      expect(s.found, label).toBe(true);
      expect(s.method, label).toBe('coherent');
      expect(s.swapped, label).toBe(swapped);
      for (const p of ['x', 'y'] as const) {
        const a = s.perPol[p];
        const w = want[p];
        expect({ source: a.source, delay: a.delay, k: a.quarterTurns, conj: a.conjugated }, label).toEqual({
          source: w.source,
          delay: w.delay,
          k: w.quarterTurns,
          conj: w.conjugated,
        });
        expect(Math.abs(a.residualPhaseRad - (w.phase ?? 0)), label).toBeLessThan(0.05);
        // ρ = 1/√(1 + 1/SNR) for a matched stream in AWGN (the normalized correlation's definition);
        // its sampling error over ≥ 2,700 symbols is below 1 %.
        const snr = 10 ** (SNR_DB[modulation] / 10);
        expect(a.correlation, label).toBeCloseTo(1 / Math.sqrt(1 + 1 / snr), 1);
        // Over L independent symbols the correlation at a wrong delay is a sum of L unit-variance terms,
        // so the floor's rms is √L and the peak L·ρ: peak-to-floor ≈ √L·ρ (common practice); the
        // floor of a finite number of delays fluctuates by a few per cent.
        const l = Math.min(nr - skip, SEGMENT_SYMBOLS);
        expect(a.peakToFloor / (Math.sqrt(l) * a.correlation), label).toBeGreaterThan(0.8);
        expect(a.peakToFloor / (Math.sqrt(l) * a.correlation), label).toBeLessThan(1.25);
      }
      // The labels are the same points at unit power: the same delays, turns and conjugations.
      const fromLabels = synchronize(rx, compactReference(ref, modulation), { skipSymbols: skip });
      for (const p of ['x', 'y'] as const) {
        const { source, delay, quarterTurns, conjugated } = s.perPol[p];
        expect(fromLabels.perPol[p], label).toMatchObject({ source, delay, quarterTurns, conjugated });
        expect(fromLabels.perPol[p].correlation, label).toBeCloseTo(s.perPol[p].correlation, 12);
      }
    }
  });

  it('aligns a reference holding a shorter pattern at the copy that stays right past its wrap', () => {
    // A 20,000-symbol pattern written out to 70,001 symbols: the reference's wrap breaks the pattern, so
    // only one of the copies that fit the leading segment is right for the whole capture.
    const rng = new Rng(9191);
    const nt = 70001;
    const ref = repeating('qpsk', 20000, nt, rng);
    const opts = { gain: 1, snrDb: SNR_DB.qpsk, garbage: 0, rng };
    // Received symbol 0 carries reference symbol nt − delay.
    for (const [delay, nr] of [
      [15000, 40000], // the wrap inside the segment
      [nt - 1000, 75000], // the wrap after the segment, at received symbol 69,001
      [nt - 30000, 60000], // the wrap at received symbol 30,000, inside the segment
    ]) {
      const imp = { source: 'x', delay, quarterTurns: 0, conjugated: false } as const;
      const rx = { x: impairedStream(ref, nr, imp, opts), y: impairedStream(ref, nr, { ...imp, source: 'y' }, opts) };
      const s = synchronize(rx, ref);
      expect(s.found, `delay ${delay}`).toBe(true);
      expect([s.perPol.x.delay, s.perPol.y.delay], `delay ${delay}`).toEqual([delay, delay]);
    }
    // A capture that ends before the wrap: every copy names the same symbols; any of them measures the same.
    const imp = { source: 'x', delay: nt - 1000, quarterTurns: 0, conjugated: false } as const;
    const rx = { x: impairedStream(ref, 30000, imp, opts), y: impairedStream(ref, 30000, { ...imp, source: 'y' }, opts) };
    const s = synchronize(rx, ref);
    expect(s.found).toBe(true);
    expect(sameSymbols(ref.x, 0, 30000, s.perPol.x.delay, nt - 1000)).toBe(true);
  });

  it('says why when too many copies of a short pattern fit, and when the data are unrelated', () => {
    const rng = new Rng(9292);
    // A 512-symbol pattern written out to 70,000 symbols: about 136 copies fit the segment.
    const ref = repeating('16qam', 512, 70000, rng);
    const opts = { gain: 1, snrDb: 20, garbage: 0, rng };
    const imp = { source: 'x', delay: 777, quarterTurns: 0, conjugated: false } as const;
    const rx = { x: impairedStream(ref, 5000, imp, opts), y: impairedStream(ref, 5000, { ...imp, source: 'y' }, opts) };
    const s = synchronize(rx, ref);
    expect(s.found).toBe(false);
    expect(s.reason).toContain(`more than ${MAX_TIED_DELAYS} delays fit the first ${SEGMENT_SYMBOLS} symbols`);
    const unrelated = { x: randomSymbols('16qam', 5000, rng).symbols, y: randomSymbols('16qam', 5000, rng).symbols };
    const long = { x: randomSymbols('16qam', 100000, rng).symbols, y: randomSymbols('16qam', 100000, rng).symbols };
    const u = synchronize(unrelated, long);
    expect(u.found).toBe(false);
    expect(u.reason).toMatch(/received x: reference . not found/);
  });

  it('finds a long reference by the differential search when cycle slips defeat the coherent one', () => {
    const rng = new Rng(9393);
    const nt = 90000;
    const ref = { x: randomSymbols('qpsk', nt, rng).symbols, y: randomSymbols('qpsk', nt, rng).symbols };
    const opts = { gain: 1, snrDb: 12, garbage: 0, rng };
    const want = { source: 'x', delay: 4321, quarterTurns: 1, conjugated: false } as const;
    const rx = { x: impairedStream(ref, 40000, want, opts), y: impairedStream(ref, 40000, { ...want, source: 'y' }, opts) };
    // A random quarter turn every 1,000 symbols after the first 1,000: the coherent sums cancel.
    for (const z of [rx.x, rx.y]) {
      for (let from = 1000; from < 40000; from += 1000) {
        const k = rng.integer(4);
        const c = Math.round(Math.cos((k * Math.PI) / 2));
        const s = Math.round(Math.sin((k * Math.PI) / 2));
        for (let n = from; n < from + 1000; n++) {
          const re = z[2 * n];
          z[2 * n] = c * re - s * z[2 * n + 1];
          z[2 * n + 1] = s * re + c * z[2 * n + 1];
        }
      }
    }
    const s = synchronize(rx, ref);
    expect(s.found).toBe(true);
    expect(s.method).toBe('differential');
    // The quarter turns are those of the first block (SYNC_BLOCK_SYMBOLS), before any slip.
    expect(s.perPol.x).toMatchObject({ source: 'x', delay: 4321, quarterTurns: 1, conjugated: false });
    expect(s.perPol.y).toMatchObject({ source: 'y', delay: 4321, quarterTurns: 1, conjugated: false });
  });
});
