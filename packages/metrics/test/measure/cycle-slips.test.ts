import { type ComplexArray, constellation, type DualPol, decide, idealMatchedFilter, Rng, simulate } from '@intradyne/core';
import { describe, expect, it } from 'vitest';
import { referenceLabels } from '../../src/counting/reference-labels.js';
import { MeasurementStream, measure } from '../../src/measure/measure.js';
import { synchronize } from '../../src/sync/synchronize.js';
import { theoryBer } from '../../src/theory/qam-ber.js';

// Cycle slips as a carrier recovery makes them: from a position on, the rest of the stream turns by
// a quarter turn more. The symbols are those of an ideal receiver (RRC matched filter at the symbol
// instants of a simulated capture), so the figures without slips are Cho & Yoon's (IEEE Trans.
// Commun. 50(7), 2002).
const N = 65536;
const SKIP = 1000;

function idealStream(seed: number, esN0Db: number) {
  const cap = simulate({ seed, modulation: '16qam', symbols: N, symbolRate: 32e9, channel: { esN0Db } });
  return {
    rx: {
      x: idealMatchedFilter(cap.truth.field.x, N, cap.symbolRate, cap.rollOff),
      y: idealMatchedFilter(cap.truth.field.y, N, cap.symbolRate, cap.rollOff),
    } as DualPol,
    reference: cap.reference,
  };
}

/** Turns z[p…] by e^(jπ/2) for each slip position p (in place): the turns add up along the stream. */
function slip(z: ComplexArray, positions: readonly number[]): void {
  const n = z.length >> 1;
  for (const p of positions) {
    for (let k = p; k < n; k++) {
      const re = z[2 * k];
      z[2 * k] = -z[2 * k + 1];
      z[2 * k + 1] = re;
    }
  }
}

