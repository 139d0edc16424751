import { describe, expect, it } from 'vitest';
import {
  type ComplexArray,
  type Constellation,
  complexArray,
  constellation,
  decide,
  entropyBits,
  MODULATIONS,
  type ModulationName,
  maxwellBoltzmann,
  nearestLabel,
  nuForEntropy,
  parseModulation,
  Rng,
  shapedModulation,
} from '../../src/index.js';

const FORMATS: readonly ModulationName[] = [...MODULATIONS, 'ps-64qam:entropy=4.5', 'ps-256qam:entropy=7'];
const SQUARE: readonly ModulationName[] = ['qpsk', '16qam', '64qam', '256qam', 'ps-64qam:entropy=4.5', 'ps-256qam:entropy=7'];

function hamming(x: number): number {
  let ones = 0;
  for (let v = x; v; v &= v - 1) ones++;
  return ones;
}

function distance(c: Constellation, a: number, b: number): number {
  return Math.hypot(c.points[2 * a] - c.points[2 * b], c.points[2 * a + 1] - c.points[2 * b + 1]);
}

/** Least distance over all pairs, by brute force. */
function bruteMinDistance(c: Constellation): number {
  let least = Number.POSITIVE_INFINITY;
  for (let a = 0; a < c.order; a++) for (let b = a + 1; b < c.order; b++) least = Math.min(least, distance(c, a, b));
  return least;
}

/** Pairs of points at the least distance (to 1e-9 of it). */
function neighbourPairs(c: Constellation): [number, number][] {
  const d = bruteMinDistance(c);
  const pairs: [number, number][] = [];
  for (let a = 0; a < c.order; a++)
    for (let b = a + 1; b < c.order; b++) if (Math.abs(distance(c, a, b) - d) < 1e-9 * d) pairs.push([a, b]);
  return pairs;
}

/** The points at their integer coordinates (odd integers on a lattice), rounded. */
function integerPoints(c: Constellation): [number, number][] {
  const out: [number, number][] = [];
  for (let k = 0; k < c.order; k++) out.push([Math.round(c.points[2 * k] / c.scale), Math.round(c.points[2 * k + 1] / c.scale)]);
  return out;
}

/** Index of the nearest point by exhaustive search. */
function bruteNearest(c: Constellation, re: number, im: number): number {
  let best = -1;
  let least = Number.POSITIVE_INFINITY;
  for (let k = 0; k < c.order; k++) {
    const d = (re - c.points[2 * k]) ** 2 + (im - c.points[2 * k + 1]) ** 2;
    if (d < least) {
      least = d;
      best = k;
    }
  }
  return best;
}

describe('every constellation as a value', () => {
  for (const name of FORMATS) {
    const c = constellation(name);
    it(`${name}: M distinct points, a prior summing to 1, unit average power under it, minDistance by brute force`, () => {
      expect(c.order).toBe(2 ** c.bitsPerSymbol);
      expect(c.points.length).toBe(2 * c.order);
      expect(c.prior.length).toBe(c.order);
      // Distinct: the least distance between two points is positive (and of the order of the grid spacing).
      const dmin = bruteMinDistance(c);
      expect(dmin).toBeGreaterThan(0.05);
      // A probability distribution (definition): non-negative, sums to 1 to rounding.
      let total = 0;
      let power = 0;
      for (let k = 0; k < c.order; k++) {
        expect(c.prior[k]).toBeGreaterThan(0);
        total += c.prior[k];
        power += c.prior[k] * (c.points[2 * k] ** 2 + c.points[2 * k + 1] ** 2);
      }
      expect(Math.abs(total - 1)).toBeLessThan(1e-14);
      // Es = Σ P(aₖ)·|aₖ|² = 1 (the convention of DOMAIN.md: SNR = Es/N0 at unit power).
      expect(Math.abs(power - 1)).toBeLessThan(1e-14);
      expect(Math.abs(c.minDistance - dmin)).toBeLessThan(1e-15);
      // The entropy field is the entropy of the prior (H = −Σ p·log2 p, Shannon 1948).
      let h = 0;
      for (let k = 0; k < c.order; k++) h -= c.prior[k] * Math.log2(c.prior[k]);
      expect(Math.abs(c.entropy - h)).toBeLessThan(1e-12);
    });
  }
});

