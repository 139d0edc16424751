import { describe, expect, it } from 'vitest';
import { type ChannelBlock, ChannelSpectraEstimator, OptionError } from '../../src/index.js';

describe('ChannelSpectraEstimator', () => {
  const fs = 64e9;
  const n = 64 * 512;
  // xi: a sine of amplitude 2 on bin 40 of a 512-point segment (5 GHz); xq: zero; yi, yq: constants.
  const f0 = (40 * fs) / 512;
  const block = (from: number, len: number): ChannelBlock => ({
    domain: 'channels',
    xi: Float64Array.from({ length: len }, (_, k) => 2 * Math.cos((2 * Math.PI * f0 * (from + k)) / fs)),
    xq: new Float64Array(len),
    yi: new Float64Array(len).fill(0.5),
    yq: new Float64Array(len).fill(-1),
    sampleRate: fs,
    samplesPerSymbol: Number.NaN,
  });

  it('gives one-sided spectra whose integral is the mean power, peaked at the tone', () => {
    const s = new ChannelSpectraEstimator(fs, 512);
    s.push(block(0, n));
    const r = s.result()!;
    expect(r.frequencyHz.length).toBe(257);
    expect(r.frequencyHz[256]).toBe(fs / 2);
    const power = (p: Float64Array) => p.reduce((a, v) => a + v, 0) * r.resolutionHz;
    // Parseval with Welch's scaling (Welch 1967): Σ P·fs/N is the mean power, A²/2 = 2 for the sine,
    // c² for a constant. A tone on a bin and a constant leak no power out of the segment: rounding only.
    expect(power(r.psd.xi)).toBeCloseTo(2, 9);
    expect(power(r.psd.yi)).toBeCloseTo(0.25, 9);
    expect(power(r.psd.yq)).toBeCloseTo(1, 9);
    expect(power(r.psd.xq)).toBe(0);
    let peak = 0;
    for (let k = 1; k < r.psd.xi.length; k++) if (r.psd.xi[k] > r.psd.xi[peak]) peak = k;
    expect(r.frequencyHz[peak]).toBe(f0);
  });

  it('does not depend on the block sizes, and is null before one segment', () => {
    const a = new ChannelSpectraEstimator(fs, 512);
    a.push(block(0, n));
    const b = new ChannelSpectraEstimator(fs, 512);
    expect(b.result()).toBeNull();
    for (let at = 0; at < n; at += 777) b.push(block(at, Math.min(777, n - at)));
    expect(b.result()).toEqual(a.result());
    expect(() => new ChannelSpectraEstimator(fs, 7)).toThrow(OptionError);
  });
});
