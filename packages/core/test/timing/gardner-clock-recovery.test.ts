import { describe, expect, it } from 'vitest';
import {
  type ChannelBlock,
  combineChannels,
  fft,
  gardnerClockRecovery,
  gardnerDetectorGain,
  idealMatchedFilter,
  ifft,
  OptionError,
  pipe,
  resampleToTwoSps,
  rrcMatchedFilter,
  simulate,
} from '../../src/index.js';
import { runAll, snrDb } from '../support/chain.js';

/**
 * Clock recovery on a capture with a scope clock offset: channels at 2.5
 * samples per symbol (80 GSa/s, 32 GBd), the first sample dropped so that the
 * first symbol sits 0.4 T into the capture, then resampling, matched filter and
 * Gardner. Returns the SNR penalty against the genie receiver
 * (idealMatchedFilter on the field before the front end, sampled at the true
 * symbol instants) and the stage's diagnostics.
 *
 * 40,000 symbols × 2.5 × (1 + ppm·1e-6) is an integer for ±20 and ±50 ppm. The
 * first 8,000 symbols (acquisition) are left out; the SNR estimates over
 * 32,000 symbols have a standard deviation of 4.34/√32000 ≈ 0.02 dB, and both
 * share the noise.
 */
function penalty(modulation: 'qpsk' | '16qam', esN0Db: number, ppm: number) {
  const N = 40_000;
  const cap = simulate({
    seed: 3,
    modulation,
    symbols: N,
    symbolRate: 32e9,
    samplesPerSymbol: 2.5,
    channel: { esN0Db },
    receiver: { clockOffsetPpm: ppm },
  });
  const genie = snrDb(idealMatchedFilter(cap.truth.field.x, N, 32e9, 0.1), cap.reference.x, { step: 1 });
  const ch = cap.channels;
  const block: ChannelBlock = {
    domain: 'channels',
    xi: ch.xi.subarray(1),
    xq: ch.xq.subarray(1),
    yi: ch.yi.subarray(1),
    yq: ch.yq.subarray(1),
    sampleRate: 80e9,
    samplesPerSymbol: 2.5,
  };
  const clock = gardnerClockRecovery({ rollOff: 0.1 });
  const out = runAll<'twoSps'>(pipe(combineChannels(), resampleToTwoSps(), rrcMatchedFilter({ rollOff: 0.1 }), clock), block);
  // Output 0 is the first symbol instant after the start: symbol 1 of the reference.
  const ours = snrDb(out.x, cap.reference.x, { lag: 1, skip: 8000 });
  const oursY = snrDb(out.y, cap.reference.y, { lag: 1, skip: 8000 });
  return { penalty: genie - Math.min(ours, oursY), genie, d: clock.diagnostics() };
}

describe('gardnerClockRecovery (Gardner, IEEE Trans. Commun. 34(5), 1986)', () => {
  it('locks on a 20 ppm clock offset with < 0.2 dB SNR penalty (QPSK, 12 dB)', () => {
    const r = penalty('qpsk', 12, 20);
    // The genie reaches the channel's Es/N0 (estimation spread 4.34/√40000 ≈ 0.02 dB).
    expect(Math.abs(r.genie - 12)).toBeLessThan(0.1);
    expect(r.penalty).toBeLessThan(0.2);
    // The integrator, averaged over 1,024 symbols, follows the offset (measured within ±3 ppm at the default B_nT = 5e-4).
    expect(Math.abs(r.d.clockOffsetPpm - 20)).toBeLessThan(10);
    // The square-timing start found the first symbol at 0.4 T × 2.5 / 1.25 = 1.2 samples, within 0.05 sample.
    expect(Math.abs(r.d.initialTiming - 1.2)).toBeLessThan(0.05);
  });

  for (const ppm of [50, -50]) {
    it(`tracks ${ppm} ppm (16QAM, 18 dB) with < 0.2 dB SNR penalty`, () => {
      const r = penalty('16qam', 18, ppm);
      expect(r.penalty).toBeLessThan(0.2);
      expect(Math.abs(r.d.clockOffsetPpm - ppm)).toBeLessThan(10);
    });
  }

  it('detector gain: the S-curve slope matches the mean detector output of a noiseless raised-cosine signal', () => {
    // Noiseless 16QAM at roll-off 0.3 through a genie matched filter, sampled
    // 0.05 T late: the normalized Gardner output averages to K_p·0.05.
    const rollOff = 0.3;
    const N = 8192;
    const cap = simulate({ seed: 2, modulation: '16qam', symbols: N, symbolRate: 32e9, samplesPerSymbol: 2, rollOff });
    const tau = 0.05;
    const Z = fft(cap.truth.field.x);
    const n = 2 * N;
    for (let m = 0; m < n; m++) {
      const mm = m < n / 2 ? m : m - n;
      const a = (2 * Math.PI * mm * 2 * tau) / n; // advance by τ: samples taken τ late
      const re = Z[2 * m];
      const im = Z[2 * m + 1];
      Z[2 * m] = re * Math.cos(a) - im * Math.sin(a);
      Z[2 * m + 1] = re * Math.sin(a) + im * Math.cos(a);
    }
    const r = idealMatchedFilter(ifft(Z), N, 32e9, rollOff, 2);
    let e = 0;
    let p = 0;
    for (let k = 1; k < N; k++) {
      const a = 4 * k;
      const b = 4 * (k - 1);
      const m = 4 * k - 2;
      e += r[m] * (r[a] - r[b]) + r[m + 1] * (r[a + 1] - r[b + 1]);
      p += r[a] ** 2 + r[a + 1] ** 2;
    }
    const measured = e / p / tau;
    // The S-curve is nearly linear over ±0.05 T (third-order term < 3 %), and the
    // pattern's own fluctuation over 8,192 symbols is a few percent.
    expect(Math.abs(measured / gardnerDetectorGain(rollOff) - 1)).toBeLessThan(0.1);
  });

  it('rejects bad options', () => {
    expect(() => gardnerClockRecovery({ loopBandwidth: 0.5 })).toThrow(OptionError);
    expect(() => gardnerClockRecovery({ rollOff: 0 })).toThrow(/rollOff/);
    expect(() => gardnerClockRecovery({ initialTiming: 3 })).toThrow(/initialTiming/);
  });
});
