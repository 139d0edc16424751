import { constellation, fromParts, labelsToSymbols, Rng } from '@intradyne/core';
import { describe, expect, it } from 'vitest';
import { countErrors, errorRatio } from '../../src/counting/error-count.js';
import { referenceLabels } from '../../src/counting/reference-labels.js';
import { ReferenceMismatchError } from '../../src/counting/reference-mismatch.js';

describe('countErrors', () => {
  it('counts Hamming distances of labels and differing symbols', () => {
    const c = constellation('16qam');
    const sent = Uint8Array.of(0, 5, 15, 9);
    const got = Uint8Array.of(0, 4, 0, 9); // 1 bit, then 4 bits
    expect(countErrors(c, got, sent)).toEqual({ bitErrors: 5, bits: 16, symbolErrors: 2, symbols: 4 });
    expect(() => countErrors(c, got, sent.subarray(1))).toThrow(RangeError);
  });
});

describe('errorRatio', () => {
  it('reports the 95 % upper bound, flagged, when no error is seen: never a bare 0', () => {
    const r = errorRatio(0, 1000);
    expect(r.isUpperBound).toBe(true);
    expect(r.ratio).toBeGreaterThan(0);
    // 1 − 0.025^(1/n): the k = 0 Clopper–Pearson bound.
    expect(r.ratio).toBeCloseTo(1 - 0.025 ** (1 / 1000), 12);
    expect(r.ci95).toEqual([0, r.ratio]);
  });

  it('reports errors / trials otherwise, inside its interval', () => {
    const r = errorRatio(7, 1000);
    expect(r).toMatchObject({ ratio: 0.007, isUpperBound: false });
    expect(r.ci95[0]).toBeLessThan(0.007);
    expect(r.ci95[1]).toBeGreaterThan(0.007);
  });
});

describe('referenceLabels', () => {
  it('recovers labels of a reference at any scale, even a short 64QAM one without unit power', () => {
    const c = constellation('64qam');
    const rng = new Rng(3);
    const labels = new Uint8Array(20);
    for (let i = 0; i < labels.length; i++) labels[i] = rng.integer(64);
    // A few outer points: the mean power is far from 1.
    labels[0] = 0;
    labels[1] = 63;
    const ref = labelsToSymbols(c, labels);
    for (let i = 0; i < ref.length; i++) ref[i] = Math.round(ref[i] * 37.25 * 1e3) / 1e3; // any scale, rounded as in a CSV
    expect(referenceLabels(c, ref)).toEqual(labels);
  });

  it('rejects a reference of another modulation, an empty or a zero one', () => {
    // (A QPSK reference would pass as 16QAM: its points are the 16QAM corners, scaled.)
    const c64 = constellation('64qam');
    const sixtyFour = labelsToSymbols(
      c64,
      Uint8Array.from({ length: 64 }, (_, i) => i),
    );
    expect(() => referenceLabels(constellation('16qam'), sixtyFour)).toThrow(/not a 16qam point/);
    const rng = new Rng(9);
    const noise = fromParts(
      Array.from({ length: 200 }, () => rng.gaussian()),
      Array.from({ length: 200 }, () => rng.gaussian()),
    );
    expect(() => referenceLabels(c64, noise)).toThrow(/not a 64qam point/);
    const c16 = constellation('16qam');
    const sixteen = labelsToSymbols(
      c16,
      Uint8Array.from({ length: 16 }, (_, i) => i),
    );
    expect(() => referenceLabels(constellation('qpsk'), sixteen)).toThrow(/not a qpsk point/);
    // Every way a reference cannot be measured against is one typed error, whatever its words.
    expect(() => referenceLabels(c16, fromParts([], []))).toThrow(ReferenceMismatchError);
    expect(() => referenceLabels(c16, fromParts([0, 0], [0, 0]))).toThrow(ReferenceMismatchError);
    expect(() => referenceLabels(c64, noise)).toThrow(ReferenceMismatchError);
  });
});
