import { type ComplexArray, type DualPol, idealMatchedFilter, OptionError, Rng, simulate } from '@intradyne/core';
import { describe, expect, it } from 'vitest';
import { compactReference } from '../../src/counting/compact-reference.js';
import { MeasurementStream, measure } from '../../src/measure/measure.js';
import { FULL_PERIOD_SYMBOLS } from '../../src/sync/synchronize.js';

// The symbols an ideal receiver gets from a simulated capture (RRC matched filter at the symbol instants),
// with a gain and a π/2 rotation on y, as a blind receiver leaves them.
// The pattern is PRBS11 (ITU-T O.150), so the stream repeats every 2,047 symbols and one period serves
// as the reference, as for a looped pattern in the lab.
const PERIOD = 2047;

function received(n: number, esN0Db: number, seed: number, order: 11 | 15 = 11) {
  const cap = simulate({
    seed,
    modulation: '16qam',
    symbols: n,
    symbolRate: 32e9,
    source: { kind: 'prbs', order },
    channel: { esN0Db },
  });
  const x = idealMatchedFilter(cap.truth.field.x, n, cap.symbolRate, cap.rollOff);
  const y = idealMatchedFilter(cap.truth.field.y, n, cap.symbolRate, cap.rollOff);
  for (let k = 0; k < n; k++) {
    const re = y[2 * k];
    y[2 * k] = -0.6 * y[2 * k + 1];
    y[2 * k + 1] = 0.6 * re;
    x[2 * k] *= 0.6;
    x[2 * k + 1] *= 0.6;
  }
  const reference = { x: cap.reference.x.slice(0, 2 * PERIOD), y: cap.reference.y.slice(0, 2 * PERIOD) } as DualPol;
  return { rx: { x, y }, reference, fullReference: cap.reference };
}

/** Feeds `rx` to a stream in blocks of random sizes (1 … 20,000 symbols). */
function streamed(rx: DualPol, s: MeasurementStream, seed: number) {
  const rng = new Rng(seed);
  const n = rx.x.length >> 1;
  for (let at = 0; at < n; ) {
    const len = Math.min(n - at, 1 + Math.floor(rng.uniform() * 20000));
    s.add({
      x: rx.x.subarray(2 * at, 2 * (at + len)) as ComplexArray,
      y: rx.y.subarray(2 * at, 2 * (at + len)) as ComplexArray,
    });
    at += len;
  }
  return s.finish();
}

