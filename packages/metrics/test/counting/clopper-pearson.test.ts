import { Rng } from '@intradyne/core';
import { describe, expect, it } from 'vitest';
import { clopperPearson } from '../../src/counting/clopper-pearson.js';

// Binomial tails summed term by term (pmf recurrence), independent of the beta quantile.
function binomialCdf(k: number, n: number, p: number): number {
  let pmf = (1 - p) ** n;
  let s = 0;
  for (let i = 0; i <= k; i++) {
    s += pmf;
    pmf *= ((n - i) / (i + 1)) * (p / (1 - p));
  }
  return s;
}

describe('clopperPearson', () => {
  it('has the closed forms at k = 0 and k = n: [0, 1 − (α/2)^(1/n)] and [(α/2)^(1/n), 1]', () => {
    for (const n of [1, 10, 1000, 1e7]) {
      const [lo, hi] = clopperPearson(0, n);
      expect(lo).toBe(0);
      expect(Math.abs(hi / -Math.expm1(Math.log(0.025) / n) - 1)).toBeLessThan(1e-9);
      const [lo2, hi2] = clopperPearson(n, n);
      expect(Math.abs(lo2 / 0.025 ** (1 / n) - 1)).toBeLessThan(1e-9);
      expect(hi2).toBe(1);
    }
  });

  it('puts α/2 of binomial probability beyond each end (the definition, Clopper & Pearson 1934)', () => {
    for (const [k, n] of [
      [1, 10],
      [3, 100],
      [17, 400],
      [250, 1000],
    ]) {
      const [lo, hi] = clopperPearson(k, n);
      // P(X ≥ k | lo) = 0.025 and P(X ≤ k | hi) = 0.025; the pmf sums are accurate to ~1e-12 here.
      expect(1 - binomialCdf(k - 1, n, lo)).toBeCloseTo(0.025, 9);
      expect(binomialCdf(k, n, hi)).toBeCloseTo(0.025, 9);
    }
  });

  it('covers the true probability in at least 94 % of 1,000 seeded Bernoulli experiments', () => {
    // Each experiment: n in [200, 3000] trials at a p in [1e-3, 0.2] (log-uniform). The exact
    // interval covers with probability ≥ 95 % for every p; over 1,000 experiments the coverage
    // has a standard deviation ≤ 0.7 %, so 94 % leaves room only for a wrong interval.
    const rng = new Rng(2024);
    let covered = 0;
    const experiments = 1000;
    for (let e = 0; e < experiments; e++) {
      const p = 10 ** (-3 + rng.uniform() * Math.log10(200));
      const n = 200 + rng.integer(2801);
      let k = 0;
      for (let i = 0; i < n; i++) if (rng.uniform() < p) k++;
      const [lo, hi] = clopperPearson(k, n);
      if (lo <= p && p <= hi) covered++;
    }
    expect(covered / experiments).toBeGreaterThanOrEqual(0.94);
    // Clopper–Pearson is conservative: it does not cover everything either (a check the test can fail).
    expect(covered).toBeLessThan(experiments);
  });

  it('narrows as the count grows and takes other confidences', () => {
    const [a, b] = clopperPearson(10, 1000);
    const [c, d] = clopperPearson(100, 10000);
    expect(d - c).toBeLessThan(b - a);
    const [e, f] = clopperPearson(10, 1000, 0.99);
    expect(e).toBeLessThan(a);
    expect(f).toBeGreaterThan(b);
  });

  it('rejects bad counts and confidences', () => {
    expect(() => clopperPearson(-1, 10)).toThrow(RangeError);
    expect(() => clopperPearson(11, 10)).toThrow(RangeError);
    expect(() => clopperPearson(1, 0)).toThrow(RangeError);
    expect(() => clopperPearson(1.5, 10)).toThrow(RangeError);
    expect(() => clopperPearson(1, 10, 1)).toThrow(RangeError);
    expect(() => clopperPearson(1, 10, Number.NaN)).toThrow(RangeError);
  });
});
