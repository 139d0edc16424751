import { describe, expect, it } from 'vitest';
import {
  binFrequency,
  cdTapCount,
  compensateDispersion,
  dispersionCompensationResponse,
  dispersionPhase,
  OptionError,
  simulate,
} from '../../src/index.js';
import { runAll, snrDb, toTwoSps } from '../support/chain.js';

describe('cdTapCount (Savory, Opt. Express 16(2), 2008; the formula is from memory per DOMAIN.md)', () => {
  it('N = 2⌊|D|λ²z/(2cT²)⌋ + 1, checked by hand', () => {
    // 1,360 ps/nm = 1.36 s/m; (1.55e-6 m)² × (64e9 /s)² × 1.36 / 299,792,458 m/s = 44.64 → 45.
    expect(cdTapCount(1360, 64e9)).toBe(45);
    expect(cdTapCount(-1360, 64e9)).toBe(45);
    // 17,000 ps/nm: 558.0 → 559.
    expect(cdTapCount(17_000, 64e9)).toBe(559);
    expect(cdTapCount(0, 64e9)).toBe(1);
  });
});

describe('compensateDispersion (overlap-save all-pass inverse)', () => {
  it('sign convention: the compensator times the fibre response exp(jφ) is 1', () => {
    const n = 256;
    const g = dispersionCompensationResponse(n, 64e9, 5000);
    for (let k = 0; k < n; k++) {
      const phi = dispersionPhase(binFrequency(k, n, 64e9), 5000);
      const re = g[2 * k] * Math.cos(phi) - g[2 * k + 1] * Math.sin(phi);
      const im = g[2 * k] * Math.sin(phi) + g[2 * k + 1] * Math.cos(phi);
      expect(re).toBeCloseTo(1, 12);
      expect(im).toBeCloseTo(0, 12);
    }
  });

  // 16QAM at Es/N0 16 dB, 16,384 symbols: the SNR estimate has a standard
  // deviation of 4.34/√16384 ≈ 0.03 dB, and both runs share the noise draws.
  const base = { seed: 1, modulation: '16qam' as const, symbols: 16_384, symbolRate: 32e9, samplesPerSymbol: 2.5 };
  const reference = simulate({ ...base, channel: { esN0Db: 16 } });
  const refSnr = snrDb(toTwoSps(reference).x, reference.reference.x, { skip: 300 });

  it('17 ps/(nm·km) × 80 km (G.652, common practice) is compensated to within 0.1 dB of the no-dispersion EVM', () => {
    const cap = simulate({ ...base, channel: { esN0Db: 16, dispersionPsPerNm: 1360 } });
    const stage = compensateDispersion({ fibre: { dispersionPsPerNmKm: 17, lengthKm: 80 } });
    const out = runAll<'twoSps'>(stage, toTwoSps(cap));
    expect(out.x.length).toBe(2 * 2 * 16_384);
    const x = snrDb(out.x, cap.reference.x, { skip: 300 });
    const y = snrDb(out.y, cap.reference.y, { skip: 300 });
    const refY = snrDb(toTwoSps(reference).y, reference.reference.y, { skip: 300 });
    expect(Math.abs(x - refSnr)).toBeLessThan(0.1);
    expect(Math.abs(y - refY)).toBeLessThan(0.1);
    expect(stage.diagnostics().taps).toBe(45);
    // The wrong sign doubles the dispersion instead: the eye is closed.
    const wrong = runAll<'twoSps'>(compensateDispersion({ dispersionPsPerNm: -1360 }), toTwoSps(cap));
    expect(snrDb(wrong.x, cap.reference.x, { skip: 300 })).toBeLessThan(3);
  });

  it('17,000 ps/nm (1,000 km) is compensated to within 0.1 dB as well', () => {
    const cap = simulate({ ...base, channel: { esN0Db: 16, dispersionPsPerNm: 17_000 } });
    const out = runAll<'twoSps'>(compensateDispersion({ dispersionPsPerNm: 17_000 }), toTwoSps(cap));
    // Leave out the first and last 600 symbols: the stream starts and ends in zeros,
    // and the dispersion smears them over 559 samples.
    const x = snrDb(out.x, cap.reference.x, { skip: 600 });
    expect(Math.abs(x - snrDb(toTwoSps(reference).x, reference.reference.x, { skip: 600 }))).toBeLessThan(0.1);
  });

  it('rejects bad options', () => {
    expect(() => compensateDispersion({})).toThrow(OptionError);
    expect(() => compensateDispersion({ dispersionPsPerNm: 1, blind: true })).toThrow(/exactly one/);
    expect(() => compensateDispersion({ fibre: { dispersionPsPerNmKm: 17, lengthKm: -1 } })).toThrow(/lengthKm/);
    expect(() => compensateDispersion({ blind: { samples: 1000 } })).toThrow(/blind.samples/);
    expect(() => compensateDispersion({ dispersionPsPerNm: 1, fftSize: 100 })).toThrow(/fftSize/);
  });
});
