import { describe, expect, it } from 'vitest';
import {
  BlindPhaseSearchKernel,
  blindPhaseSearch,
  type ComplexArray,
  complexArray,
  constellation,
  estimateOffsetPeriodogram,
  JointPhaseTracker,
  relativePhase,
  SeparatePhaseKernels,
} from '../../src/index.js';
import { carrierSignal, RS } from '../support/carrier-signals.js';
import { runAll } from '../support/chain.js';

/** y turned by e^(jΔ): the phase offset of its own that a blind equalizer leaves on an output. */
function turn(z: ComplexArray, delta: number): ComplexArray {
  const out = complexArray(z.length >> 1);
  const c = Math.cos(delta);
  const s = Math.sin(delta);
  for (let i = 0; i < z.length; i += 2) {
    out[i] = z[i] * c - z[i + 1] * s;
    out[i + 1] = z[i] * s + z[i + 1] * c;
  }
  return out;
}

/** Quarter-turn jumps of a phase track relative to the true carrier phase (zero here). */
function slips(theta: Float64Array): number {
  let q = Math.round(theta[0] / (Math.PI / 2));
  let n = 0;
  for (const t of theta) {
    const k = Math.round(t / (Math.PI / 2));
    if (k !== q) {
      n++;
      q = k;
    }
  }
  return n;
}

describe('one carrier phase for both polarizations', () => {
  it('finds the phase offset of y relative to x from the fourth power of their products', () => {
    const s = carrierSignal({ seed: 1, modulation: '16qam', symbols: 16384, esN0Db: 14 });
    for (const delta of [-0.6, 0.1, 0.35]) {
      // Modulo π/2: within (−π/4, π/4]. Sampling spread over 16,384 symbols at 14 dB about 0.01 rad.
      expect(Math.abs(relativePhase(s.x, turn(s.y, delta)) - delta)).toBeLessThan(0.03);
    }
  });

  it('halves the variance of the phase error against separate estimates over the same window', () => {
    // Pfau, Hoffmann, Noé (JLT 27(8), 2009): the estimate averages the distances of 2N + 1 symbols; two
    // polarizations at one phase give twice the symbols. 16QAM at 16 dB, no phase noise, y turned by 0.3.
    const s = carrierSignal({ seed: 2, modulation: '16qam', symbols: 65536, esN0Db: 16 });
    const y = turn(s.y, 0.3);
    const c = constellation('16qam');
    const run = (kernel: JointPhaseTracker | SeparatePhaseKernels) => {
      const out = new Float64Array(2);
      const errors: number[] = [];
      const n = s.x.length >> 1;
      for (let k = 0; k < n + kernel.delay; k++) {
        const p = k < n;
        if (kernel.push(p ? s.x[2 * k] : 0, p ? s.x[2 * k + 1] : 0, p ? y[2 * k] : 0, p ? y[2 * k + 1] : 0, p, out))
          errors.push(out[0] - (Math.PI / 2) * Math.round(out[0] / (Math.PI / 2)));
      }
      return errors.reduce((a, e) => a + e * e, 0) / errors.length;
    };
    const opts = { testPhases: 64, halfWindow: 8 };
    const joint = run(new JointPhaseTracker(new BlindPhaseSearchKernel(c, opts), c, relativePhase(s.x, y)));
    const separate = run(new SeparatePhaseKernels(new BlindPhaseSearchKernel(c, opts), new BlindPhaseSearchKernel(c, opts)));
    // Ratio 0.5 from the doubled symbols; the test phases' quantization (π/256 with 64 phases, a
    // variance of 1.3e-5 rad² against about 1e-3 here) and the spread over 65,536 symbols keep it
    // within 0.4 … 0.65.
    expect(joint / separate).toBeGreaterThan(0.4);
    expect(joint / separate).toBeLessThan(0.65);
  });

  it('holds without a slip where separate estimates over a fixed window slip (16QAM at 12 dB, no phase noise)', () => {
    // Theory BER 2.8e-2 (Cho & Yoon 2002). 2^17 symbols; y turned by 0.4 rad.
    const s = carrierSignal({ seed: 3, modulation: '16qam', symbols: 2 ** 17, esN0Db: 12 });
    const y = turn(s.y, 0.4);
    const block = { domain: 'symbols' as const, x: s.x, y, sampleRate: RS, samplesPerSymbol: 1 };
    const auto = blindPhaseSearch({ modulation: '16qam', halfWindow: 'auto', polarizations: 'joint', recordPhase: true });
    runAll(auto, block);
    const d = auto.diagnostics();
    expect(slips(d.phase!.x)).toBe(0);
    expect(d.window.choice).toBe('auto');
    expect(d.window.halfWindow).toBeGreaterThan(100);
    expect(Math.abs((d.relativePhaseRad ?? Number.NaN) - 0.4)).toBeLessThan(0.03);
    const fixed = blindPhaseSearch({ modulation: '16qam', halfWindow: 12, recordPhase: true });
    runAll(fixed, block);
    expect(slips(fixed.diagnostics().phase!.x)).toBeGreaterThan(0);
  });
});

describe('the coarse frequency offset at every polarization state', () => {
  it('finds the offset where the fourth powers of x and y alone both fade', () => {
    // x = α·a₁ + β·a₂ with |α| = |β| and arg(α/β) = π/4: E x⁴ ∝ α⁴ + β⁴ = 0, and E y⁴ likewise.
    const s = carrierSignal({ seed: 4, modulation: 'qpsk', symbols: 8192, esN0Db: 15, freqOffsetHz: 1.3e9 });
    const a = Math.SQRT1_2;
    const alpha = { re: a * Math.cos(Math.PI / 8), im: a * Math.sin(Math.PI / 8) };
    const beta = { re: a * Math.cos(-Math.PI / 8), im: a * Math.sin(-Math.PI / 8) };
    const n = s.x.length >> 1;
    const x = complexArray(n);
    const y = complexArray(n);
    const mul = (p: { re: number; im: number }, z: ComplexArray, k: number) => [
      p.re * z[2 * k] - p.im * z[2 * k + 1],
      p.re * z[2 * k + 1] + p.im * z[2 * k],
    ];
    for (let k = 0; k < n; k++) {
      // [x; y] = [α β; −β* α*]·[a₁; a₂], a unitary mix.
      const [p1r, p1i] = mul(alpha, s.x, k);
      const [p2r, p2i] = mul(beta, s.y, k);
      const [q1r, q1i] = mul({ re: -beta.re, im: beta.im }, s.x, k);
      const [q2r, q2i] = mul({ re: alpha.re, im: -alpha.im }, s.y, k);
      x[2 * k] = p1r + p2r;
      x[2 * k + 1] = p1i + p2i;
      y[2 * k] = q1r + q2r;
      y[2 * k + 1] = q1i + q2i;
    }
    // Within 1 MHz, as for the identity state (the estimator's requirement at 15 dB), where either
    // polarization's fourth power alone locks on noise hundreds of MHz away.
    expect(Math.abs(estimateOffsetPeriodogram(x, y, RS) - 1.3e9)).toBeLessThan(1e6);
    expect(Math.abs(estimateOffsetPeriodogram(x, null, RS) - 1.3e9)).toBeGreaterThan(100e6);
  });
});
