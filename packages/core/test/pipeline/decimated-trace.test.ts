import { describe, expect, it } from 'vitest';
import { DecimatedTrace, OptionError, PHASE_TRACE_POINTS, viterbiViterbi } from '../../src/index.js';
import { carrierSignal, runSymbols } from '../support/carrier-signals.js';

/** Mean of samples [from, from + n) of v: the definition a trace point must equal. */
const mean = (v: ArrayLike<number>, from: number, n: number) => {
  let s = 0;
  for (let i = from; i < from + n; i++) s += v[i];
  return s / n;
};

describe('DecimatedTrace', () => {
  it('keeps every point while it fits, then halves its resolution, each point the mean of its interval', () => {
    const values = Array.from({ length: 1000 }, (_, i) => Math.sin(i / 7) + i / 100);
    const t = new DecimatedTrace(2, 8);
    for (const v of values) {
      t.add(0, v);
      t.add(1, -2 * v);
      t.step();
    }
    const { every, series } = t.result();
    // 1000 samples in at most 8 points: every doubles 1 → 2 → … → 128 (7 points of 128 fit, the 8th would halve).
    expect(every).toBe(128);
    expect(series[0].length).toBe(Math.floor(1000 / 128));
    for (let i = 0; i < series[0].length; i++) {
      // Pairwise means of means of equal intervals are the interval mean, up to rounding (1e-12 relative).
      expect(series[0][i]).toBeCloseTo(mean(values, i * every, every), 10);
      expect(series[1][i]).toBeCloseTo(-2 * mean(values, i * every, every), 10);
    }
  });

  it('reset returns to the empty trace at the initial resolution', () => {
    const t = new DecimatedTrace(1, 4, 3);
    for (let i = 0; i < 100; i++) {
      t.add(0, i);
      t.step();
    }
    t.reset();
    for (let i = 0; i < 6; i++) {
      t.add(0, i);
      t.step();
    }
    const r = t.result();
    expect(r.every).toBe(3);
    expect(Array.from(r.series[0])).toEqual([1, 4]);
  });

  it('refuses a bad shape with a typed error', () => {
    expect(() => new DecimatedTrace(0, 8)).toThrow(OptionError);
    expect(() => new DecimatedTrace(1, 7)).toThrow(OptionError);
    expect(() => new DecimatedTrace(1, 8, 0)).toThrow(OptionError);
  });
});

describe('the phase stage keeps a decimated phase trace', () => {
  it('whose points are the means of the full phase track, at most PHASE_TRACE_POINTS', () => {
    const s = carrierSignal({ seed: 5, modulation: 'qpsk', symbols: 9000, esN0Db: 14, linewidthHz: 1e6, freqOffsetHz: 0 });
    const st = viterbiViterbi({ modulation: 'qpsk', halfWindow: 6, recordPhase: true });
    runSymbols(st, s.x, s.y, 1000);
    const d = st.diagnostics();
    const full = d.phase!;
    expect(d.phaseTrace.x.length).toBeLessThanOrEqual(PHASE_TRACE_POINTS);
    expect(d.phaseTrace.x.length).toBe(Math.floor(full.x.length / d.phaseTrace.every));
    for (const i of [0, 17, d.phaseTrace.x.length - 1]) {
      expect(d.phaseTrace.x[i]).toBeCloseTo(mean(full.x, i * d.phaseTrace.every, d.phaseTrace.every), 10);
      expect(d.phaseTrace.y[i]).toBeCloseTo(mean(full.y, i * d.phaseTrace.every, d.phaseTrace.every), 10);
    }
  });
});
