import { describe, expect, it } from 'vitest';
import {
  ADAPT_STRIDE,
  adaptRadial,
  adaptWithRule,
  butterflyOutput,
  cmaRule,
  constellation,
  deriveOrthogonalRow,
  FILTER_XY,
  FILTER_YX,
  FILTER_YY,
  Rng,
  rdeRule,
  rowOrthogonality,
  separationIndex,
  updateRow,
} from '../../src/index.js';

const L = 5;

function randomTaps(seed: number): Float64Array {
  return new Rng(seed).fillGaussian(new Float64Array(8 * L));
}

describe('butterflyOutput', () => {
  it('equals the direct double sum of the butterfly equation', () => {
    const taps = randomTaps(1);
    const rng = new Rng(2);
    const ux = rng.fillGaussian(new Float64Array(2 * 12));
    const uy = rng.fillGaussian(new Float64Array(2 * 12));
    const out = new Float64Array(4);
    const newest = 9;
    butterflyOutput(taps, L, ux, uy, newest, out);
    // x̂ = Σⱼ hxx[j]·x[n − j] + hxy[j]·y[n − j] written with complex arithmetic on objects, independently.
    const c = (a: number[], b: number[]) => [a[0] * b[0] - a[1] * b[1], a[0] * b[1] + a[1] * b[0]];
    const tap = (f: number, j: number) => [taps[f * L + 2 * j], taps[f * L + 2 * j + 1]];
    const at = (u: Float64Array, i: number) => [u[2 * i], u[2 * i + 1]];
    const expect4 = [0, 0, 0, 0];
    for (let j = 0; j < L; j++) {
      const terms = [
        c(tap(0, j), at(ux, newest - j)),
        c(tap(FILTER_XY, j), at(uy, newest - j)),
        c(tap(FILTER_YX, j), at(ux, newest - j)),
        c(tap(FILTER_YY, j), at(uy, newest - j)),
      ];
      expect4[0] += terms[0][0] + terms[1][0];
      expect4[1] += terms[0][1] + terms[1][1];
      expect4[2] += terms[2][0] + terms[3][0];
      expect4[3] += terms[2][1] + terms[3][1];
    }
    // Same sums in another order: agreement to a few ulps of the magnitude (|terms| ~ 1, 20 terms).
    for (let i = 0; i < 4; i++) expect(out[i]).toBeCloseTo(expect4[i], 12);
  });
});

describe('updateRow', () => {
  it('moves the output along the LMS direction: Δz = μ·e·‖u‖² for the updated row', () => {
    // After h ← h + μ·e·u*, the new output on the same window is z + μ·e·Σ|u|² exactly (linear in h).
    const taps = randomTaps(3);
    const rng = new Rng(4);
    const ux = rng.fillGaussian(new Float64Array(2 * L));
    const uy = rng.fillGaussian(new Float64Array(2 * L));
    const before = new Float64Array(4);
    const after = new Float64Array(4);
    butterflyOutput(taps, L, ux, uy, L - 1, before);
    const mu = 0.01;
    updateRow(taps, L, ux, uy, L - 1, 1, 0.3, -0.2, mu);
    butterflyOutput(taps, L, ux, uy, L - 1, after);
    let energy = 0;
    for (let i = 0; i < 2 * L; i++) energy += ux[i] * ux[i] + uy[i] * uy[i];
    expect(after[0]).toBeCloseTo(before[0], 13);
    expect(after[1]).toBeCloseTo(before[1], 13);
    expect(after[2] - before[2]).toBeCloseTo(mu * 0.3 * energy, 12);
    expect(after[3] - before[3]).toBeCloseTo(mu * -0.2 * energy, 12);
  });
});

