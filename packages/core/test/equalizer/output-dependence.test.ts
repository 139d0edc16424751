import { describe, expect, it } from 'vitest';
import { complexArray, constellation, outputDependence, Rng, separationIndex } from '../../src/index.js';

// The dependence of two equalizer outputs from their lagged fourth-order cumulants: zero when each
// output carries one source, at any SNR; the cumulants of independent sources add (the property that
// makes them a measure of dependence: Comon, Signal Processing 36(3), 1994 — from memory), so a mix
// gives the values derived here for the construction of each case.
const N = 32768;
const c = constellation('16qam');
const kurtosis = c.cmaRadius2;

function sources(seed: number) {
  const rng = new Rng(seed);
  const make = () => {
    const z = complexArray(N);
    for (let k = 0; k < N; k++) {
      const l = rng.integer(c.order);
      z[2 * k] = c.points[2 * l];
      z[2 * k + 1] = c.points[2 * l + 1];
    }
    return z;
  };
  return { a: make(), b: make(), rng };
}

function addNoise(z: Float64Array, snrDb: number, rng: Rng): Float64Array {
  const s = Math.sqrt(10 ** (-snrDb / 10) / 2);
  return z.map((v) => v + s * rng.gaussian());
}

describe('outputDependence', () => {
  it('is near zero for separated outputs at 5 dB and at 25 dB', () => {
    // Sampling spread about 1.7/(|κ − 2|·√N) = 0.014 per cumulant; the largest of nine stays below 0.05.
    for (const snr of [5, 25]) {
      const { a, b, rng } = sources(snr);
      expect(outputDependence(addNoise(a, snr, rng), addNoise(b, snr, rng), N, kurtosis, 2)).toBeLessThan(0.05);
    }
  });

  it('is ½·sin²2φ·ρ² for a unitary mix by φ', () => {
    // x = cos φ·a + sin φ·b, y = −sin φ·a + cos φ·b: cum/((κ−2)P²) = cos²φ·sin²φ + sin²φ·cos²φ.
    const { a, b, rng } = sources(3);
    const phi = Math.PI / 6;
    const x = complexArray(N);
    const y = complexArray(N);
    for (let i = 0; i < 2 * N; i++) {
      x[i] = Math.cos(phi) * a[i] + Math.sin(phi) * b[i];
      y[i] = -Math.sin(phi) * a[i] + Math.cos(phi) * b[i];
    }
    const snr = 15;
    const rho = 1 / (1 + 10 ** (-snr / 10)); // signal fraction S/(S + N)
    const expected = 0.5 * Math.sin(2 * phi) ** 2 * rho * rho;
    const got = outputDependence(addNoise(x, snr, rng), addNoise(y, snr, rng), N, kurtosis, 2);
    expect(Math.abs(got - expected)).toBeLessThan(0.03);
  });

  it('is ¼ for an output sampled between two symbols, where the separation index alone says 0.5', () => {
    // x[k] = (a[k] + a[k−1])/√2: Σ|g|⁴/(Σ|g|²)² = ½ (Shalvi & Weinstein 1990) and the lag-1 cumulant ¼.
    const { a, b } = sources(4);
    const x = complexArray(N);
    for (let k = 1; k < N; k++) {
      x[2 * k] = (a[2 * k] + a[2 * k - 2]) * Math.SQRT1_2;
      x[2 * k + 1] = (a[2 * k + 1] + a[2 * k - 1]) * Math.SQRT1_2;
    }
    let m2 = 0;
    let m4 = 0;
    for (let k = 0; k < N; k++) {
      const p = x[2 * k] ** 2 + x[2 * k + 1] ** 2;
      m2 += p / N;
      m4 += (p * p) / N;
    }
    expect(separationIndex(m2, m4, kurtosis)).toBeCloseTo(0.5, 1);
    expect(Math.abs(outputDependence(x, b, N, kurtosis, 2) - 0.25)).toBeLessThan(0.03);
  });
});
