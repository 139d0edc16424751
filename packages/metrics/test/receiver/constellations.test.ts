import { type ModulationName, simulate } from '@intradyne/core';
import { describe, expect, it } from 'vitest';
import { analyzeCapture, snrForBer, snrForGmi } from '../../src/index.js';

// The default receiver on the formats beyond QPSK, 16QAM and 64QAM, at the
// Es/N0 where AWGN theory gives BER 1e-3 for each (exact integrals over the
// decision regions, checked against Proakis's closed forms and a Monte Carlo
// count in the theory tests): 32 GBd, 2 samples per symbol, a random
// polarization state, 10 ps DGD, a 1.5 GHz carrier offset and 100 kHz lasers.
// The penalty is the Es/N0 set minus the Es/N0 theory needs for the measured
// BER. 2^17 symbols per polarization give 800 (8QAM) to 2,000 (256QAM) bit
// errors at BER 1e-3: a relative standard deviation of 2–4 % of the BER,
// about ±0.02 dB of penalty. Seeds not used while the defaults were chosen.
const SYMBOLS = 2 ** 17;

function penaltyDb(modulation: ModulationName, seed: number, linewidthHz: number): number {
  const es = snrForBer(modulation, 1e-3);
  const cap = simulate({
    seed,
    modulation,
    symbols: SYMBOLS,
    symbolRate: 32e9,
    samplesPerSymbol: 2,
    channel: { sop: 'random', dgdPs: 10, esN0Db: es, linewidthHz, freqOffsetHz: 1.5e9 },
  });
  const result = analyzeCapture(
    [{ domain: 'channels', ...cap.channels, samplesPerSymbol: cap.samplesPerSymbol }],
    { modulation, symbolRate: 32e9, sampleRate: cap.channels.sampleRate, dispersionPsPerNm: 0 },
    cap.reference,
  );
  expect(result.ok, result.failure?.reason).toBe(true);
  const m = result.measurement!;
  expect(result.cycleSlips.count).toBe(0);
  const penalty = es - snrForBer(modulation, m.ber);
  if (process.env.INTRADYNE_REPORT) console.log(`${modulation}: BER ${m.ber.toExponential(3)}, penalty ${penalty.toFixed(3)} dB`);
  return penalty;
}

describe('default receiver on the added formats, against AWGN theory', () => {
  it('DP-8QAM at 100 kHz: penalty ≤ 0.5 dB', () => {
    expect(penaltyDb('8qam', 301, 100e3)).toBeLessThan(0.5); // measured 0.13 dB (0.13 on seed 311)
  });

  it('DP-32QAM at 100 kHz: penalty ≤ 0.5 dB', () => {
    expect(penaltyDb('32qam', 302, 100e3)).toBeLessThan(0.5); // measured 0.18 dB (0.22 on seed 312)
  });

  it('DP-128QAM at 100 kHz: penalty ≤ 0.5 dB', () => {
    // Measured 0.21 dB on this seed (0.25 on another). The issue sets no floor for 128QAM.
    expect(penaltyDb('128qam', 303, 100e3)).toBeLessThan(0.5);
  });

  it('DP-256QAM without phase noise: penalty ≤ 0.5 dB', () => {
    expect(penaltyDb('256qam', 304, 0)).toBeLessThan(0.5); // measured 0.18 dB (0.21 on another seed)
  });

  it('DP-256QAM at 100 kHz: penalty ≤ 0.5 dB', () => {
    expect(penaltyDb('256qam', 305, 100e3)).toBeLessThan(0.5); // measured 0.45 dB (0.44 on seed 311)
  });

  // Shaped QAM: the penalty is read in GMI, against the GMI the shaped input reaches in AWGN
  // (Gauss–Hermite quadrature of the shaped input; GMI with the prior and NGMI as in Alvarado et
  // al., JLT 36(2), 2018; Maxwell–Boltzmann shaping: Böcherer et al., IEEE Trans. Commun. 63(12),
  // 2015). The operating point is where theory gives GMI = H − 0.5 bit (NGMI 1 − 0.5/6 = 0.917),
  // near the thresholds of soft-decision codes (common practice). 2^17 symbols per polarization
  // put the GMI within about ±0.005 bit, ±0.02 dB of penalty.
  it('DP-PS-64QAM at 4.5 bits per symbol, 100 kHz: GMI-equivalent penalty ≤ 0.5 dB, placed against the reference', () => {
    const modulation: ModulationName = 'ps-64qam:entropy=4.5';
    const es = snrForGmi(modulation, 4.0);
    const cap = simulate({
      seed: 401,
      modulation,
      symbols: SYMBOLS,
      symbolRate: 32e9,
      samplesPerSymbol: 2,
      channel: { sop: 'random', dgdPs: 10, esN0Db: es, linewidthHz: 100e3, freqOffsetHz: 1.5e9 },
    });
    const result = analyzeCapture(
      [{ domain: 'channels', ...cap.channels, samplesPerSymbol: cap.samplesPerSymbol }],
      { modulation, symbolRate: 32e9, sampleRate: cap.channels.sampleRate, dispersionPsPerNm: 0 },
      cap.reference,
    );
    expect(result.ok, result.failure?.reason).toBe(true);
    expect(result.equalizerTraining).toBe('data-aided');
    expect(result.cycleSlips.count).toBe(0);
    // The offset found against the reference, and removed as found: within a quarter of a periodogram bin (1.95 MHz).
    expect(Math.abs(result.freqOffsetHz - 1.5e9)).toBeLessThan(0.5e6);
    const penalty = es - snrForGmi(modulation, result.measurement!.gmi);
    if (process.env.INTRADYNE_REPORT)
      console.log(`${modulation}: GMI ${result.measurement!.gmi.toFixed(4)}, penalty ${penalty.toFixed(3)} dB`);
    expect(penalty).toBeLessThan(0.5); // measured 0.15 dB (0.13–0.17 over four seeds)
  });

  it('a shaped capture with dispersion nobody stated, or analysed blind: a failure that says what would work, not a wrong number', () => {
    // The blind estimate minimizes the field's fourth moment, which a nearly Gaussian signal barely moves.
    const modulation: ModulationName = 'ps-64qam:entropy=4.5';
    const cap = simulate({
      seed: 421,
      modulation,
      symbols: 1 << 16,
      symbolRate: 32e9,
      samplesPerSymbol: 2,
      channel: { sop: 'random', esN0Db: 14, linewidthHz: 100e3, freqOffsetHz: 1e9, dispersionPsPerNm: 1360 },
    });
    const block = { domain: 'channels' as const, ...cap.channels, samplesPerSymbol: cap.samplesPerSymbol };
    const settings = { modulation, symbolRate: 32e9, sampleRate: cap.channels.sampleRate };
    const guessed = analyzeCapture([block], settings, cap.reference);
    expect(guessed.ok).toBe(false);
    expect(guessed.failure?.reason).toMatch(/state it as dispersionPsPerNm/);
    const stated = analyzeCapture([block], { ...settings, dispersionPsPerNm: 1360 }, cap.reference);
    expect(stated.ok, stated.failure?.reason).toBe(true);
    // Asked to run blind, the analysis fails at its equalizer and says what would work.
    const blind = analyzeCapture([block], { ...settings, dispersionPsPerNm: 1360 }, cap.reference, {
      equalizerTraining: 'blind',
    });
    expect(blind.ok).toBe(false);
    expect(blind.failure?.reason).toMatch(/its default is data-aided/);
  });
});