describe('measurement with cycle slips', () => {
  it('finds the reference by the differential search when slips defeat the coherent one', () => {
    // A slip every 700 symbols or so on both polarizations, at 11 dB: the turned stretches cancel in
    // the plain correlation, not in the adjacent-symbol products.
    const { rx, reference } = idealStream(41, 11);
    const rng = new Rng(41);
    const positions = (): number[] => Array.from({ length: 90 }, (_, i) => 500 + 700 * i + rng.integer(200));
    slip(rx.x, positions());
    slip(rx.y, positions());
    const s = synchronize(rx, reference, { skipSymbols: SKIP });
    expect(s.found, s.reason ?? '').toBe(true);
    expect(s.method).toBe('differential');
    expect(s.swapped).toBe(false);
    for (const p of ['x', 'y'] as const) {
      expect(s.perPol[p].delay).toBe(0);
      expect(s.perPol[p].conjugated).toBe(false);
      // The first block (symbols 1000…1511) sits after one slip (at 500…700): one quarter turn.
      expect(s.perPol[p].quarterTurns).toBe(1);
      // A matched stream at 11 dB: ρ = 1/√(1 + 1/SNR) = 0.96 (see PolAlignment.correlation); a block
      // that a slip cuts at a fraction f keeps √(f² + (1 − f)²) ≥ 0.71 of its sum, and nearly every
      // block is cut here: ρ ≥ 0.96 × 0.71 = 0.68.
      expect(s.perPol[p].correlation).toBeGreaterThan(0.68);
    }
  });

  it('counts a slip at a block boundary as no error by default, and every symbol after it without correction', () => {
    const es = 12;
    const { rx, reference } = idealStream(42, es);
    // Block boundaries of the default 512-symbol blocks, counted from the first measured symbol.
    const positions = [SKIP + 512 * 20, SKIP + 512 * 61, SKIP + 512 * 90];
    const clean = measure(rx, reference, '16qam', { skipSymbols: SKIP });
    slip(rx.x, positions);
    const m = measure(rx, reference, '16qam', { skipSymbols: SKIP });
    // Corrected per block: exactly the counts of the stream without slips.
    expect(m.bitErrors).toBe(clean.bitErrors);
    expect(m.blockCorrected.bitErrors).toBe(m.bitErrors);
    expect(m.slipCorrection).toEqual({
      mode: 'per-block',
      blockSymbols: 512,
      turnedBlocks: { x: Math.ceil((N - SKIP) / 512) - 20, y: 0 },
    });
    // …which are Cho & Yoon's BER: 2 × 64,536 symbols × 4 bits at BER ≈ 0.03 give a 95 % interval of
    // about ±1.3 % relative, so theory must lie inside it (or within a hair of it).
    const tb = theoryBer('16qam', es);
    expect(m.berCi95[0]).toBeLessThan(tb * 1.005);
    expect(m.berCi95[1]).toBeGreaterThan(tb * 0.995);
    // The EVM and SNR see the corrected stream too.
    expect(Math.abs(m.snrDb - clean.snrDb)).toBeLessThan(1e-9);
    // Without correction, every symbol of x after the first slip is compared turned: the count of a
    // plain count with one turn for the whole stream (the definition, counted here independently).
    const c = constellation('16qam');
    const labels = referenceLabels(c, reference.x);
    const decided = decide(c, rx.x);
    let plain = 0;
    for (let k = SKIP; k < N; k++) {
      let d = decided[k] ^ labels[k];
      while (d) {
        d &= d - 1;
        plain++;
      }
    }
    expect(m.perPol.x.uncorrected.bitErrors).toBe(plain);
    expect(m.perPol.y.uncorrected.bitErrors).toBe(m.perPol.y.bitErrors);
    // A quarter turn of a Gray 16QAM point changes 2 of its 4 bits on average (the labels of the
    // square: each axis's 2 bits move to the other axis, mirrored on one): the slipped ¾ of x fail
    // about half their bits.
    expect(m.perPol.x.uncorrected.ber).toBeGreaterThan(0.3);
    // With slipCorrection 'none' the two counts trade places.
    const none = measure(rx, reference, '16qam', { skipSymbols: SKIP, slipCorrection: 'none' });
    expect(none.bitErrors).toBe(m.uncorrected.bitErrors);
    expect(none.blockCorrected.bitErrors).toBe(m.bitErrors);
    expect(none.slipCorrection.mode).toBe('none');
  });

  it('costs at most one block for a slip inside a block, and reports where the slips are', () => {
    const { rx, reference } = idealStream(43, 14);
    const clean = measure(rx, reference, '16qam', { skipSymbols: SKIP });
    const positions = [SKIP + 512 * 30 + 100, SKIP + 512 * 77 + 400];
    slip(rx.y, positions);
    const stream = new MeasurementStream(reference, '16qam', { skipSymbols: SKIP, fitSymbols: 8192 });
    // Random block sizes: the blocks of the correction count from the first measured symbol.
    const rng = new Rng(43);
    for (let at = 0; at < N; ) {
      const len = Math.min(N - at, 1 + rng.integer(3000));
      stream.add({
        x: rx.x.subarray(2 * at, 2 * (at + len)) as ComplexArray,
        y: rx.y.subarray(2 * at, 2 * (at + len)) as ComplexArray,
      });
      at += len;
    }
    const m = stream.finish();
    // A slip 100 symbols into a block: the block turns with its majority, so the 100 symbols before
    // the slip are wrong (about 2 of 4 bits each); 400 symbols in: the 112 after it.
    const extra = m.perPol.y.bitErrors - clean.perPol.y.bitErrors;
    expect(extra).toBeGreaterThan(0.3 * 4 * (100 + 112));
    expect(extra).toBeLessThan(0.7 * 4 * (100 + 112));
    // The detector against the reference places each slip within its 64-symbol window. The symbols
    // turned by +π/2 are what a recovered phase that jumped by −π/2 leaves: −1 quadrant (CycleSlip).
    const slips = stream.slips();
    expect(slips.x).toEqual([]);
    expect(slips.y.map((s) => s.quadrants)).toEqual([-1, -1]);
    slips.y.forEach((s, i) => {
      expect(Math.abs(s.position - (positions[i] - SKIP))).toBeLessThan(64);
    });
  });
});
