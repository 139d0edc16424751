import { describe, expect, it } from 'vitest';
import { type ChannelBlock, normalizeChannels, OptionError, simulate } from '../../src/index.js';

function asBlock(c: ReturnType<typeof simulate>): ChannelBlock {
  return { domain: 'channels', ...c.channels, samplesPerSymbol: c.samplesPerSymbol };
}

function meanVar(v: Float64Array): [number, number] {
  let s = 0;
  for (const a of v) s += a;
  const m = s / v.length;
  let s2 = 0;
  for (const a of v) s2 += (a - m) * (a - m);
  return [m, s2 / v.length];
}

// 16,384 symbols at 2.5 samples per symbol: 40,960 samples per channel.
const base = {
  seed: 5,
  modulation: '16qam' as const,
  symbols: 16_384,
  symbolRate: 32e9,
  samplesPerSymbol: 2.5,
  channel: { esN0Db: 18 },
};

describe('normalizeChannels', () => {
  it('removes the DC offsets and scales every channel to variance ½', () => {
    const cap = simulate({ ...base, receiver: { dcOffset: { xi: 0.3, yq: -0.2 }, iqGainDb: { x: 2 } } });
    const s = normalizeChannels({ calibrationSamples: 8192 });
    const out = s.process(asBlock(cap));
    expect(out.xi.length).toBe(40_960);
    expect(s.flush()).toBeNull();
    const d = s.diagnostics();
    // The simulator adds dcOffset × (channel rms) as DC; the signal's own sample
    // mean over the 8,192-sample span is ~σ/√(8192/2.5) ≈ 0.017σ, so 0.05σ is about 3 standard deviations.
    expect(Math.abs(d.mean.xi / d.rms.xi - 0.3)).toBeLessThan(0.05);
    expect(Math.abs(d.mean.yq / d.rms.yq + 0.2)).toBeLessThan(0.05);
    expect(Math.abs(d.mean.xq / d.rms.xq)).toBeLessThan(0.05);
    for (const name of ['xi', 'xq', 'yi', 'yq'] as const) {
      const [m, v] = meanVar(out[name]);
      // Statistics come from the first 8,192 samples and apply to all 40,960: the
      // rest of the capture agrees to the same ~0.02σ sampling error (variance to ~3 %).
      expect(Math.abs(m)).toBeLessThan(0.05);
      expect(Math.abs(v - 0.5)).toBeLessThan(0.03);
    }
  });

  it('reports the fraction of samples at the ADC rails, per channel', () => {
    // Loading 0.45: full scale at 2.2 rms, so a few percent of the samples clip.
    const cap = simulate({ ...base, receiver: { adc: { bits: 8, loading: 0.45 }, dcOffset: { yi: 0.5 } } });
    const s = normalizeChannels();
    s.process(asBlock(cap));
    s.flush();
    const d = s.diagnostics();
    for (const name of ['xi', 'xq', 'yi', 'yq'] as const) {
      const truth = cap.truth.clipped[name];
      // Every clipped sample sits on an extreme code; samples that fall inside the
      // extreme codes' bins without clipping add the probability of two bins of
      // width 2·full/256 = 0.017σ next to the rails; with the 0.5σ DC offset the
      // nearer rail is 1.7σ away, where a Gaussian density is < 0.1/σ: < 0.2 % per rail.
      expect(d.clippedFraction[name]).toBeGreaterThanOrEqual(truth);
      expect(d.clippedFraction[name]).toBeLessThan(truth + 4e-3);
    }
    expect(cap.truth.clipped.yi).toBeGreaterThan(0.01);
  });

  it('an unquantized capture shows only its two extreme samples', () => {
    const cap = simulate(base);
    const s = normalizeChannels();
    s.process(asBlock(cap));
    s.flush();
    expect(s.diagnostics().clippedFraction.xi).toBeCloseTo(2 / cap.channels.xi.length, 12);
  });

  it('counts beyond a given full scale', () => {
    const s = normalizeChannels({ fullScale: 1 });
    const v = Float64Array.of(0, 1, -1, 0.5, 2, -0.99, 0, 0);
    s.process({ domain: 'channels', xi: v, xq: v, yi: v, yq: v, sampleRate: 1, samplesPerSymbol: 2 });
    s.flush();
    expect(s.diagnostics().clippedFraction.xi).toBe(3 / 8);
  });

  it('rejects bad options', () => {
    expect(() => normalizeChannels({ calibrationSamples: 1.5 })).toThrow(OptionError);
    expect(() => normalizeChannels({ fullScale: -1 })).toThrow(/fullScale/);
  });
});
