import { describe, expect, it } from 'vitest';
import { type ChannelBlock, complexArray, deskewChannels, fft, ifft, OptionError, simulate } from '../../src/index.js';

/**
 * Delay of `out` relative to `ref` (seconds), by least squares on the
 * first-order expansion out(t) ≈ ref(t) − τ·ref′(t) (common practice):
 * τ = −⟨out − ref, ref′⟩/⟨ref′, ref′⟩, ref′ taken exactly in the frequency
 * domain (the capture is periodic). Edges, where the streaming filter sees
 * zeros instead of the periodic signal, are left out.
 */
function delayOf(ref: Float64Array, out: Float64Array, fs: number, edge = 200): number {
  const n = ref.length;
  const z = complexArray(n);
  for (let k = 0; k < n; k++) z[2 * k] = ref[k];
  const Z = fft(z);
  for (let m = 0; m < n; m++) {
    const f = ((m < n / 2 ? m : m - n) * fs) / n;
    const w = 2 * Math.PI * f;
    const re = Z[2 * m];
    Z[2 * m] = -w * Z[2 * m + 1];
    Z[2 * m + 1] = w * re;
  }
  const d = ifft(Z);
  let num = 0;
  let den = 0;
  for (let k = edge; k < n - edge; k++) {
    num += (out[k] - ref[k]) * d[2 * k];
    den += d[2 * k] * d[2 * k];
  }
  return -num / den;
}

const cap = simulate({
  seed: 9,
  modulation: 'qpsk',
  symbols: 8192,
  symbolRate: 32e9,
  samplesPerSymbol: 2,
  receiver: { skewPs: { xq: 5, yi: -3 } },
});
const fs = 64e9;
const block: ChannelBlock = { domain: 'channels', ...cap.channels, samplesPerSymbol: 2 };
const trueQ = new Float64Array(8192 * 2).map((_, k) => cap.truth.field.x[2 * k + 1]);
const trueYi = new Float64Array(8192 * 2).map((_, k) => cap.truth.field.y[2 * k]);

describe('deskewChannels (fractional delay: Laakso et al., IEEE SP Mag. 13(1), 1996)', () => {
  it('the delay measurement sees the 5 ps skew', () => {
    // First-order fit of a 0.32-sample delay: accurate to a few percent.
    expect(Math.abs(delayOf(trueQ, cap.channels.xq, fs) * 1e12 - 5)).toBeLessThan(0.3);
  });

  it('deskew of 5 ps at 64 GSa/s leaves < 0.1 ps', () => {
    const s = deskewChannels({ skewPs: { xq: 5, yi: -3 } });
    const head = s.process(block);
    const tail = s.flush()!;
    const xq = Float64Array.from([...head.xq, ...tail.xq]);
    const yi = Float64Array.from([...head.yi, ...tail.yi]);
    expect(xq.length).toBe(trueQ.length);
    const rq = delayOf(trueQ, xq, fs) * 1e12;
    const ry = delayOf(trueYi, yi, fs) * 1e12;
    expect(Math.abs(rq)).toBeLessThan(0.1);
    expect(Math.abs(ry)).toBeLessThan(0.1);
    // Beyond the delay: the filter is flat to 10^(−80/20) in band, so the
    // deskewed channel matches the true one to better than −60 dB.
    let e = 0;
    let p = 0;
    for (let k = 200; k < xq.length - 200; k++) {
      e += (xq[k] - trueQ[k]) ** 2;
      p += trueQ[k] ** 2;
    }
    expect(10 * Math.log10(e / p)).toBeLessThan(-60);
  });

  it('an integer delay is exact', () => {
    const s = deskewChannels({ skewPs: { xi: 2e12 / 64e9 } }); // two samples at 64 GSa/s
    const v = Float64Array.from({ length: 64 }, (_, k) => Math.sin(k) + k / 10);
    const z = new Float64Array(64);
    const head = s.process({ domain: 'channels', xi: v, xq: z, yi: z, yq: z, sampleRate: 64e9, samplesPerSymbol: 2 });
    const out = Float64Array.from([...head.xi, ...s.flush()!.xi]);
    for (let k = 0; k < 62; k++) expect(out[k]).toBeCloseTo(v[k + 2], 12);
  });

  it('rejects bad options', () => {
    expect(() => deskewChannels({ skewPs: { xq: Number.NaN } })).toThrow(OptionError);
    expect(() => deskewChannels({ skewPs: {}, attenuationDb: 5 })).toThrow(/attenuationDb/);
  });
});
