import { createHash } from 'node:crypto';
import {
  type ChannelBlock,
  type SimulatedCapture,
  type SimulationOptions,
  simulate,
  sliceBlock,
  sliceComplex,
} from '@intradyne/core';
import { describe, expect, it } from 'vitest';
import { type AnalysisResult, analyzeCapture, snrForBer } from '../../src/index.js';

// The default receiver against theory, on the simulator's captures at 32 GBd
// with a random SOP, 10 ps DGD and a ±2 GHz carrier offset. Each capture is
// set to the Es/N0 at which theory gives BER 1e-3 (Cho & Yoon, IEEE Trans.
// Commun. 2002; DOMAIN.md: 9.80 dB QPSK, 16.54 dB 16QAM, 22.55 dB 64QAM),
// and the penalty is that Es/N0 minus the Es/N0 theory needs for the BER the
// receiver measured. 2^17 symbols per polarization give about 500 (QPSK) to
// 1,500 (64QAM) bit errors, so the measured BER has a relative standard
// deviation of 3–5 %, about ±0.03 dB of penalty.
const SYMBOLS = 2 ** 17;

function blockOf(cap: SimulatedCapture): ChannelBlock {
  return { domain: 'channels', ...cap.channels, samplesPerSymbol: cap.samplesPerSymbol };
}

function run(options: SimulationOptions, settings: Partial<Parameters<typeof analyzeCapture>[1]> = {}) {
  const cap = simulate(options);
  const result = analyzeCapture(
    [blockOf(cap)],
    { modulation: options.modulation, symbolRate: options.symbolRate, sampleRate: cap.channels.sampleRate, ...settings },
    cap.reference,
  );
  return { cap, result };
}

function penaltyAtSetSnr(result: AnalysisResult, setEsN0Db: number): number {
  expect(result.ok, result.failure?.reason).toBe(true);
  const m = result.measurement!;
  const penalty = setEsN0Db - snrForBer(m.modulation, m.ber);
  if (process.env.INTRADYNE_REPORT)
    console.log(`${m.modulation}: BER ${m.ber.toExponential(3)}, penalty ${penalty.toFixed(3)} dB`);
  return penalty;
}

const link = { sop: 'random' as const, dgdPs: 10 };

describe('default receiver against theory', () => {
  it('DP-QPSK at 200 kHz: penalty ≤ 0.2 dB at the SNR of BER 1e-3', () => {
    expect(snrForBer('qpsk', 1e-3)).toBeCloseTo(9.8, 2); // DOMAIN.md check value
    const es = snrForBer('qpsk', 1e-3);
    const { result } = run(
      {
        seed: 71,
        modulation: 'qpsk',
        symbols: SYMBOLS,
        symbolRate: 32e9,
        samplesPerSymbol: 2,
        channel: { ...link, esN0Db: es, linewidthHz: 200e3, freqOffsetHz: 2e9 },
      },
      { dispersionPsPerNm: 0 },
    );
    expect(penaltyAtSetSnr(result, es)).toBeLessThan(0.2);
    expect(result.freqOffsetHz).toBeGreaterThan(2e9 - 1e6);
    expect(result.freqOffsetHz).toBeLessThan(2e9 + 1e6);
    expect(result.cycleSlips.count).toBe(0);
    // The linewidth diagnostic reaches the result. At 9.8 dB the estimator's own
    // noise biases it upwards (measured +10 %); its 10 % accuracy is checked at
    // 15 dB in the carrier-recovery tests, so only a sanity bound here.
    expect(Math.abs(result.linewidthHz / 200e3 - 1)).toBeLessThan(0.25);
  });

  it('DP-16QAM at 200 kHz from a 2.5 samples-per-symbol capture: penalty ≤ 0.3 dB', () => {
    const es = snrForBer('16qam', 1e-3);
    expect(es).toBeCloseTo(16.54, 2);
    const { result } = run(
      {
        seed: 72,
        modulation: '16qam',
        symbols: SYMBOLS,
        symbolRate: 32e9,
        samplesPerSymbol: 2.5,
        channel: { ...link, esN0Db: es, linewidthHz: 200e3, freqOffsetHz: -2e9 },
      },
      { dispersionPsPerNm: 0 },
    );
    expect(penaltyAtSetSnr(result, es)).toBeLessThan(0.3);
    expect(Math.abs(result.freqOffsetHz + 2e9)).toBeLessThan(1e6);
  });

  it('DP-16QAM with 1,360 ps/nm (estimated blindly), 5° IQ phase error and 3 ps skew: penalty ≤ 0.5 dB', () => {
    const es = snrForBer('16qam', 1e-3);
    const skewPs = { xq: 3, yq: 3 };
    const { result } = run(
      {
        seed: 73,
        modulation: '16qam',
        symbols: SYMBOLS,
        symbolRate: 32e9,
        samplesPerSymbol: 2.5,
        // 17 ps/(nm·km) × 80 km (G.652 value, common practice).
        channel: { ...link, esN0Db: es, linewidthHz: 200e3, freqOffsetHz: 2e9, dispersionPsPerNm: 1360 },
        receiver: { iqPhaseDeg: { x: 5, y: 5 }, skewPs },
      },
      // The receiver's skews come from its calibration (the descriptor); the dispersion is not given.
      { skewPs },
    );
    expect(penaltyAtSetSnr(result, es)).toBeLessThan(0.5);
    const cd = result.diagnostics.dispersion as { dispersionPsPerNm: number; estimated: boolean };
    expect(cd.estimated).toBe(true);
    expect(Math.abs(cd.dispersionPsPerNm - 1360)).toBeLessThan(50);
  });

  it('DP-64QAM at 50 kHz: penalty ≤ 0.7 dB', () => {
    const es = snrForBer('64qam', 1e-3);
    expect(es).toBeCloseTo(22.55, 1);
    const { result } = run(
      {
        seed: 74,
        modulation: '64qam',
        symbols: SYMBOLS,
        symbolRate: 32e9,
        samplesPerSymbol: 2,
        channel: { ...link, esN0Db: es, linewidthHz: 50e3, freqOffsetHz: 2e9 },
      },
      { dispersionPsPerNm: 0 },
    );
    expect(penaltyAtSetSnr(result, es)).toBeLessThan(0.7);
    expect(result.implementationPenaltyDb).not.toBeNull();
  });
});

