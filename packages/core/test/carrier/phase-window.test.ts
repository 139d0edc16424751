import { describe, expect, it } from 'vitest';
import { chooseHalfWindow, optimalWindowLength, Rng } from '../../src/index.js';

// A Wiener phase (random walk, variance σp² per symbol) observed in white noise (variance σn² per
// symbol), averaged over a rectangular window of L = 2N + 1 symbols around each symbol: the model
// behind the window choice of the carrier recovery. Checked here against a Monte Carlo simulation of
// that model, independently of the formula's derivation.

function walkAndObservations(n: number, walk: number, noise: number, seed: number) {
  const rng = new Rng(seed);
  const theta = new Float64Array(n);
  const obs = new Float64Array(n);
  let t = 0;
  for (let k = 0; k < n; k++) {
    if (k > 0) t += Math.sqrt(walk) * rng.gaussian();
    theta[k] = t;
    obs[k] = t + Math.sqrt(noise) * rng.gaussian();
  }
  return { theta, obs };
}

/** The centred moving average of `obs[first], obs[first + every], …` over 2N + 1 of them (shorter at the ends). */
function movingAverage(obs: Float64Array, halfWindow: number, every = 1, first = 0): Float64Array {
  const m = Math.ceil((obs.length - first) / every);
  const out = new Float64Array(m);
  for (let k = 0; k < m; k++) {
    let s = 0;
    let c = 0;
    for (let i = Math.max(0, k - halfWindow); i <= Math.min(m - 1, k + halfWindow); i++) {
      s += obs[first + i * every];
      c++;
    }
    out[k] = s / c;
  }
  return out;
}

describe('the window of least mean-square phase error', () => {
  it('matches a Monte Carlo simulation of the averaged Wiener phase', () => {
    // σn² = 0.05 rad² (16QAM near 12 dB) and σp² = 4e-5 rad² (200 kHz at 32 GBd: 2π·Δν·T).
    const noise = 0.05;
    const walk = 4e-5;
    const { theta, obs } = walkAndObservations(200_000, walk, noise, 1);
    const mse = (n: number) => {
      const est = movingAverage(obs, n);
      let s = 0;
      for (let k = 1000; k < theta.length - 1000; k++) s += (est[k] - theta[k]) ** 2;
      return s / (theta.length - 2000);
    };
    // MSE(L) = σn²/L + σp²(L² − 1)/(12L): each simulated value within 5 % (about 200 independent
    // windows' worth of samples at the longest window: a relative spread near 1/√200·√2 ≈ 10 % at 2σ).
    for (const n of [8, 30, 61, 120]) {
      const L = 2 * n + 1;
      const model = noise / L + (walk * (L * L - 1)) / (12 * L);
      expect(Math.abs(mse(n) / model - 1)).toBeLessThan(0.1);
    }
    // The optimum L* = √(12σn²/σp² − 1) ≈ 122.5: the simulated MSE there is below that at L*/2 and 2L*.
    const best = optimalWindowLength(noise, walk);
    expect(best).toBeCloseTo(Math.sqrt((12 * noise) / walk - 1), 9);
    const nBest = Math.round((best - 1) / 2);
    expect(mse(nBest)).toBeLessThan(mse(Math.round(nBest / 2)));
    expect(mse(nBest)).toBeLessThan(mse(2 * nBest));
    expect(optimalWindowLength(noise, 0)).toBe(Number.POSITIVE_INFINITY);
  });

  it('reads the estimator noise and the walk back from provisional tracks', () => {
    const noise = 0.08;
    const walk = 2e-5;
    const { obs } = walkAndObservations(32_768, walk, noise, 2);
    const n0 = 16;
    const tracks = { all: movingAverage(obs, n0), even: movingAverage(obs, n0, 2, 0), odd: movingAverage(obs, n0, 2, 1) };
    const choice = chooseHalfWindow(tracks, n0);
    expect(choice).not.toBeNull();
    // Sampling spread over 32,768 symbols: a few % for σn² (16,000 independent differences), some 30 %
    // for σp² (about 60 increments at the long lag are independent).
    expect(Math.abs(choice!.estimatorNoise / noise - 1)).toBeLessThan(0.1);
    expect(Math.abs(choice!.phaseWalk / walk - 1)).toBeLessThan(0.5);
    const expected = Math.round((optimalWindowLength(noise, walk) - 1) / 2);
    // √ of the walk's error: the window within about 25 % of the one the true values give.
    expect(Math.abs(choice!.halfWindow / expected - 1)).toBeLessThan(0.3);
    // Too short a track to tell: no choice.
    const short = { all: tracks.all.subarray(0, 100), even: tracks.even, odd: tracks.odd };
    expect(chooseHalfWindow(short, n0)).toBeNull();
  });

  it('does not count a slip of the provisional track as a walk', () => {
    const { obs } = walkAndObservations(32_768, 1e-5, 0.05, 3);
    const n0 = 16;
    const all = movingAverage(obs, n0);
    const slipped = all.slice();
    for (let k = 10_000; k < slipped.length; k++) slipped[k] += Math.PI / 2;
    const even = movingAverage(obs, n0, 2, 0);
    const odd = movingAverage(obs, n0, 2, 1);
    const clean = chooseHalfWindow({ all, even, odd }, n0)!;
    const withSlip = chooseHalfWindow({ all: slipped, even, odd }, n0)!;
    // The increments that straddle the slip carry π/2 more, which folding modulo π/2 removes: the
    // walk comes out the same but for rounding.
    expect(Math.abs(withSlip.phaseWalk / clean.phaseWalk - 1)).toBeLessThan(1e-9);
  });
});