describe('rowOrthogonality', () => {
  it('is 1 for rows derived by the orthogonality relation and 0 for parallel rows', () => {
    const taps = randomTaps(5);
    deriveOrthogonalRow(taps, L);
    // |det H| = |Hxx|² + |Hxy|² = ‖row x‖·‖row y‖ at every frequency: ratio 1 up to rounding.
    expect(rowOrthogonality(taps, L, 17, 0.4)).toBeCloseTo(1, 12);
    // Row y = 2·row x delayed by one sample: both outputs extract the same source.
    const par = randomTaps(6);
    par.fill(0, 4 * L);
    for (let j = 1; j < L; j++) {
      for (const [from, to] of [
        [0, FILTER_YX],
        [FILTER_XY, FILTER_YY],
      ]) {
        par[to * L + 2 * j] = 2 * par[from * L + 2 * (j - 1)];
        par[to * L + 2 * j + 1] = 2 * par[from * L + 2 * (j - 1) + 1];
      }
    }
    // Only the last tap of row x has no counterpart; zero it so the rows are exactly parallel.
    for (const f of [0, FILTER_XY]) {
      par[f * L + 2 * (L - 1)] = 0;
      par[f * L + 2 * (L - 1) + 1] = 0;
    }
    expect(rowOrthogonality(par, L, 17, 0.4)).toBeLessThan(1e-12);
  });
});

describe('separationIndex', () => {
  // Exact moments by enumeration of the constellation (no sampling).
  for (const name of ['qpsk', '16qam', '64qam'] as const) {
    it(`${name}: 1 for the source itself, 0.5 for an equal mix of two independent sources`, () => {
      const c = constellation(name);
      const M = c.order;
      let m2 = 0;
      let m4 = 0;
      let mix2 = 0;
      let mix4 = 0;
      for (let i = 0; i < M; i++) {
        const p = c.points[2 * i] ** 2 + c.points[2 * i + 1] ** 2;
        m2 += p / M;
        m4 += (p * p) / M;
        for (let j = 0; j < M; j++) {
          const re = (c.points[2 * i] + c.points[2 * j]) / Math.SQRT2;
          const im = (c.points[2 * i + 1] + c.points[2 * j + 1]) / Math.SQRT2;
          const q = re * re + im * im;
          mix2 += q / (M * M);
          mix4 += (q * q) / (M * M);
        }
      }
      // Shalvi & Weinstein 1990: Σ|g|⁴/(Σ|g|²)² is 1 for one source, 1/2 for two equal ones.
      expect(separationIndex(m2, m4, c.cmaRadius2)).toBeCloseTo(1, 12);
      expect(separationIndex(mix2, mix4, c.cmaRadius2)).toBeCloseTo(0.5, 12);
    });
  }
});

describe('update rules', () => {
  it('CMA error is minus the gradient of J = (|z|² − R2)²/2 with respect to z*', () => {
    // J = (|z|² − R2)²/2 ⇒ ∂J/∂z* = (|z|² − R2)·z, checked by central differences on re and im.
    const rule = cmaRule('16qam', 1e-3);
    const R2 = constellation('16qam').cmaRadius2;
    const J = (re: number, im: number) => (re * re + im * im - R2) ** 2 / 2;
    const e = new Float64Array(2);
    const zr = 0.7;
    const zi = -0.4;
    const cost = rule.error(zr, zi, 0, e);
    const h = 1e-6;
    // ∂J/∂z* = (∂J/∂re + j·∂J/∂im)/2
    const gr = (J(zr + h, zi) - J(zr - h, zi)) / (2 * h) / 2;
    const gi = (J(zr, zi + h) - J(zr, zi - h)) / (2 * h) / 2;
    expect(e[0]).toBeCloseTo(-gr, 8);
    expect(e[1]).toBeCloseTo(-gi, 8);
    expect(cost).toBeCloseTo((zr * zr + zi * zi - R2) ** 2, 14);
  });

  it('RDE targets the nearest ring of 16QAM, R² ∈ {0.2, 1, 1.8} (Fatadin et al. 2009)', () => {
    const rule = rdeRule('16qam', 1e-4);
    const e = new Float64Array(2);
    // |z|² = 0.25 → ring 0.2; 0.9 → ring 1; 1.7 → ring 1.8 (real z, so e = z·(R² − |z|²) is real).
    for (const [p2, ring] of [
      [0.25, 0.2],
      [0.9, 1],
      [1.7, 1.8],
    ]) {
      const z = Math.sqrt(p2);
      rule.error(z, 0, 0, e);
      expect(e[0]).toBeCloseTo(z * (ring - p2), 12);
      expect(Math.abs(e[1])).toBe(0);
    }
  });
});

