import {
  type ComplexArray,
  complexArray,
  concatComplex,
  type DualPol,
  idealMatchedFilter,
  OptionError,
  Rng,
  simulate,
} from '@intradyne/core';
import { describe, expect, it } from 'vitest';
import { clopperPearson } from '../../src/counting/clopper-pearson.js';
import { measure, ReferenceNotFoundError } from '../../src/measure/measure.js';
import { theoryGmi } from '../../src/theory/awgn-information.js';
import { implementationPenaltyDb, snrForBer, theoryBer } from '../../src/theory/qam-ber.js';
import { impairedStream, randomSymbols } from '../support/streams.js';

// The symbols an ideal receiver gets from a simulated capture (RRC matched filter at the symbol instants).
function idealSymbols(cap: ReturnType<typeof simulate>, n: number): DualPol {
  return {
    x: idealMatchedFilter(cap.truth.field.x, n, cap.symbolRate, cap.rollOff),
    y: idealMatchedFilter(cap.truth.field.y, n, cap.symbolRate, cap.rollOff),
  };
}

// What a blind receiver leaves: polarizations swapped, y rotated by π/2, x conjugated, a delay of
// `delay` symbols and an arbitrary gain.
function scramble(s: DualPol, delay: number, gain: number): DualPol {
  const n = s.x.length >> 1;
  const x = complexArray(n);
  const y = complexArray(n);
  for (let k = 0; k < n; k++) {
    const j = (k - delay + n) % n;
    // x ← conj(y_ref-carrying stream)·g ; y ← j·x·g.
    x[2 * k] = gain * s.y[2 * j];
    x[2 * k + 1] = -gain * s.y[2 * j + 1];
    y[2 * k] = -gain * s.x[2 * j + 1];
    y[2 * k + 1] = gain * s.x[2 * j];
  }
  return { x, y };
}

