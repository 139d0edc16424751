import { describe, expect, it } from 'vitest';
import {
  type ComplexArray,
  constellation,
  decide,
  demapBits,
  labelsToBits,
  MODULATIONS,
  mapBits,
  parseModulation,
  Rng,
} from '../../src/index.js';

describe('Gray square QAM constellations', () => {
  for (const name of MODULATIONS) {
    const c = constellation(name);
    it(`${name}: unit average power`, () => {
      let p = 0;
      for (let k = 0; k < c.order; k++) p += c.points[2 * k] ** 2 + c.points[2 * k + 1] ** 2;
      expect(p / c.order).toBeCloseTo(1, 14);
    });

    // Square QAM only: the cross and star labellings are checked in constellations.test.ts.
    if (c.square)
      it(`${name}: nearest neighbours differ in exactly one bit (Gray)`, () => {
        const dmin = 2 * c.scale;
        let pairs = 0;
        for (let a = 0; a < c.order; a++) {
          for (let b = a + 1; b < c.order; b++) {
            const d = Math.hypot(c.points[2 * a] - c.points[2 * b], c.points[2 * a + 1] - c.points[2 * b + 1]);
            if (Math.abs(d - dmin) < 1e-9) {
              pairs++;
              let x = a ^ b;
              let ones = 0;
              while (x) {
                ones += x & 1;
                x >>= 1;
              }
              expect(ones).toBe(1);
            }
          }
        }
        // A √M × √M grid has 2·√M·(√M − 1) horizontal and vertical neighbour pairs.
        const L = c.levelsPerAxis;
        expect(pairs).toBe(2 * L * (L - 1));
      });

    it(`${name}: bits → symbols → decisions → bits is the identity`, () => {
      const bits = new Rng(3).fillBits(new Uint8Array(c.bitsPerSymbol * 5000));
      const symbols = mapBits(c, bits);
      expect(demapBits(c, symbols)).toEqual(bits);
    });
  }

  it('has the CMA constants and RDE rings of DOMAIN.md', () => {
    // R2 = E|a|⁴/E|a|²: 1 (QPSK), 1.32 (16QAM), 1.380952 (64QAM) at unit power (Godard 1980).
    expect(constellation('qpsk').cmaRadius2).toBeCloseTo(1, 12);
    expect(constellation('16qam').cmaRadius2).toBeCloseTo(1.32, 12);
    expect(constellation('64qam').cmaRadius2).toBeCloseTo(1.380952, 6);
    // 16QAM ring radii² at unit power {0.2, 1, 1.8} (Fatadin, Ives, Savory, JLT 2009).
    const rings = constellation('16qam').ringRadii2;
    expect(rings).toHaveLength(3);
    expect(rings[0]).toBeCloseTo(0.2, 12);
    expect(rings[1]).toBeCloseTo(1, 12);
    expect(rings[2]).toBeCloseTo(1.8, 12);
    expect(constellation('64qam').ringRadii2).toHaveLength(9);
  });

  it('decides noisy symbols to the nearest point', () => {
    const c = constellation('16qam');
    const rng = new Rng(8);
    const n = 20_000;
    const labels = new Uint8Array(n);
    const noisy = new Float64Array(2 * n) as ComplexArray;
    for (let k = 0; k < n; k++) {
      labels[k] = rng.integer(16);
      noisy[2 * k] = c.points[2 * labels[k]] + 0.3 * c.scale * (rng.uniform() - 0.5) * 2;
      noisy[2 * k + 1] = c.points[2 * labels[k] + 1] + 0.3 * c.scale * (rng.uniform() - 0.5) * 2;
    }
    // Noise below half the minimum distance never crosses a boundary.
    expect(decide(c, noisy)).toEqual(labels);
    expect(labelsToBits(c, Uint8Array.of(0b1011))).toEqual(Uint8Array.of(1, 0, 1, 1));
  });

  it('rejects non-finite symbols and unknown names', () => {
    const c = constellation('qpsk');
    expect(() => decide(c, Float64Array.of(Number.NaN, 0) as ComplexArray)).toThrow(/not a finite/);
    expect(() => parseModulation('8PSK')).toThrow(/qpsk, 8qam, 16qam, 32qam, 64qam, 128qam, 256qam/);
    expect(parseModulation('16QAM')).toBe('16qam');
  });
});