describe('adaptRadial and adaptWithRule (the fused loops of the stage)', () => {
  // The reference is the unfused composition: butterflyOutput, the rule's error(), updateRow per row.
  // The fused kernels evaluate the same expressions in the same order, so they must agree exactly.
  const count = 40;
  const rng = new Rng(7);
  const ux = rng.fillGaussian(new Float64Array(2 * (2 * count + L)));
  const uy = rng.fillGaussian(new Float64Array(2 * (2 * count + L)));
  const newest0 = L - 1;

  function unfused(rule: ReturnType<typeof rdeRule>, mu: (a: number) => number, updateEvery: number) {
    const taps = randomTaps(3).map((v) => 0.1 * v);
    const out = new Float64Array(ADAPT_STRIDE * count);
    const z = new Float64Array(4);
    const ex = new Float64Array(2);
    const ey = new Float64Array(2);
    for (let s = 0; s < count; s++) {
      const n = newest0 + 2 * s;
      butterflyOutput(taps, L, ux, uy, n, z);
      out.set(z, ADAPT_STRIDE * s);
      out[ADAPT_STRIDE * s + 4] = rule.error(z[0], z[1], 0, ex);
      out[ADAPT_STRIDE * s + 5] = rule.error(z[2], z[3], 1, ey);
      if (s % updateEvery !== 0) continue;
      updateRow(taps, L, ux, uy, n, 0, ex[0], ex[1], mu(s));
      updateRow(taps, L, ux, uy, n, 1, ey[0], ey[1], mu(s));
    }
    return { taps, out };
  }

  for (const [name, rule] of [
    ['CMA', cmaRule('16qam', 1e-2)],
    ['RDE', rdeRule('16qam', 1e-2)],
  ] as const) {
    it(`${name}: outputs, costs and taps equal the unfused kernels exactly, with an annealed step, updating every symbol or every 2nd`, () => {
      const hold = 10;
      const decay = 0.9;
      const mu = (a: number) => (a < hold ? 1e-2 : 1e-2 * decay ** (a - hold));
      for (const every of [1, 2]) {
        const ref = unfused(rule, mu, every);
        const taps = randomTaps(3).map((v) => 0.1 * v);
        const out = new Float64Array(ADAPT_STRIDE * count);
        const r = rule.radial!;
        adaptRadial(taps, L, ux, uy, newest0, count, r.rings2, r.bounds2, 1e-2, decay, hold, 0, every, false, out);
        expect(Array.from(out)).toEqual(Array.from(ref.out));
        expect(Array.from(taps)).toEqual(Array.from(ref.taps));
      }
      const taps2 = randomTaps(3).map((v) => 0.1 * v);
      const out2 = new Float64Array(ADAPT_STRIDE * count);
      const mu2 = (a: number) => (a < hold ? 1e-2 : 1e-2 * decay ** (a - hold));
      // adaptWithRule calls error() and takes a fixed μ: equal to the reference with that μ.
      const ref2 = unfused(rule, () => mu2(0), 2);
      adaptWithRule(
        taps2,
        L,
        ux,
        uy,
        newest0,
        count,
        rule,
        1e-2,
        0,
        2,
        new Float64Array(4),
        new Float64Array(2),
        new Float64Array(2),
        out2,
      );
      expect(Array.from(out2)).toEqual(Array.from(ref2.out));
      expect(Array.from(taps2)).toEqual(Array.from(ref2.taps));
    });
  }
});