describe('MeasurementStream', () => {
  const n = 65536;
  const { rx, reference, fullReference } = received(n, 10, 31);
  const whole = measure(rx, reference, '16qam', { skipSymbols: 1000, symbolRate: 32e9 });

  it('equals measure() exactly when the stream fits its buffer, whatever the blocks', () => {
    const m = streamed(rx, new MeasurementStream(reference, '16qam', { skipSymbols: 1000, symbolRate: 32e9 }), 1);
    expect(m).toEqual(whole);
  });

  it('fitted on a leading span, gives the figures of measure() on the whole stream', () => {
    const m = streamed(rx, new MeasurementStream(reference, '16qam', { skipSymbols: 1000, fitSymbols: 4096 }), 2);
    expect(m.symbols).toBe(whole.symbols);
    // Same alignment (its correlation statistics are those of the span).
    const { source, delay, quarterTurns, conjugated } = whole.perPol.y.alignment;
    expect(m.perPol.y.alignment).toMatchObject({ source, delay, quarterTurns, conjugated });
    // EVM and SNR come from running sums at the gain of every symbol: the same figure, up to the
    // rounding of Σ|z|²/γ² − Σ|a|² (about 1e-15 relative, times 1 + 1/SNR ≈ 11 lost to cancellation).
    expect(m.snrDb).toBeCloseTo(whole.snrDb, 9);
    expect(m.evmRms / whole.evmRms).toBeCloseTo(1, 10);
    // Decisions use the gain fitted on 4,096 symbols (relative error ≈ √(1/(2·4096·10)) = 3.5e-3):
    // the bit errors it flips must stay far inside the 95 % Clopper–Pearson interval the BER is
    // reported with (the estimator's own uncertainty); here a tenth of its half-width.
    const halfWidth = (whole.berCi95[1] - whole.berCi95[0]) / 2;
    expect(Math.abs(m.ber - whole.ber)).toBeLessThan(0.1 * halfWidth);
    // The GMI is stationary at the matched gain and noise variance (Alvarado et al. 2018: the
    // auxiliary-channel GMI is a lower bound maximized by the true channel), so the fit's errors
    // (3.5e-3 and √(2/4096) = 2.2e-2 relative) move it by their squares times O(1 bit): < 1e-3 bit.
    expect(Math.abs(m.gmi - whole.gmi)).toBeLessThan(1e-3);
    expect(Math.abs(m.mi - whole.mi)).toBeLessThan(1e-3);
  });

  it('fits over at least one reference period: a looped pattern cut at any length cannot misalign the rest', () => {
    // The whole transmitted sequence as the reference: PRBS11 repeats inside it, but not at its length
    // (65,536 is no multiple of 2,047), so a lead shorter than it would find several equal correlation
    // peaks, of which only one stays right past the reference's wrap.
    const expected = measure(rx, fullReference, '16qam', { skipSymbols: 1000 });
    const m = streamed(rx, new MeasurementStream(fullReference, '16qam', { skipSymbols: 1000, fitSymbols: 4096 }), 3);
    expect(m).toEqual(expected);
  });

  it('from the reference as labels: equals measure() with them exactly, and the same figures as with the symbols', () => {
    const labels = compactReference(reference, '16qam');
    const expected = measure(rx, labels, '16qam', { skipSymbols: 1000, symbolRate: 32e9 });
    const m = streamed(rx, new MeasurementStream(labels, '16qam', { skipSymbols: 1000, symbolRate: 32e9 }), 4);
    expect(m).toEqual(expected);
    // The labels' points are the simulator's reference points at unit power: the counts are the same,
    // the sums the same to rounding (the synchronization statistics come from other arithmetic).
    expect(m.bitErrors).toBe(whole.bitErrors);
    expect(m.perPol.y.gain).toBeCloseTo(whole.perPol.y.gain, 12);
    expect(m.evmRms).toBeCloseTo(whole.evmRms, 12);
    expect(m.gmi).toBeCloseTo(whole.gmi, 12);
    expect(() => new MeasurementStream(labels, 'qpsk')).toThrow(OptionError);
    // Polarizations of unequal lengths are refused before anything reads past the shorter one.
    const uneven = { x: reference.x, y: reference.y.subarray(2) as ComplexArray };
    expect(() => new MeasurementStream(uneven, '16qam')).toThrow(/reference x has 2047 symbols, y has 2046/);
    expect(() => measure(rx, { ...labels, labels: { x: labels.labels.x, y: labels.labels.y.subarray(1) } }, '16qam')).toThrow(
      RangeError,
    );
  });

  it('with a longer reference holding a looped pattern, grows its lead until the copies part', () => {
    // PRBS15 mapped to 16QAM repeats every 32,767 symbols (ITU-T O.150 period 2^15 − 1, coprime with
    // the 4 bits per symbol); the whole transmitted sequence of 140,000 symbols as the reference holds
    // it four times and a part, and is longer than a full-period search takes.
    const long = received(140000, 12, 33, 15);
    expect(long.fullReference.x.length >> 1).toBeGreaterThan(FULL_PERIOD_SYMBOLS);
    const ref = compactReference(long.fullReference, '16qam');
    const all = measure(long.rx, ref, '16qam', { skipSymbols: 1000 });
    const m = streamed(long.rx, new MeasurementStream(ref, '16qam', { skipSymbols: 1000, fitSymbols: 4096 }), 5);
    for (const p of ['x', 'y'] as const) {
      const { source, delay, quarterTurns, conjugated } = all.perPol[p].alignment;
      expect(m.perPol[p].alignment).toMatchObject({ source, delay, quarterTurns, conjugated });
    }
    // The lead grew past the 4,096 symbols asked for: the copies of the pattern tie on them.
    expect(m.sync.symbolsUsed).toBeGreaterThan(4096);
    expect(m.symbols).toBe(all.symbols);
    // As with a leading span above: the decisions flip within the fit's sampling error.
    const halfWidth = (all.berCi95[1] - all.berCi95[0]) / 2;
    expect(Math.abs(m.ber - all.ber)).toBeLessThan(0.1 * halfWidth);
    expect(Math.abs(m.gmi - all.gmi)).toBeLessThan(1e-3);
  });

  it('throws what measure() throws: symbols after finish, non-finite symbols with their position', () => {
    const s = new MeasurementStream(reference, '16qam', { fitSymbols: 300 });
    s.add({ x: rx.x.subarray(0, 1000) as ComplexArray, y: rx.y.subarray(0, 1000) as ComplexArray });
    const bad = { x: rx.x.slice(1000, 1010) as ComplexArray, y: rx.y.slice(1000, 1010) as ComplexArray };
    bad.y[7] = Number.NaN;
    expect(() => s.add(bad)).toThrow(/received y symbol 503 is not finite/);
    s.finish();
    expect(() => s.add(bad)).toThrow(RangeError);
  });
});
