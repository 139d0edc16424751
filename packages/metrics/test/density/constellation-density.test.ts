import { complexArray, constellation, OptionError } from '@intradyne/core';
import { describe, expect, it } from 'vitest';
import { ConstellationDensity } from '../../src/index.js';

describe('ConstellationDensity', () => {
  const c = constellation('16qam');
  // A stream: 100 leading and 30 trailing symbols far outside the grid, 1,000 on the constellation points between.
  const lead = 100;
  const trail = 30;
  const middle = 1000;
  const n = lead + middle + trail;
  const x = complexArray(n);
  const y = complexArray(n);
  for (let k = 0; k < n; k++) {
    const inside = k >= lead && k < lead + middle;
    const p = k % 16;
    x[2 * k] = inside ? c.points[2 * p] : 50;
    x[2 * k + 1] = inside ? c.points[2 * p + 1] : 50;
    y[2 * k] = inside ? -c.points[2 * p] : -50;
    y[2 * k + 1] = inside ? c.points[2 * p + 1] : 50;
  }
  const run = (block: number) => {
    const d = new ConstellationDensity('16qam', { bins: 40, skipLeading: lead, skipTrailing: trail });
    for (let at = 0; at < n; at += block)
      d.push({ x: x.subarray(2 * at, 2 * Math.min(n, at + block)), y: y.subarray(2 * at, 2 * Math.min(n, at + block)) });
    return d.result();
  };

  it('counts exactly the symbols between the leading and trailing ones left out, whatever the block sizes', () => {
    const whole = run(n);
    expect(whole.counted).toBe(middle);
    expect(whole.outside).toEqual({ x: 0, y: 0 });
    expect(whole.x.reduce((a, b) => a + b, 0)).toBe(middle);
    for (const block of [1, 7, 64, 999]) expect(run(block)).toEqual(whole);
  });

  it('puts a symbol on a constellation point in the cell that holds it', () => {
    const h = run(n);
    // 16QAM's outer coordinate is 3/√10 (Proakis, square QAM at unit average power): the grid reaches 1.5 times it.
    expect(h.extent).toBeCloseTo(1.5 * (3 / Math.sqrt(10)), 12);
    const w = (2 * h.extent) / h.bins;
    for (let p = 0; p < 16; p++) {
      const col = Math.floor((c.points[2 * p] + h.extent) / w);
      const row = Math.floor((c.points[2 * p + 1] + h.extent) / w);
      // Each point is sent 1000/16 = 62 or 63 times.
      expect(h.x[row * h.bins + col]).toBeGreaterThanOrEqual(62);
    }
    // Sixteen occupied cells per polarization, nothing else.
    expect(h.x.filter((v) => v > 0).length).toBe(16);
    expect(h.y.filter((v) => v > 0).length).toBe(16);
  });

  it('refuses a bad grid with a typed error', () => {
    expect(() => new ConstellationDensity('qpsk', { bins: 4 })).toThrow(OptionError);
    expect(() => new ConstellationDensity('qpsk', { skipTrailing: -1 })).toThrow(OptionError);
  });
});
