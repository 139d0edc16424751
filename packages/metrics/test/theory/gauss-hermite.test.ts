import { describe, expect, it } from 'vitest';
import { gaussHermite } from '../../src/theory/gauss-hermite.js';

// ∫ e^(−t²)·t^(2k) dt = Γ(k + ½) = (2k − 1)!!·√π / 2^k (standard integral).
function evenMoment(k: number): number {
  let v = Math.sqrt(Math.PI);
  for (let j = 1; j <= k; j++) v *= (2 * j - 1) / 2;
  return v;
}

describe('gaussHermite', () => {
  it('gives the closed-form rules for n = 2 and n = 3 (roots of H₂ = 4t² − 2 and H₃ = 8t³ − 12t)', () => {
    const r2 = gaussHermite(2);
    expect(r2.nodes[1]).toBeCloseTo(Math.SQRT1_2, 14);
    expect(r2.nodes[0]).toBeCloseTo(-Math.SQRT1_2, 14);
    expect(r2.weights[0]).toBeCloseTo(Math.sqrt(Math.PI) / 2, 14);
    const r3 = gaussHermite(3);
    expect(r3.nodes[2]).toBeCloseTo(Math.sqrt(1.5), 14);
    expect(r3.nodes[1]).toBe(0);
    expect(r3.weights[1]).toBeCloseTo((2 * Math.sqrt(Math.PI)) / 3, 14);
    expect(r3.weights[2]).toBeCloseTo(Math.sqrt(Math.PI) / 6, 14);
  });

  it('integrates t^(2k) exactly up to degree 2n − 1, for n up to 150', () => {
    for (const n of [5, 10, 20, 64, 100, 150]) {
      const { nodes, weights } = gaussHermite(n);
      for (let i = 1; i < n; i++) expect(nodes[i]).toBeGreaterThan(nodes[i - 1]);
      // Degrees up to 2n − 1 are exact in exact arithmetic; moments above ~40 lose digits to cancellation, so stop at 2k = 40.
      for (let k = 0; 2 * k <= Math.min(2 * n - 1, 40); k++) {
        let s = 0;
        for (let i = 0; i < n; i++) s += weights[i] * nodes[i] ** (2 * k);
        expect(Math.abs(s / evenMoment(k) - 1)).toBeLessThan(1e-11);
      }
      // Odd moments vanish by symmetry.
      let odd = 0;
      for (let i = 0; i < n; i++) odd += weights[i] * nodes[i] ** 3;
      expect(Math.abs(odd)).toBeLessThan(1e-12);
    }
  });

  it('rejects node counts outside [1, 150]', () => {
    for (const bad of [0, 151, 2.5, -3]) expect(() => gaussHermite(bad)).toThrow(RangeError);
  });
});
