import { describe, expect, it } from 'vitest';
import {
  type ComplexArray,
  estimateOffsetDifferential,
  estimateOffsetPeriodogram,
  type FieldBlock,
  frequencyOffsetRecovery,
  OptionError,
} from '../../src/index.js';
import { carrierSignal, RS } from '../support/carrier-signals.js';

const MODULATIONS = ['qpsk', '16qam', '64qam'] as const;
// Offsets across ±3 GHz, off any FFT grid.
const OFFSETS = [-3e9, -1.7e9, -0.31e9, 0.45e9, 2.2e9, 3e9];

function block(x: ComplexArray, y: ComplexArray): FieldBlock<'symbols'> {
  return { domain: 'symbols', x, y, sampleRate: RS, samplesPerSymbol: 1 };
}

describe('fourth-power periodogram (Selmi, Jaouën, Ciblat, ECOC 2009)', () => {
  // The requirement: within 1 MHz at 32 GBd and Es/N0 = 15 dB for
  // offsets across ±3 GHz. 8192 symbols: the sub-bin search gives a worst
  // error of 0.51 MHz over these cases (0.7 MHz at 4096), so 1 MHz is
  // met with margin while the test stays small. 100 kHz of linewidth, a
  // typical external-cavity pair (common practice), is on the signal.
  for (const modulation of MODULATIONS) {
    it(`is within 1 MHz across ±3 GHz for ${modulation} at Es/N0 = 15 dB`, () => {
      for (const [i, f] of OFFSETS.entries()) {
        const s = carrierSignal({ seed: 10 + i, modulation, symbols: 8192, esN0Db: 15, linewidthHz: 100e3, freqOffsetHz: f });
        const est = estimateOffsetPeriodogram(s.x, s.y, RS);
        expect(Math.abs(est - f), `offset ${f} Hz, estimate ${est} Hz`).toBeLessThan(1e6);
      }
    });
  }

  it('aliases an offset just outside ±Rs/8 by Rs/4, as the fourth power predicts', () => {
    // Range |Δf| < Rs/8 = 4 GHz (DOMAIN.md: fs/(2M), M = 4); 4.5 GHz shows up at 4.5 − 8 = −3.5 GHz.
    for (const f of [4.5e9, -4.5e9]) {
      const s = carrierSignal({ seed: 3, modulation: 'qpsk', symbols: 8192, esN0Db: 15, freqOffsetHz: f });
      const expected = f - Math.sign(f) * (RS / 4);
      expect(Math.abs(estimateOffsetPeriodogram(s.x, s.y, RS) - expected)).toBeLessThan(1e6);
    }
  });

  it('rejects bad input', () => {
    const z = new Float64Array(8) as ComplexArray;
    expect(() => estimateOffsetPeriodogram(new Float64Array(0) as ComplexArray, null, RS)).toThrow(RangeError);
    expect(() => estimateOffsetPeriodogram(z, null, 0)).toThrow(/symbol rate/);
    expect(() => estimateOffsetPeriodogram(z, null, RS, { padding: 3 })).toThrow(/padding/);
  });
});

describe('differential estimator (Leven et al., IEEE PTL 19(6), 2007)', () => {
  // Its variance falls only as 1/N (against 1/N³ for the periodogram), and
  // the fourth power of a product of two noisy QAM symbols is noisy: at
  // 15 dB and 16384 symbols these seeds give worst errors of 9 MHz (QPSK),
  // 42 MHz (16QAM) and 139 MHz (64QAM). The 1 MHz requirement is carried by
  // the periodogram, the stage's default; here the bounds, about 3× the
  // worst error measured, guard the estimator's sign, scale and range.
  const bound = { qpsk: 30e6, '16qam': 150e6, '64qam': 450e6 };
  for (const modulation of MODULATIONS) {
    it(`is within ${bound[modulation] / 1e6} MHz across ±3 GHz for ${modulation} at 15 dB`, () => {
      for (const [i, f] of OFFSETS.entries()) {
        const s = carrierSignal({ seed: 20 + i, modulation, symbols: 16384, esN0Db: 15, linewidthHz: 100e3, freqOffsetHz: f });
        expect(Math.abs(estimateOffsetDifferential(s.x, s.y, RS) - f)).toBeLessThan(bound[modulation]);
      }
    });
  }

  it('aliases by Rs/4 beyond ±Rs/8 too', () => {
    const s = carrierSignal({ seed: 4, modulation: 'qpsk', symbols: 16384, esN0Db: 15, freqOffsetHz: 4.5e9 });
    expect(Math.abs(estimateOffsetDifferential(s.x, s.y, RS) - -3.5e9)).toBeLessThan(bound.qpsk);
  });
});

