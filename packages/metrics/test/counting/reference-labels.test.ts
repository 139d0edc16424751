import { type ComplexArray, complexArray, constellation, type DualPol, Rng, simulate } from '@intradyne/core';
import { describe, expect, it } from 'vitest';
import { compactReference, isCompactReference, referencePoints } from '../../src/counting/compact-reference.js';
import { referenceLabels, referenceLabelsInChunks } from '../../src/counting/reference-labels.js';
import { ReferenceMismatchError } from '../../src/counting/reference-mismatch.js';
import { randomSymbols } from '../support/streams.js';

/** Cuts a reference into chunks of random sizes (1 … 5,000 symbols), given as often as asked. */
function chunked(z: ComplexArray, seed: number) {
  const rng = new Rng(seed);
  const cuts: number[] = [0];
  const n = z.length >> 1;
  while (cuts[cuts.length - 1] < n) cuts.push(Math.min(n, cuts[cuts.length - 1] + 1 + rng.integer(5000)));
  return (visit: (chunk: ComplexArray, first: number) => void) => {
    for (let i = 1; i < cuts.length; i++) visit(z.subarray(2 * cuts[i - 1], 2 * cuts[i]) as ComplexArray, cuts[i - 1]);
  };
}

describe('reference labels', () => {
  it('in chunks of any sizes, are those of the whole array, at any scale and with rounding', () => {
    const rng = new Rng(41);
    for (const modulation of ['qpsk', '16qam', '64qam'] as const) {
      const c = constellation(modulation);
      const { symbols, labels } = randomSymbols(modulation, 30000, rng);
      // Any scale, and each value written with 4 significant digits (a rounded file).
      const z = symbols.map((v) => Number((37.5 * v).toPrecision(4))) as ComplexArray;
      const whole = referenceLabels(c, z);
      // The transmitted labels come back (the scale is fitted, the rounding is far inside the tolerance).
      expect(whole).toEqual(labels);
      const parts = new Uint8Array(30000);
      referenceLabelsInChunks(c, 30000, chunked(z, 42), parts);
      expect(parts).toEqual(whole);
    }
  });

  it('in chunks, throws the error of the whole array, naming the same symbol', () => {
    const c = constellation('16qam');
    const { symbols } = randomSymbols('16qam', 20000, new Rng(43));
    const z = symbols.slice() as ComplexArray;
    // A quarter of the level spacing off (the tolerance is a twentieth): symbol 12,345.
    z[2 * 12345] += 0.5 * c.scale;
    const message = (f: () => void) => {
      try {
        f();
      } catch (e) {
        return (e as Error).message;
      }
      return 'no error';
    };
    const whole = message(() => referenceLabels(c, z));
    expect(whole).toMatch(/reference symbol 12345 .* is not a 16qam point/);
    expect(message(() => referenceLabelsInChunks(c, 20000, chunked(z, 44), new Uint8Array(20000)))).toBe(whole);
  });

  it('as a compact reference, gives back the points at unit power, and is told from symbols', () => {
    const rng = new Rng(45);
    const x = randomSymbols('64qam', 4096, rng);
    const y = randomSymbols('64qam', 4096, rng);
    const symbols: DualPol = {
      x: x.symbols.map((v) => 0.01 * v) as ComplexArray,
      y: y.symbols.map((v) => 0.01 * v) as ComplexArray,
    };
    const ref = compactReference(symbols, '64qam');
    expect(ref.symbols).toBe(4096);
    expect(ref.labels.x).toEqual(x.labels);
    expect(ref.labels.y).toEqual(y.labels);
    // The points are those labelsToSymbols gave (unit average power, as DESIGN.md states): exact.
    expect(referencePoints(ref, 'y')).toEqual(y.symbols);
    expect(isCompactReference(ref)).toBe(true);
    expect(isCompactReference(symbols)).toBe(false);
    expect(() => compactReference({ x: symbols.x, y: symbols.y.subarray(2) as ComplexArray }, '64qam')).toThrow(RangeError);
  });
});

describe('a shaped reference checked against its prior', () => {
  it('passes references drawn with the stated prior and refuses one drawn with another', () => {
    const stated = constellation('ps-64qam:entropy=4.5');
    // Genuine references of a few seeds: the mean energy is within six standard errors of 1.
    for (const seed of [91, 92, 93]) {
      const sim = simulate({ seed, modulation: stated.name, symbols: 20000, symbolRate: 32e9 });
      expect(compactReference(sim.reference, stated.name).symbols).toBe(20000);
    }
    // Labels drawn with 5.5 bits of entropy, placed on the 4.5-bit points: scaled to the stated
    // prior's unit power (mean energy about 1.4 before), they fall between its points.
    const drawn = simulate({ seed: 94, modulation: 'ps-64qam:entropy=5.5', symbols: 20000, symbolRate: 32e9 });
    const labels = compactReference(drawn.reference, 'ps-64qam:entropy=5.5').labels;
    const onStated = (l: Uint8Array) => {
      const z = complexArray(l.length);
      for (let k = 0; k < l.length; k++) {
        z[2 * k] = stated.points[2 * l[k]];
        z[2 * k + 1] = stated.points[2 * l[k] + 1];
      }
      return z;
    };
    const e = (() => {
      try {
        compactReference({ x: onStated(labels.x), y: onStated(labels.y) }, stated.name);
      } catch (error) {
        return error;
      }
    })();
    expect(e).toBeInstanceOf(ReferenceMismatchError);
    expect((e as Error).message).toMatch(/is not a ps-64qam:entropy=4\.5 point|mean energy/);
  });
});