describe('square QAM: per-axis Gray labels (DOMAIN.md: Gray code per axis)', () => {
  for (const name of SQUARE) {
    const c = constellation(name);
    it(`${name}: the upper half of the bits sets the in-phase level, the lower half the quadrature, and neighbours differ in one bit`, () => {
      const half = c.bitsPerSymbol / 2;
      const L = 2 ** half;
      expect(c.levelsPerAxis).toBe(L);
      // Per axis: the in-phase coordinate depends only on label >> half, the quadrature only on label & (L − 1).
      const byI = new Map<number, number>();
      const byQ = new Map<number, number>();
      for (let k = 0; k < c.order; k++) {
        const i = k >> half;
        const q = k & (L - 1);
        if (!byI.has(i)) byI.set(i, c.points[2 * k]);
        if (!byQ.has(q)) byQ.set(q, c.points[2 * k + 1]);
        expect(c.points[2 * k]).toBe(byI.get(i));
        expect(c.points[2 * k + 1]).toBe(byQ.get(q));
      }
      expect(byI.size).toBe(L);
      expect(byQ.size).toBe(L);
      // Gray: every pair at the least distance differs in exactly one bit; an L × L grid has 2·L·(L − 1) such pairs.
      const pairs = neighbourPairs(c);
      expect(pairs.length).toBe(2 * L * (L - 1));
      for (const [a, b] of pairs) expect(hamming(a ^ b)).toBe(1);
    });
  }
});

describe('cross QAM (32, 128): the cross grid and its quasi-Gray labels', () => {
  // 32QAM is the 6 × 6 grid at odd coordinates without its four corner points, 128QAM the 12 × 12
  // grid without 2 × 2 at each corner (Smith, IEEE Trans. Commun. 23(3), 1975 — from memory).
  for (const [name, side, corner, energy] of [
    ['32qam', 6, 1, 20],
    ['128qam', 12, 2, 82],
  ] as const) {
    const c = constellation(name);
    it(`${name}: the points at integer coordinates are the ${side} × ${side} grid without ${corner} × ${corner} corners`, () => {
      const pts = integerPoints(c);
      // On the lattice: the scaled points are odd integers to rounding.
      for (let k = 0; k < c.order; k++) {
        expect(Math.abs(c.points[2 * k] / c.scale - pts[k][0])).toBeLessThan(1e-12);
        expect(Math.abs(c.points[2 * k + 1] / c.scale - pts[k][1])).toBeLessThan(1e-12);
      }
      const expected = new Set<string>();
      const top = side - 1;
      const cornerFrom = side - 2 * corner; // |x| beyond this lies in a corner band
      for (let x = -top; x <= top; x += 2)
        for (let y = -top; y <= top; y += 2)
          if (!(Math.abs(x) > cornerFrom && Math.abs(y) > cornerFrom)) expected.add(`${x},${y}`);
      expect(expected.size).toBe(c.order);
      expect(new Set(pts.map(([x, y]) => `${x},${y}`))).toEqual(expected);
    });

    it(`${name}: average energy ${energy} at odd-integer coordinates, (31M/32 − 1)·d²/6 with d = 2`, () => {
      let e = 0;
      for (const [x, y] of integerPoints(c)) e += x * x + y * y;
      // Cross QAM energy (31M/32 − 1)·d²/6 (Smith 1975; Proakis, Digital Communications — from memory).
      const formula = (((31 * c.order) / 32 - 1) * 4) / 6;
      expect(e / c.order).toBe(energy);
      expect(Math.abs(formula - energy)).toBeLessThan(1e-12);
      // Unit power: the half spacing is 1/√E (definition of the scale).
      expect(Math.abs(c.scale - 1 / Math.sqrt(energy))).toBeLessThan(1e-15);
      expect(Math.abs(c.minDistance - 2 / Math.sqrt(energy))).toBeLessThan(1e-15);
    });

    it(`${name}: neighbours differ in one bit except across the fold (the rows beyond the rectangle against it)`, () => {
      const pts = integerPoints(c);
      // The folded rows lie above and below the body of the cross: |y| beyond the rectangle's √(M/2)-level half height.
      const bodyTop = Math.sqrt(c.order / 2) - 1;
      const pairs = neighbourPairs(c);
      // 2M − 12·√(M/32) pairs of the cross (horizontal and vertical pairs of the grid, counted by rows).
      expect(pairs.length).toBe(2 * c.order - 12 * Math.sqrt(c.order / 32));
      let seam = 0;
      let multi = 0;
      let bits = 0;
      for (const [a, b] of pairs) {
        const h = hamming(a ^ b);
        bits += h;
        const [ya, yb] = [Math.abs(pts[a][1]), Math.abs(pts[b][1])];
        const acrossSeam = Math.min(ya, yb) === bodyTop && Math.max(ya, yb) === bodyTop + 2;
        if (acrossSeam) seam++;
        if (h > 1) {
          multi++;
          // Inside the body (a Gray rectangle) and inside the folded block (a Gray rectangle turned a
          // quarter) neighbours keep the Gray property: only the seam between them can break it.
          expect(acrossSeam).toBe(true);
        }
      }
      // The seam is √(M/2) columns wide at the top and at the bottom: √(2M) pairs, 8/52 of the pairs of
      // 32QAM and 16/232 of those of 128QAM; cross QAM has no Gray labelling (Smith 1975 — from memory).
      expect(seam).toBe(Math.sqrt(2 * c.order));
      expect(multi).toBeGreaterThan(0);
      expect(multi).toBeLessThanOrEqual(seam);
      expect(bits / pairs.length).toBeGreaterThan(1);
    });
  }

  for (const name of ['32qam', '128qam'] as const)
    it(`${name}: every nearest-neighbour pair differs in at most 2 bits, the 2-bit pairs are the √(2M) seam pairs (quasi-Gray, Smith 1975 — from memory)`, () => {
      const c = constellation(name);
      const pairs = neighbourPairs(c);
      const seam = Math.sqrt(2 * c.order);
      let two = 0;
      let bits = 0;
      for (const [a, b] of pairs) {
        const h = hamming(a ^ b);
        expect(h).toBeLessThanOrEqual(2);
        if (h === 2) two++;
        bits += h;
      }
      expect(two).toBe(seam);
      // Average bits per nearest-neighbour error: 1 + 8/52 (32QAM), 1 + 16/232 (128QAM): the seam's extra bit.
      expect(Math.abs(bits / pairs.length - (1 + seam / pairs.length))).toBeLessThan(1e-15);
    });
});