describe('measure', () => {
  // One simulated 16QAM capture at Es/N0 = 10 dB, 2 × 65,536 symbols (enough for the GMI check:
  // standard error ≈ 0.003 bit, see the information tests).
  const n = 65536;
  const cap = simulate({ seed: 21, modulation: '16qam', symbols: n, symbolRate: 32e9, channel: { esN0Db: 10 } });
  const rx = scramble(idealSymbols(cap, n), 777, 0.37);
  const m = measure(rx, cap.reference, '16qam', { skipSymbols: 1000, symbolRate: 32e9 });

  it('undoes the swap, rotation, conjugation and delay it reports', () => {
    expect(m.sync.swapped).toBe(true);
    expect(m.perPol.x.alignment).toMatchObject({ source: 'y', delay: 777, quarterTurns: 0, conjugated: true });
    expect(m.perPol.y.alignment).toMatchObject({ source: 'x', delay: 777, quarterTurns: 1, conjugated: false });
    expect(m.perPol.x.gain).toBeCloseTo(0.37, 2);
  });

  it('measures BER, SNR, EVM, Q and GMI of an ideal receiver at 10 dB as theory says', () => {
    // 2 × 64,536 symbols × 4 bits: at BER 0.059 the 95 % interval is about ±0.8 % relative, so the
    // Cho & Yoon BER must lie inside it (or within a hair of it).
    const tb = theoryBer('16qam', 10);
    expect(m.berCi95[0]).toBeLessThan(tb * 1.005);
    expect(m.berCi95[1]).toBeGreaterThan(tb * 0.995);
    expect(m.bits).toBe(2 * (n - 1000) * 4);
    expect(m.symbols).toBe(2 * (n - 1000));
    // Noise power estimated from 129,072 symbols: relative spread 1/√129072 ≈ 0.3 % (0.012 dB).
    expect(Math.abs(m.snrDb - 10)).toBeLessThan(0.05);
    expect(Math.abs(m.evmRms - 1 / Math.sqrt(10))).toBeLessThan(0.002);
    expect(Math.abs(m.snrFromEvmDb - m.snrDb)).toBeLessThan(0.02);
    // Q from the BER: the Es/N0 Gray QPSK would need for it (the identity of DOMAIN.md).
    expect(Math.abs((m.qDb as number) - snrForBer('qpsk', m.ber))).toBeLessThan(1e-6);
    expect(Math.abs(m.gmi - 3.1636)).toBeLessThan(0.01);
    expect(Math.abs(m.gmi - theoryGmi('16qam', 10))).toBeLessThan(0.01);
    expect(m.ngmi).toBeCloseTo(m.gmi / 4, 12);
    expect(m.mi).toBeGreaterThanOrEqual(m.gmi);
    // No implementation penalty for an ideal receiver: within the BER's own uncertainty (~0.02 dB).
    expect(Math.abs(implementationPenaltyDb('16qam', 10, m.ber))).toBeLessThan(0.05);
  });

  it('pools both polarizations into the totals', () => {
    const { x, y } = m.perPol;
    expect(m.bitErrors).toBe(x.bitErrors + y.bitErrors);
    expect(m.ber).toBe((x.bitErrors + y.bitErrors) / (x.bits + y.bits));
    expect(m.berCi95).toEqual(clopperPearson(m.bitErrors, m.bits));
    expect(m.symbolErrors).toBe(x.symbolErrors + y.symbolErrors);
    expect(m.gmi).toBeCloseTo((x.gmi + y.gmi) / 2, 12);
    expect(m.airBitsPerSecond).toBeCloseTo((x.gmi + y.gmi) * 32e9, 0);
    expect(m.evmRms ** 2).toBeCloseTo((x.evmRms ** 2 + y.evmRms ** 2) / 2, 12);
  });

  it('reports an upper bound, never a bare 0, when there is no error', () => {
    const rng = new Rng(3);
    const ref = { x: randomSymbols('qpsk', 1024, rng).symbols, y: randomSymbols('qpsk', 1024, rng).symbols };
    const opts = { gain: 2, snrDb: 25, garbage: 0, rng };
    const received = {
      x: impairedStream(ref, 3000, { source: 'x', delay: 3, quarterTurns: 2, conjugated: false }, opts),
      y: impairedStream(ref, 3000, { source: 'y', delay: 4, quarterTurns: 0, conjugated: false }, opts),
    };
    const r = measure(received, ref, 'qpsk');
    expect(r.bitErrors).toBe(0);
    expect(r.berIsUpperBound).toBe(true);
    expect(r.ber).toBeGreaterThan(0);
    expect(r.ber).toBe(r.berCi95[1]);
    expect(r.ber).toBeCloseTo(1 - 0.025 ** (1 / 12000), 12);
    expect(r.qDb).not.toBeNull();
    expect(r.airBitsPerSecond).toBeNull();
    expect(r.perPol.x.alignment.delay).toBe(3);
    expect(r.perPol.y.alignment.delay).toBe(4);
    expect(r.aligned).toBeNull();
  });

  it('keeps the aligned symbols on request: undone, normalized, against their reference points', () => {
    const rng = new Rng(8);
    const ref = { x: randomSymbols('16qam', 1024, rng).symbols, y: randomSymbols('16qam', 1024, rng).symbols };
    const opts = { gain: 3, snrDb: Number.POSITIVE_INFINITY, garbage: 0, rng };
    const received = {
      x: impairedStream(ref, 2000, { source: 'y', delay: 10, quarterTurns: 3, conjugated: true }, opts),
      y: impairedStream(ref, 2000, { source: 'x', delay: 11, quarterTurns: 1, conjugated: false }, opts),
    };
    const r = measure(received, ref, '16qam', { skipSymbols: 50, keepAligned: true });
    const a = r.aligned!;
    expect(a.x.received.length).toBe(2 * 1950);
    // Received x symbol 50 carries reference y symbol (50 − 10) = 40; noiseless, so equal to rounding.
    expect(a.x.received[0]).toBeCloseTo(ref.y[80], 12);
    expect(a.x.received[1]).toBeCloseTo(ref.y[81], 12);
    expect(a.y.reference[0]).toBeCloseTo(ref.x[2 * 39], 12);
    expect(a.y.labels.length).toBe(1950);
  });

  it('leaves the skipped symbols out, and peak EVM is average EVM scaled by √(1/1.8) for 16QAM', () => {
    const rng = new Rng(4);
    const ref = { x: randomSymbols('16qam', 4096, rng).symbols, y: randomSymbols('16qam', 4096, rng).symbols };
    const opts = { gain: 1, snrDb: 22, garbage: 500, rng };
    const received = {
      x: impairedStream(ref, 4096, { source: 'x', delay: 0, quarterTurns: 0, conjugated: false }, opts),
      y: impairedStream(ref, 4096, { source: 'y', delay: 0, quarterTurns: 0, conjugated: false }, opts),
    };
    const skipped = measure(received, ref, '16qam', { skipSymbols: 500 });
    // At 22 dB 16QAM has a BER near 1e-6 (Cho & Yoon): a handful of errors at most, whereas the garbage would give ~0.4.
    expect(skipped.ber).toBeLessThan(1e-3);
    expect(skipped.symbols).toBe(2 * 3596);
    const peak = measure(received, ref, '16qam', { skipSymbols: 500, evmNormalization: 'peak' });
    expect(peak.evmRms).toBeCloseTo(skipped.evmRms / Math.sqrt(1.8), 12);
    const maxLog = measure(received, ref, '16qam', { skipSymbols: 500, bitMetric: 'max-log' });
    expect(maxLog.gmi).toBeLessThanOrEqual(skipped.gmi + 1e-9);
    expect(measure(received, ref, '16qam').ber).toBeGreaterThan(0.02);
  });

  it('measures a capture longer than its repeating reference (two periods of a simulated QPSK link)', () => {
    // The simulator's transmission is periodic in its N symbols, so two copies of the ideal
    // receiver's output are a capture of 2N symbols from an N-symbol reference.
    const nq = 4096;
    const q = simulate({ seed: 22, modulation: 'qpsk', symbols: nq, symbolRate: 32e9, channel: { esN0Db: 9.8 } });
    const one = idealSymbols(q, nq);
    const twice = { x: concatComplex([one.x, one.x]), y: concatComplex([one.y, one.y]) };
    const r = measure(twice, q.reference, 'qpsk', { skipSymbols: 100 });
    expect(r.symbols).toBe(2 * (2 * nq - 100));
    expect(r.perPol.x.alignment.delay).toBe(0);
    // Every symbol counted twice but the second copy's errors repeat the first: the interval of
    // one period's count, 4 bits × 4096 × 2 pols ≈ 32,768 bits at BER 1e-3 (±35 %), holds the theory.
    expect(clopperPearson(Math.round(r.bitErrors / 2), r.bits / 2)[0]).toBeLessThan(1e-3);
    expect(clopperPearson(Math.round(r.bitErrors / 2), r.bits / 2)[1]).toBeGreaterThan(1e-3);
  });

  it('reports the limits for a noiseless stream: infinite SNR, log2 M bits, BER as an upper bound', () => {
    const rng = new Rng(7);
    const ref = { x: randomSymbols('64qam', 1000, rng).symbols, y: randomSymbols('64qam', 1000, rng).symbols };
    const r = measure(ref, ref, '64qam');
    expect(r.snrDb).toBe(Number.POSITIVE_INFINITY);
    expect(r.evmRms).toBe(0);
    expect(r.gmi).toBe(6);
    expect(r.ngmi).toBe(1);
    expect(r.berIsUpperBound).toBe(true);
  });

  it('throws ReferenceNotFoundError, with the findings, when the reference is not in the capture', () => {
    const rng = new Rng(5);
    const ref = { x: randomSymbols('qpsk', 2048, rng).symbols, y: randomSymbols('qpsk', 2048, rng).symbols };
    const other = { x: randomSymbols('qpsk', 3000, rng).symbols, y: randomSymbols('qpsk', 3000, rng).symbols };
    let error: unknown;
    try {
      measure(other, ref, 'qpsk');
    } catch (e) {
      error = e;
    }
    expect(error).toBeInstanceOf(ReferenceNotFoundError);
    expect((error as ReferenceNotFoundError).sync.found).toBe(false);
    expect((error as Error).message).toMatch(/reference was not found/);
  });

  it('rejects bad options and non-finite symbols', () => {
    const rng = new Rng(6);
    const ref = { x: randomSymbols('qpsk', 512, rng).symbols, y: randomSymbols('qpsk', 512, rng).symbols };
    expect(() => measure(ref, ref, '8psk' as 'qpsk')).toThrow(OptionError);
    expect(() => measure(ref, ref, 'qpsk', { evmNormalization: 'max' as 'peak' })).toThrow(OptionError);
    expect(() => measure(ref, ref, 'qpsk', { bitMetric: 'soft' as 'exact' })).toThrow(OptionError);
    expect(() => measure(ref, ref, 'qpsk', { symbolRate: -1 })).toThrow(OptionError);
    const bad = ref.x.slice() as ComplexArray;
    bad[7] = Number.NaN;
    expect(() => measure({ x: bad, y: ref.y }, ref, 'qpsk')).toThrow(/received x symbol 3 is not finite/);
  });
});
