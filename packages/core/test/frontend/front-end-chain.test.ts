import { describe, expect, it } from 'vitest';
import {
  binFrequency,
  type ComplexArray,
  combineChannels,
  compensateDispersion,
  deskewChannels,
  dispersionPhase,
  fft,
  gardnerClockRecovery,
  idealMatchedFilter,
  ifft,
  normalizeChannels,
  orthogonalizeIq,
  pipe,
  resampleToTwoSps,
  rrcMatchedFilter,
  simulate,
} from '../../src/index.js';
import { channelBlock, runAll, snrDb } from '../support/chain.js';

/** The genie's field: the true field before the front end with its dispersion removed exactly (exp(−jφ), the library's sign). */
function withoutDispersion(field: ComplexArray, sampleRate: number, psPerNm: number): ComplexArray {
  const n = field.length >> 1;
  const F = fft(field);
  for (let m = 0; m < n; m++) {
    const phi = dispersionPhase(binFrequency(m, n, sampleRate), psPerNm);
    const re = F[2 * m];
    const im = F[2 * m + 1];
    F[2 * m] = re * Math.cos(phi) + im * Math.sin(phi);
    F[2 * m + 1] = im * Math.cos(phi) - re * Math.sin(phi);
  }
  return ifft(F);
}

// The whole front end of the default chain on one capture with every
// impairment it handles at once: DC offsets, IQ phase and gain imbalance,
// a 5 ps skew, an 8-bit ADC, 5,000 ps/nm of dispersion (estimated blindly)
// and a 20 ppm scope clock offset, at 2.5 samples per symbol. The SOP is left
// at identity so that the output can be compared with the reference without
// a polarization demultiplexer. 20,000 symbols × 2.5 × (1 + 20e-6) is an integer.
describe('front end, end to end', () => {
  it('brings a 2.5 samples-per-symbol capture to clean symbol-timed samples within 0.2 dB of the genie receiver', () => {
    const N = 20_000;
    const cap = simulate({
      seed: 12,
      modulation: '16qam',
      symbols: N,
      symbolRate: 32e9,
      samplesPerSymbol: 2.5,
      channel: { esN0Db: 17, dispersionPsPerNm: 5000 },
      receiver: {
        dcOffset: { xi: 0.2, yq: -0.1 },
        iqPhaseDeg: { x: 6, y: -4 },
        iqGainDb: { x: 0.8 },
        skewPs: { xq: 5 },
        adc: { bits: 8, loading: 0.25 },
        clockOffsetPpm: 20,
      },
    });
    const chain = pipe(
      normalizeChannels(),
      orthogonalizeIq(),
      deskewChannels({ skewPs: { xq: 5 } }),
      combineChannels(),
      resampleToTwoSps(),
      rrcMatchedFilter({ rollOff: 0.1 }),
      compensateDispersion({ blind: { minPsPerNm: 0, maxPsPerNm: 20_000 } }),
      gardnerClockRecovery({ rollOff: 0.1 }),
    );
    const out = runAll<'twoSps'>(chain, channelBlock(cap));
    const d = chain.diagnostics();
    expect(Math.abs(d[6].dispersionPsPerNm - 5000)).toBeLessThan(50);
    expect(Math.abs(d[1].x!.phaseErrorDeg - 6)).toBeLessThan(0.3);
    // The genie sees the field before the receiver front end: the ADC's
    // quantization (8 bits, rms at a quarter of full scale: SQNR ≈ 6.02·8 + 4.77
    // − 20·log10(4) ≈ 41 dB, common practice), the interpolators and the timing jitter
    // are the whole penalty (measured ≈ 0.05 dB; the SNR over the 14,000 symbols
    // kept has a spread of ≈ 0.04 dB against the genie's).
    const field = withoutDispersion(cap.truth.field.x, cap.truth.samplesPerSymbol * 32e9, 5000);
    const genie = snrDb(idealMatchedFilter(field, N, 32e9, 0.1), cap.reference.x, { step: 1 });
    // The genie itself reaches the channel's Es/N0 (4.34/√20000 ≈ 0.03 dB estimation spread).
    expect(Math.abs(genie - 17)).toBeLessThan(0.15);
    let best = Number.NEGATIVE_INFINITY;
    for (let lag = -2; lag <= 2; lag++) best = Math.max(best, snrDb(out.x, cap.reference.x, { lag, skip: 3000 }));
    expect(genie - best).toBeLessThan(0.2);
  });
});