describe('8QAM: the star of two rings', () => {
  const c = constellation('8qam');
  it('has four points on each of two rings, radius ratio (1 + √3)/√2, inner at 45° + k·90°, outer on the axes', () => {
    // Inner ring at √2 (the points (±1, ±1)), outer at 1 + √3 on the axes: |(1, 1) − (1 + √3, 0)|² = 3 + 1 = 4 =
    // |(1, 1) − (−1, 1)|², so every neighbour distance is 2 (geometry; the star of Proakis, Digital Communications, ch. 4 — from memory).
    expect(c.ringRadii2).toHaveLength(2);
    const radii2 = Array.from({ length: 8 }, (_, k) => c.points[2 * k] ** 2 + c.points[2 * k + 1] ** 2);
    const inner = Math.min(...radii2);
    const outer = Math.max(...radii2);
    expect(Math.abs(Math.sqrt(outer / inner) - (1 + Math.sqrt(3)) / Math.SQRT2)).toBeLessThan(1e-12);
    // Unit power with four points on each ring: (r₁² + r₂²)/2 = 1.
    expect(Math.abs((inner + outer) / 2 - 1)).toBeLessThan(1e-12);
    let onInner = 0;
    for (let k = 0; k < 8; k++) {
      const re = c.points[2 * k];
      const im = c.points[2 * k + 1];
      const r2 = re * re + im * im;
      if (Math.abs(r2 - inner) < 1e-12) {
        onInner++;
        expect(Math.abs(Math.abs(re) - Math.abs(im))).toBeLessThan(1e-15);
      } else {
        expect(Math.abs(r2 - outer)).toBeLessThan(1e-12);
        expect(Math.min(Math.abs(re), Math.abs(im))).toBe(0);
      }
    }
    expect(onInner).toBe(4);
  });

  it("has every point's nearest neighbours at the same distance d_min", () => {
    const dmin = bruteMinDistance(c);
    const counts = new Array<number>(8).fill(0);
    for (const [a, b] of neighbourPairs(c)) {
      counts[a]++;
      counts[b]++;
    }
    for (let k = 0; k < 8; k++) {
      let least = Number.POSITIVE_INFINITY;
      for (let l = 0; l < 8; l++) if (l !== k) least = Math.min(least, distance(c, k, l));
      expect(Math.abs(least - dmin)).toBeLessThan(1e-12);
    }
    // Inner points: two inner and two outer neighbours; outer points: the two inner beside them.
    expect([...counts].sort()).toEqual([2, 2, 2, 2, 4, 4, 4, 4]);
  });
});

