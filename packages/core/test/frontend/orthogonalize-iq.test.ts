import { describe, expect, it } from 'vitest';
import {
  type ChannelBlock,
  normalizeChannels,
  OptionError,
  orthogonalizationMatrix,
  orthogonalizeIq,
  pipe,
  simulate,
} from '../../src/index.js';

/** Channel block of a simulated capture. */
function asBlock(c: ReturnType<typeof simulate>): ChannelBlock {
  return { domain: 'channels', ...c.channels, samplesPerSymbol: c.samplesPerSymbol };
}

/**
 * Residual quadrature error, degrees: the output axes I', Q' are regressed
 * (least squares) on the true in-phase and quadrature parts of the field
 * before the front end, I' ≈ α₁I + β₁Q, Q' ≈ α₂I + β₂Q; the residual is the
 * departure of the angle between (α₁, β₁) and (α₂, β₂) from 90°.
 */
function residualDeg(trueField: Float64Array, oi: Float64Array, oq: Float64Array): number {
  let ii = 0;
  let qq = 0;
  let iq = 0;
  let ai = 0;
  let bi = 0;
  let aq = 0;
  let bq = 0;
  for (let k = 0; k < oi.length; k++) {
    const I = trueField[2 * k];
    const Q = trueField[2 * k + 1];
    ii += I * I;
    qq += Q * Q;
    iq += I * Q;
    ai += I * oi[k];
    bi += Q * oi[k];
    aq += I * oq[k];
    bq += Q * oq[k];
  }
  const det = ii * qq - iq * iq;
  const solve = (u: number, v: number): [number, number] => [(qq * u - iq * v) / det, (ii * v - iq * u) / det];
  const [a1, b1] = solve(ai, bi);
  const [a2, b2] = solve(aq, bq);
  const angle = Math.atan2(a1 * b2 - b1 * a2, a1 * a2 + b1 * b2);
  return (angle * 180) / Math.PI - 90;
}

// PRBS15 over exactly one period of symbols (32,767; two bit periods): the
// data's own sample correlation between I and Q is then −1/32,767 (the
// m-sequence autocorrelation at lag 1, Golomb, Shift Register Sequences, 1967),
// so the residual measures the algorithm, not the data (with random bits it
// would be ~1/√N ≈ 0.3°). Es/N0 20 dB: the noise adds about 0.02° (√(σ²/N)).
const capture = simulate({
  seed: 3,
  modulation: 'qpsk',
  symbols: 32_767,
  symbolRate: 32e9,
  samplesPerSymbol: 2,
  source: { kind: 'prbs', order: 15 },
  channel: { esN0Db: 20 },
  receiver: { iqPhaseDeg: { x: 10, y: -10 }, iqGainDb: { x: 1, y: -0.5 } },
});

describe('orthogonalizeIq (Fatadin, Savory & Ives, IEEE PTL 20(20), 2008)', () => {
  it('the measurement sees the 10° imbalance when nothing corrects it', () => {
    const s = normalizeChannels();
    // Held back: the default calibration span (65,536) is longer than the capture (65,534).
    expect(s.process(asBlock(capture)).xi.length).toBe(0);
    const out = s.flush()!;
    expect(Math.abs(residualDeg(capture.truth.field.x, out.xi, out.xq) + 10)).toBeLessThan(0.1);
  });

  for (const method of ['gsop', 'lowdin'] as const) {
    it(`${method}: a 10° phase imbalance leaves < 0.1° residual`, () => {
      const chain = pipe(normalizeChannels(), orthogonalizeIq({ method }));
      const head = chain.process(asBlock(capture));
      const out = chain.flush()!;
      expect(head.xi.length + out.xi.length).toBe(capture.channels.xi.length);
      const rx = residualDeg(capture.truth.field.x, out.xi, out.xq);
      const ry = residualDeg(capture.truth.field.y, out.yi, out.yq);
      expect(Math.abs(rx)).toBeLessThan(0.1);
      expect(Math.abs(ry)).toBeLessThan(0.1);
    });
  }

  it('estimates the phase and gain imbalance of the receiver model Q′ = g·(Q·cos φ + I·sin φ)', () => {
    const s = orthogonalizeIq();
    s.process(asBlock(capture));
    s.flush();
    const d = s.diagnostics();
    // Here the noise is not part of the truth: its correlation with the signal,
    // (⟨n_I, Q⟩ + ⟨I, n_Q⟩)/(N·P), has a standard deviation of about 0.045° (and
    // ≈ 0.01 dB on the gain) at Es/N0 20 dB and N = 65,534: 0.2° and 0.05 dB are 4σ or more.
    expect(Math.abs(d.x!.phaseErrorDeg - 10)).toBeLessThan(0.2);
    expect(Math.abs(d.y!.phaseErrorDeg + 10)).toBeLessThan(0.2);
    expect(Math.abs(d.x!.gainDb - 1)).toBeLessThan(0.05);
    expect(Math.abs(d.y!.gainDb + 0.5)).toBeLessThan(0.05);
  });

  it('GSOP keeps I as the reference axis; Löwdin is symmetric', () => {
    const g = orthogonalizationMatrix('gsop', 1, 1, 0.2);
    expect(g[1]).toBe(0);
    const l = orthogonalizationMatrix('lowdin', 1, 1, 0.2);
    expect(l[1]).toBeCloseTo(l[2], 15);
    // S^(−1/2)·S·S^(−1/2) = 1: the Löwdin outputs have unit correlation matrix.
    const [a, b] = l;
    expect(a * a + 2 * 0.2 * a * b + b * b).toBeCloseTo(1, 14);
    expect(a * b + 0.2 * (a * a + b * b) + a * b).toBeCloseTo(0, 14);
  });

  it('rejects bad options', () => {
    expect(() => orthogonalizeIq({ method: 'qr' as never })).toThrow(OptionError);
    expect(() => orthogonalizeIq({ calibrationSamples: 0 })).toThrow(/calibrationSamples/);
  });
});