describe('frequency-offset stage', () => {
  it('estimates on the leading span, removes the offset, and reports it in Hz with the DESIGN.md sign', () => {
    const f = -2.345e9;
    const s = carrierSignal({ seed: 31, modulation: '16qam', symbols: 32768, esN0Db: 15, linewidthHz: 100e3, freqOffsetHz: f });
    const stage = frequencyOffsetRecovery({ estimateSymbols: 8192 });
    const parts: FieldBlock<'symbols'>[] = [];
    for (let at = 0; at < 32768; at += 5000) {
      const end = Math.min(32768, at + 5000);
      parts.push(stage.process(block(s.x.slice(2 * at, 2 * end) as ComplexArray, s.y.slice(2 * at, 2 * end) as ComplexArray)));
    }
    const tail = stage.flush();
    if (tail) parts.push(tail);
    const d = stage.diagnostics();
    expect(d.symbols).toBe(32768);
    expect(d.track).toHaveLength(1);
    expect(d.track[0].symbols).toBe(32768);
    expect(Math.abs(d.freqOffsetHz - f)).toBeLessThan(1e6);
    // What is left on the output: the residual offset, measured again, is the estimation error.
    const outX = new Float64Array(2 * 32768) as ComplexArray;
    const outY = new Float64Array(2 * 32768) as ComplexArray;
    let at = 0;
    for (const p of parts) {
      outX.set(p.x, at);
      outY.set(p.y, at);
      at += p.x.length;
    }
    expect(at).toBe(2 * 32768);
    const residual = estimateOffsetPeriodogram(outX, outY, RS);
    expect(Math.abs(residual)).toBeLessThan(1e6);
    expect(Math.abs(residual + (d.freqOffsetHz - f))).toBeLessThan(0.2e6);
  });

  it('tracks a drifting offset block by block', () => {
    // A linear drift of 8 MHz over 65536 symbols, added on top of the
    // simulator's fixed 1 GHz: the phase gains π·α·n², α the drift in cycles
    // per symbol². Each 8192-symbol segment must be estimated at the offset
    // of its middle within 1 MHz: the drift across one segment (1 MHz, four
    // times that under the fourth power) stays within one periodogram bin
    // (Rs/8192 = 3.9 MHz), so its peak sits at the segment's centre frequency.
    const n = 65536;
    const f0 = 1e9;
    const drift = 8e6;
    const s = carrierSignal({ seed: 41, modulation: 'qpsk', symbols: n, esN0Db: 15, linewidthHz: 100e3, freqOffsetHz: f0 });
    const alpha = drift / RS / n;
    for (const z of [s.x, s.y]) {
      for (let k = 0; k < n; k++) {
        const a = Math.PI * alpha * k * k;
        const c = Math.cos(a);
        const sn = Math.sin(a);
        const re = z[2 * k];
        const im = z[2 * k + 1];
        z[2 * k] = re * c - im * sn;
        z[2 * k + 1] = re * sn + im * c;
      }
    }
    const stage = frequencyOffsetRecovery({ trackingSymbols: 8192 });
    stage.process(block(s.x, s.y));
    stage.flush();
    const { track } = stage.diagnostics();
    expect(track).toHaveLength(8);
    for (const t of track) {
      const mid = t.startSymbol + t.symbols / 2;
      const truth = f0 + (drift * mid) / n;
      expect(Math.abs(t.freqOffsetHz - truth), `segment at ${t.startSymbol}`).toBeLessThan(1e6);
    }
    // The segments really differ: the last is 7 MHz above the first.
    expect(track[7].freqOffsetHz - track[0].freqOffsetHz).toBeGreaterThan(5e6);
  });

  it('validates its options', () => {
    expect(() => frequencyOffsetRecovery({ method: 'fft' as never })).toThrow(OptionError);
    expect(() => frequencyOffsetRecovery({ trackingSymbols: 10 })).toThrow(/trackingSymbols/);
    expect(() => frequencyOffsetRecovery({ trackingSymbols: 1024, estimateSymbols: 1024 })).toThrow(/not both/);
    expect(() => frequencyOffsetRecovery({ estimateSymbols: 4 })).toThrow(/estimateSymbols/);
    expect(() => frequencyOffsetRecovery({ padding: 5 })).toThrow(/padding/);
    expect(() => frequencyOffsetRecovery({ freqOffsetHz: Number.POSITIVE_INFINITY })).toThrow(/freqOffsetHz/);
    expect(() => frequencyOffsetRecovery({ freqOffsetHz: 0, estimateSymbols: 1024 })).toThrow(/freqOffsetHz/);
  });

  it('with a known offset of 0, passes the symbols through from the first block, estimating nothing', () => {
    const x = Float64Array.from([1, 2, 3, 4, 5, 6]) as ComplexArray;
    const y = Float64Array.from([-1, 0.5, 0.25, 2, 0, 1]) as ComplexArray;
    const stage = frequencyOffsetRecovery({ freqOffsetHz: 0 });
    const out = stage.process({ domain: 'symbols', x, y, sampleRate: 32e9, samplesPerSymbol: 1 });
    expect(Array.from(out.x)).toEqual(Array.from(x));
    expect(Array.from(out.y)).toEqual(Array.from(y));
    expect(stage.flush()).toBeNull();
    expect(stage.diagnostics().freqOffsetHz).toBe(0);
    expect(stage.describe().options).toEqual({ freqOffsetHz: 0 });
  });
});