describe('nearestLabel and decide are minimum-distance decisions', () => {
  for (const name of FORMATS) {
    const c = constellation(name);
    it(`${name}: equal the exhaustive search on 1e5 random points (near, far outside, and in the corners of the cross)`, () => {
      const rng = new Rng(0x5eed + c.order);
      const n = 100_000;
      const z: ComplexArray = complexArray(n);
      for (let k = 0; k < n; k++) {
        const kind = k % 4;
        if (kind === 0 || kind === 1) {
          // Over the constellation and a little beyond.
          z[2 * k] = 3 * (rng.uniform() * 2 - 1);
          z[2 * k + 1] = 3 * (rng.uniform() * 2 - 1);
        } else if (kind === 2) {
          // Far outside.
          z[2 * k] = 100 * (rng.uniform() * 2 - 1);
          z[2 * k + 1] = 100 * (rng.uniform() * 2 - 1);
        } else {
          // The corner squares of the bounding grid (empty in cross QAM): |x|, |y| between 0.6 and 1.6 of its half width.
          const half = c.levelsPerAxis > 0 ? c.levelsPerAxis * c.scale : 1.5;
          z[2 * k] = (rng.uniform() < 0.5 ? -1 : 1) * half * (0.6 + rng.uniform());
          z[2 * k + 1] = (rng.uniform() < 0.5 ? -1 : 1) * half * (0.6 + rng.uniform());
        }
      }
      const decided = decide(c, z);
      let mismatches = 0;
      for (let k = 0; k < n; k++) {
        const brute = bruteNearest(c, z[2 * k], z[2 * k + 1]);
        if (nearestLabel(c, z[2 * k], z[2 * k + 1]) !== brute || decided[k] !== brute) mismatches++;
      }
      expect(mismatches).toBe(0);
    });
  }
});

