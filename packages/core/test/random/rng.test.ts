import { describe, expect, it } from 'vitest';
import { Rng } from '../../src/index.js';

describe('seeded generator', () => {
  it('gives the same stream for the same seed and another for another seed', () => {
    const a = new Rng(42);
    const b = new Rng(42);
    const c = new Rng(43);
    const sa = Array.from({ length: 100 }, () => a.nextUint32());
    expect(Array.from({ length: 100 }, () => b.nextUint32())).toEqual(sa);
    expect(Array.from({ length: 100 }, () => c.nextUint32())).not.toEqual(sa);
  });

  it('has uniform and Gaussian moments within sampling error', () => {
    const r = new Rng(7);
    const n = 400_000;
    let m1 = 0;
    let m2 = 0;
    let g1 = 0;
    let g2 = 0;
    let g4 = 0;
    for (let i = 0; i < n; i++) {
      const u = r.uniform();
      m1 += u;
      m2 += u * u;
      const g = r.gaussian();
      g1 += g;
      g2 += g * g;
      g4 += g ** 4;
    }
    // Uniform: mean 1/2, E[u²] = 1/3; normal: mean 0, variance 1, E[g⁴] = 3.
    // Tolerances are about 5 standard errors at n = 4e5.
    expect(Math.abs(m1 / n - 0.5)).toBeLessThan(0.003);
    expect(Math.abs(m2 / n - 1 / 3)).toBeLessThan(0.003);
    expect(Math.abs(g1 / n)).toBeLessThan(0.008);
    expect(Math.abs(g2 / n - 1)).toBeLessThan(0.012);
    expect(Math.abs(g4 / n - 3)).toBeLessThan(0.06);
  });

  it('draws balanced bits', () => {
    const bits = new Rng(1).fillBits(new Uint8Array(100_000));
    let ones = 0;
    for (const b of bits) ones += b;
    // Binomial(1e5, ½): σ = 158; 5σ ≈ 800.
    expect(Math.abs(ones - 50_000)).toBeLessThan(800);
  });

  it('rejects a seed that is not a safe integer', () => {
    expect(() => new Rng(1.5)).toThrow(/safe integer/);
  });
});
