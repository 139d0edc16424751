import { describe, expect, it } from 'vitest';
import { complexArray, type FieldBlock, OptionError, Resampler, resampleToTwoSps, simulate } from '../../src/index.js';

/** exp(j2πf·n/fs), n = 0 … count − 1. */
function tone(f: number, fs: number, count: number): Float64Array {
  const z = complexArray(count);
  for (let n = 0; n < count; n++) {
    z[2 * n] = Math.cos((2 * Math.PI * f * n) / fs);
    z[2 * n + 1] = Math.sin((2 * Math.PI * f * n) / fs);
  }
  return z;
}

/** Largest |a[n] − b[n]| over n in [from, to). */
function maxError(a: Float64Array, b: Float64Array, from: number, to: number): number {
  let e = 0;
  for (let n = from; n < to; n++) e = Math.max(e, Math.hypot(a[2 * n] - b[2 * n], a[2 * n + 1] - b[2 * n + 1]));
  return e;
}

function run(r: Resampler, x: Float64Array): Float64Array {
  const z = complexArray(x.length >> 1);
  const a = r.process(x as never, z);
  const b = r.flush();
  const out = new Float64Array(a.x.length + b.x.length);
  out.set(a.x);
  out.set(b.x, a.x.length);
  return out;
}

// The stated design: passband |f| ≤ 0.45·min(fs_in, fs_out) with ripple
// δ = 10^(−80/20) = 1e-4, stopband ≥ 0.55·min(fs_in, fs_out) at 80 dB.
// Reference: the band-limited signal's value between samples is the
// continuous tone itself (Shannon's sampling theorem).
describe('Resampler (band-limited interpolation, Smith & Gossett 1984)', () => {
  const edge = 64; // the stream is zero before and after: skip the kernel's reach
  for (const [fin, fout, f] of [
    [80e9, 64e9, 7.3e9],
    [80e9, 64e9, -27.1e9],
    [50e9, 64e9, 19.9e9],
    [64e9, 80e9, 12.34e9],
  ]) {
    it(`${fin / 1e9} → ${fout / 1e9} GSa/s keeps a ${f / 1e9} GHz tone within the passband ripple`, () => {
      const x = tone(f, fin, 4000);
      const y = run(new Resampler(fin, fout), x);
      const n = y.length >> 1;
      expect(n).toBe(Math.ceil((4000 * fout) / fin));
      expect(maxError(y, tone(f, fout, n), edge, n - edge)).toBeLessThan(1e-4);
    });
  }

  it('attenuates the stopband by 80 dB (a 36 GHz tone at 80 → 64 GSa/s)', () => {
    // 36 GHz ≥ 0.55·64 GHz = 35.2 GHz: it would alias to −28 GHz.
    const y = run(new Resampler(80e9, 64e9), tone(36e9, 80e9, 4000));
    let peak = 0;
    for (let n = edge; n < (y.length >> 1) - edge; n++) peak = Math.max(peak, Math.hypot(y[2 * n], y[2 * n + 1]));
    expect(peak).toBeLessThan(1e-4);
  });

  it('round trip 80 → 64 → 80 GSa/s of a 32 GBd capture stays below the −80 dB stopband level', () => {
    const cap = simulate({ seed: 2, modulation: '16qam', symbols: 4096, symbolRate: 32e9, samplesPerSymbol: 2.5 });
    const x = cap.truth.field.x;
    const down = run(new Resampler(80e9, 64e9), x);
    const back = run(new Resampler(64e9, 80e9), down);
    const n = Math.min(back.length, x.length) >> 1;
    let e = 0;
    let p = 0;
    for (let k = 100; k < n - 100; k++) {
      e += (back[2 * k] - x[2 * k]) ** 2 + (back[2 * k + 1] - x[2 * k + 1]) ** 2;
      p += x[2 * k] ** 2 + x[2 * k + 1] ** 2;
    }
    expect(10 * Math.log10(e / p)).toBeLessThan(-80);
  });

  it('rejects bad rates', () => {
    expect(() => new Resampler(0, 64e9)).toThrow(RangeError);
    expect(() => new Resampler(80e9, 64e9, 10)).toThrow(RangeError);
  });
});

describe('resampleToTwoSps', () => {
  it('brings 2.5 samples per symbol to exactly 2, keeping the first sample on the first symbol', () => {
    const cap = simulate({ seed: 4, modulation: 'qpsk', symbols: 1024, symbolRate: 32e9, samplesPerSymbol: 2.5 });
    const block: FieldBlock<'field'> = {
      domain: 'field',
      x: cap.truth.field.x,
      y: cap.truth.field.y,
      sampleRate: 80e9,
      samplesPerSymbol: 2.5,
    };
    const s = resampleToTwoSps();
    const a = s.process(block);
    const b = s.flush()!;
    expect(a.sampleRate).toBe(64e9);
    expect(a.samplesPerSymbol).toBe(2);
    expect((a.x.length + b.x.length) >> 1).toBe(2048);
    expect(s.diagnostics().outputRate).toBe(64e9);
  });

  it('rejects bad options and blocks', () => {
    expect(() => resampleToTwoSps({ symbolRate: -1 })).toThrow(OptionError);
    const s = resampleToTwoSps();
    const z = complexArray(4);
    expect(() => s.process({ domain: 'field', x: z, y: z, sampleRate: 80e9, samplesPerSymbol: Number.NaN })).toThrow(
      /symbolRate/,
    );
  });
});
