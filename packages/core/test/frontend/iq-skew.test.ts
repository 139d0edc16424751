import { describe, expect, it } from 'vitest';
import {
  type CompensateDispersionDiagnostics,
  type ComplexArray,
  compensateDispersion,
  complexArray,
  estimateIqSkew,
  fieldBlock,
  MIN_TIMING_LINE,
  Rng,
  simulate,
} from '../../src/index.js';
import { runAll } from '../support/chain.js';

// The receiver's I/Q skew from the timing of each rail, against the skew the simulator put on the
// channels (a delay of the channel's samples: ReceiverOptions.skewPs).
function skewOf(skewPs: { xq?: number; yi?: number; yq?: number }, dispersionPsPerNm: number, seed: number) {
  const N = 65536;
  const cap = simulate({
    seed,
    modulation: '16qam',
    symbols: N,
    symbolRate: 32e9,
    samplesPerSymbol: 2,
    channel: { esN0Db: 16.5, sop: 'random', dgdPs: 10, dispersionPsPerNm, linewidthHz: 100e3, freqOffsetHz: 1e9 },
    receiver: { skewPs, iqPhaseDeg: { x: 4, y: 4 } },
  });
  const x = complexArray(2 * N);
  const y = complexArray(2 * N);
  const { xi, xq, yi, yq } = cap.channels;
  for (let k = 0; k < 2 * N; k++) {
    x[2 * k] = xi[k];
    x[2 * k + 1] = xq[k];
    y[2 * k] = yi[k];
    y[2 * k + 1] = yq[k];
  }
  const stage = compensateDispersion({ dispersionPsPerNm, iqSkew: 'estimate' });
  const out = runAll<'twoSps'>(stage, fieldBlock('twoSps', x as ComplexArray, y as ComplexArray, 64e9, 2));
  return { d: stage.diagnostics() as CompensateDispersionDiagnostics, samples: out.x.length >> 1 };
}

describe('blind I/Q skew', () => {
  it('finds Q against I within 0.5 ps without dispersion and within 1 ps at 1,360 ps/nm', () => {
    // Measured spread over seeds: ±0.3 ps without dispersion, ±0.7 ps with 1,360 ps/nm (the rail's
    // image, dispersed twice, adds noise to the timing line).
    const plain = skewOf({ xq: 3, yi: -2 }, 0, 1);
    expect(Math.abs(plain.d.iqSkew!.xPs - 3)).toBeLessThan(0.5);
    expect(Math.abs(plain.d.iqSkew!.yPs - 2)).toBeLessThan(0.5);
    expect(plain.samples).toBe(2 * 65536);
    const dispersed = skewOf({ xq: 3, yq: -1 }, 1360, 2);
    expect(Math.abs(dispersed.d.iqSkew!.xPs - 3)).toBeLessThan(1);
    expect(Math.abs(dispersed.d.iqSkew!.yPs + 1)).toBeLessThan(1);
  });

  it('gives no skew from rails without a timing line (noise alone), and says how faint the lines were', () => {
    const rng = new Rng(4);
    const n = 65536;
    const x = complexArray(n);
    const y = complexArray(n);
    for (let i = 0; i < 2 * n; i++) {
      x[i] = rng.gaussian();
      y[i] = rng.gaussian();
    }
    const e = estimateIqSkew({ x, y }, 32e9, (f) => f);
    // White noise has no line at 1/T: its strength is the sampling spread, about 1/√n.
    expect(e.strengthX).toBeLessThan(MIN_TIMING_LINE);
    expect(Number.isNaN(e.xPs)).toBe(true);
    expect(Number.isNaN(e.yPs)).toBe(true);
  });

  it('shrinks a skew measured within its noise towards zero, and removes a large one whole', () => {
    // No skew on the channels: every capture's measured delay is noise. The removed delay is the
    // measured one times max(0, 1 − s²/τ̂²) (positive-part James–Stein), so it is never larger than
    // the measured one and is zero whenever the measurement is within one standard error of zero.
    for (const seed of [61, 62, 63]) {
      const { d } = skewOf({}, 0, seed);
      const e = d.iqSkew!;
      for (const [tau, se] of [
        [e.xPs, e.xStandardErrorPs],
        [e.yPs, e.yStandardErrorPs],
      ]) {
        expect(se).toBeGreaterThan(0);
        // A 3 ps skew is ten or more standard errors: the noise of this span is well under 0.3 ps.
        expect(se).toBeLessThan(0.3);
        // What is left of pure noise: at most a few standard errors (the shrinkage only ever reduces it).
        expect(Math.abs(tau)).toBeLessThan(4 * se);
      }
    }
    const big = skewOf({ xq: 3 }, 0, 64).d.iqSkew!;
    // Shrinking by s²/τ̂² at τ̂ ≈ 3 ps and s < 0.3 ps moves it by under 1 %.
    expect(Math.abs(big.xPs - 3)).toBeLessThan(0.5);
  });
});