describe('Maxwell–Boltzmann shaping (Böcherer, Steiner, Schulte, IEEE Trans. Commun. 63(12), 2015)', () => {
  const energies64 = new Float64Array(64);
  for (let i = 0; i < 8; i++) for (let q = 0; q < 8; q++) energies64[i * 8 + q] = (2 * i - 7) ** 2 + (2 * q - 7) ** 2;

  it('sums to 1 and is uniform at ν = 0', () => {
    const uniform = maxwellBoltzmann(energies64, 0);
    for (const p of uniform) expect(p).toBe(1 / 64);
    for (const nu of [1e-3, 0.05, 0.2, 1, 30]) {
      const p = maxwellBoltzmann(energies64, nu);
      let s = 0;
      for (const v of p) s += v;
      expect(Math.abs(s - 1)).toBeLessThan(1e-14);
      // The ratio of two probabilities is e^(−ν·ΔE) (definition); at ν = 30 the corner's e^(−2880) underflows to 0.
      if (nu <= 1)
        expect(Math.abs(p[0] / p[27] - Math.exp(-nu * (energies64[0] - energies64[27])))).toBeLessThan(1e-12 * (p[0] / p[27]));
    }
  });

  it('nuForEntropy inverts entropyBits(maxwellBoltzmann(…)) to 1e-9 bits', () => {
    const energies256 = new Float64Array(256);
    for (let i = 0; i < 16; i++) for (let q = 0; q < 16; q++) energies256[i * 16 + q] = (2 * i - 15) ** 2 + (2 * q - 15) ** 2;
    for (const [energies, entropies] of [
      [energies64, [2.1, 3, 4, 4.5, 5.5, 5.99, 6]],
      [energies256, [2.5, 5, 7, 7.5, 7.999]],
    ] as const) {
      for (const h of entropies) {
        const nu = nuForEntropy(energies, h);
        expect(nu).toBeGreaterThanOrEqual(0);
        expect(Math.abs(entropyBits(maxwellBoltzmann(energies, nu)) - h)).toBeLessThan(1e-9);
      }
    }
  });

  it('maximizes the entropy at fixed average energy: perturbations keeping Σp and Σp·E lower it', () => {
    // The maximum-entropy distribution under a mean constraint is the exponential family (Cover & Thomas,
    // Elements of Information Theory, ch. 12); H is strictly concave, so every feasible change lowers it.
    const c = constellation('ps-64qam:entropy=4.5');
    const E = Float64Array.from({ length: 64 }, (_, k) => c.points[2 * k] ** 2 + c.points[2 * k + 1] ** 2);
    const p = c.prior;
    const h0 = entropyBits(p);
    const rng = new Rng(12);
    // δₖ = pₖ·vₖ with v orthogonal (plain dot product) to p and to p·E: Σδ = 0 and Σδ·E = 0.
    const dot = (a: Float64Array, b: Float64Array) => a.reduce((s, x, k) => s + x * b[k], 0);
    const u1 = Float64Array.from(p);
    const u2 = Float64Array.from(p, (x, k) => x * E[k]);
    const r12 = dot(u2, u1) / dot(u1, u1);
    for (let k = 0; k < 64; k++) u2[k] -= r12 * u1[k];
    for (let trial = 0; trial < 200; trial++) {
      const v = Float64Array.from({ length: 64 }, () => rng.uniform() * 2 - 1);
      for (const u of [u1, u2]) {
        const r = dot(v, u) / dot(u, u);
        for (let k = 0; k < 64; k++) v[k] -= r * u[k];
      }
      // Scaled so that |vₖ| ≤ 0.5 keeps every probability positive.
      const top = v.reduce((m, x) => Math.max(m, Math.abs(x)), 0);
      const q = Float64Array.from(p, (x, k) => x * (1 + (0.5 * v[k]) / top));
      expect(Math.abs(q.reduce((s, x) => s + x, 0) - 1)).toBeLessThan(1e-14);
      expect(Math.abs(dot(q, E) - dot(p, E))).toBeLessThan(1e-14);
      expect(entropyBits(q)).toBeLessThan(h0 - 1e-6);
    }
  });

  it('PS-64QAM: the prior factorizes into its per-axis marginals (e^(−ν(x² + y²)) = e^(−νx²)·e^(−νy²))', () => {
    const c = constellation('ps-64qam:entropy=4.5');
    const half = 3;
    const pI = new Float64Array(8);
    const pQ = new Float64Array(8);
    for (let k = 0; k < 64; k++) {
      pI[k >> half] += c.prior[k];
      pQ[k & 7] += c.prior[k];
    }
    for (let k = 0; k < 64; k++) expect(Math.abs(pI[k >> half] * pQ[k & 7] - c.prior[k])).toBeLessThan(1e-15);
    // And it is shaped: the inner points are more likely than the corners.
    expect(c.shaped).toBe(true);
    expect(Math.abs(c.entropy - 4.5)).toBeLessThan(1e-9);
  });

  it('rejects entropies out of range with a RangeError', () => {
    // Above log2 M, or not above the entropy of the four innermost points (2 bits): no Maxwell–Boltzmann prior has it.
    for (const name of [
      'ps-64qam:entropy=6.5',
      'ps-64qam:entropy=2',
      'ps-64qam:entropy=1',
      'ps-256qam:entropy=8.1',
      'ps-64qam:nu=-1',
    ])
      expect(() => constellation(name as ModulationName)).toThrow(RangeError);
    expect(() => nuForEntropy(energies64, 6.01)).toThrow(RangeError);
    expect(() => nuForEntropy(energies64, 2)).toThrow(RangeError);
    expect(() => shapedModulation('ps-64qam', { entropy: Number.NaN })).toThrow(RangeError);
    expect(() => parseModulation('ps-64qam:entropy=7')).toThrow(RangeError);
  });

  it("parseModulation canonicalizes 'PS-64QAM:entropy=4.50' to 'ps-64qam:entropy=4.5'", () => {
    expect(parseModulation('PS-64QAM:entropy=4.50')).toBe('ps-64qam:entropy=4.5');
    expect(parseModulation('ps-256qam:ENTROPY=7.0')).toBe('ps-256qam:entropy=7');
    // The same format by either name: one constellation.
    expect(constellation(parseModulation('PS-64QAM:entropy=4.50'))).toBe(constellation('ps-64qam:entropy=4.5'));
  });
});