describe('default receiver: explicit failures and streaming', () => {
  const base = { symbols: 32768, symbolRate: 32e9, samplesPerSymbol: 2 } as const;
  const channel = { sop: 'random' as const, freqOffsetHz: 1e9, linewidthHz: 100e3 };

  it('flags a capture analysed with the wrong modulation, and reports no figures', () => {
    // QPSK whose reference sits on the corner points of 16QAM: only the
    // fourth-moment check can tell (DOMAIN.md: E|a|⁴ = 1 for QPSK, 1.32 for 16QAM).
    const { result } = run(
      { ...base, seed: 9, modulation: 'qpsk', channel: { ...channel, esN0Db: 14 } },
      { modulation: '16qam', dispersionPsPerNm: 0 },
    );
    expect(result.ok).toBe(false);
    expect(result.failure?.check).toBe('modulation');
    expect(result.measurement).toBeNull();
    expect(result.failure?.reason).toMatch(/do not fit 16qam/);
    const other = run(
      { ...base, seed: 9, modulation: '64qam', channel: { ...channel, esN0Db: 26 } },
      { modulation: '16qam', dispersionPsPerNm: 0 },
    );
    expect(other.result.ok).toBe(false);
    expect(other.result.measurement).toBeNull();
  });

  it('says when the reference cannot be found', () => {
    const cap = simulate({ ...base, seed: 10, modulation: '16qam', channel: { ...channel, esN0Db: 20 } });
    const unrelated = simulate({ ...base, seed: 11, modulation: '16qam' }).reference;
    const result = analyzeCapture(
      [blockOf(cap)],
      { modulation: '16qam', symbolRate: 32e9, sampleRate: 64e9, dispersionPsPerNm: 0 },
      unrelated,
    );
    expect(result.ok).toBe(false);
    expect(result.failure?.check).toBe('reference');
    expect(result.measurement).toBeNull();
    // The right reference with one symbol moved off its point (0.3 of the level spacing 2/√10): the
    // same check fails, naming the symbol.
    const moved = { x: sliceComplex(cap.reference.x, 0, cap.reference.x.length >> 1), y: cap.reference.y };
    moved.x[2 * 100] += 0.3 * (2 / Math.sqrt(10));
    const notPoints = analyzeCapture(
      [blockOf(cap)],
      { modulation: '16qam', symbolRate: 32e9, sampleRate: 64e9, dispersionPsPerNm: 0 },
      moved,
    );
    expect(notPoints.failure?.check).toBe('reference');
    expect(notPoints.failure?.reason).toMatch(/reference symbol 100 .* is not a 16qam point/);
  });

  it('gives identical metrics for the capture in 1, 7 and 1,000 blocks, with a full reproducibility record', () => {
    const cap = simulate({
      ...base,
      seed: 12,
      modulation: '16qam',
      samplesPerSymbol: 2.5,
      channel: { ...channel, esN0Db: 18, dgdPs: 10 },
    });
    const whole = blockOf(cap);
    const n = whole.xi.length;
    const split = (parts: number): ChannelBlock[] => {
      const out: ChannelBlock[] = [];
      for (let p = 0; p < parts; p++) out.push(sliceBlock(whole, Math.floor((p * n) / parts), Math.floor(((p + 1) * n) / parts)));
      return out;
    };
    const settings = { modulation: '16qam' as const, symbolRate: 32e9, sampleRate: 80e9 };
    const one = analyzeCapture([whole], settings, cap.reference);
    expect(one.ok, one.failure?.reason).toBe(true);
    for (const parts of [7, 1000]) {
      const r = analyzeCapture(split(parts), settings, cap.reference);
      expect(r.measurement).toEqual(one.measurement);
      expect(r.freqOffsetHz).toBe(one.freqOffsetHz);
      expect(r.record.inputSha256).toBe(one.record.inputSha256);
    }
    // A native hasher (Node's crypto, an independent SHA-256) gives the same digest of the same rows.
    const native = analyzeCapture(split(7), settings, cap.reference, {
      inputHasher: () => {
        const h = createHash('sha256');
        return { update: (b: Uint8Array) => h.update(b), hex: () => h.digest('hex') };
      },
    });
    expect(native.record.inputSha256).toBe(one.record.inputSha256);
    expect(one.record.version).toMatch(/^\d+\.\d+\.\d+$/);
    expect(one.record.inputSha256).toMatch(/^[0-9a-f]{64}$/);
    expect(one.record.samples).toBe(n);
    const slots = one.record.pipeline.stages?.map((s) => (s as { slot?: string }).slot);
    expect(slots).toEqual([
      'normalize',
      'orthogonalize',
      'combine',
      'resample',
      'dispersion',
      'coarseFrequency',
      'matchedFilter',
      'timing',
      'equalizer',
      'frequency',
      'phase',
      'decisionEqualizer',
    ]);
  });
});
