import { describe, expect, it } from 'vitest';
import { blindPhaseSearch, estimateLinewidth, Rng, viterbiViterbi } from '../../src/index.js';
import { carrierSignal, RS, runSymbols } from '../support/carrier-signals.js';

describe('linewidth from the recovered phase track', () => {
  it('is within 10 % of a simulated 100 kHz (a typical external-cavity pair, common practice)', () => {
    // QPSK at 20 dB through Viterbi–Viterbi (N = 8), 2^17 symbols. The
    // estimate is the increment variance per symbol ÷ 2πT over lags 18 and
    // 68, beyond the 17-symbol window. Over five seeds it stayed within 6 %
    // of 100 kHz, tracking the same statistic of the true simulated phase
    // within 3 %; this seed gives 99.3 kHz.
    const s = carrierSignal({ seed: 2, modulation: 'qpsk', symbols: 1 << 17, esN0Db: 20, linewidthHz: 100e3 });
    const stage = viterbiViterbi({ modulation: 'qpsk', halfWindow: 8, recordPhase: true });
    runSymbols(stage, s.x, s.y);
    const d = stage.diagnostics();
    expect(Math.abs(d.linewidthHz - 100e3)).toBeLessThan(10e3);
    // The diagnostic is the function applied to the recorded tracks.
    expect(d.phase?.x.length).toBe(1 << 17);
    const fromTrack = estimateLinewidth(d.phase!.x, RS, { lags: [18, 68] });
    expect(fromTrack).toBeCloseTo(d.linewidthPerPolHz.x, 6);
  });

  it('ignores white estimation noise and a residual frequency offset', () => {
    // A synthetic track: Wiener phase of 500 kHz at 32 GBd, 0.2 rad rms of
    // white noise (its 2σ² = 0.08 rad² exceeds the Wiener increment over
    // either lag) and a 20 MHz residual offset (a mean increment). 2^18
    // symbols; the spread of the Wiener part alone at lag 68 is about
    // √(4·68/(3·2^18)) ≈ 2 % of its variance, 2.5 % of the difference.
    // Measured: 470 kHz (−6 %), within 10 %.
    const n = 1 << 18;
    const rng = new Rng(5);
    const sigma = Math.sqrt((2 * Math.PI * 500e3) / RS);
    const track = new Float64Array(n);
    let walk = 0;
    for (let k = 0; k < n; k++) {
      walk += sigma * rng.gaussian();
      track[k] = walk + 0.2 * rng.gaussian() + (2 * Math.PI * 20e6 * k) / RS;
    }
    expect(Math.abs(estimateLinewidth(track, RS) - 500e3)).toBeLessThan(50e3);
    expect(() => estimateLinewidth(track, RS, { lags: [5, 5] })).toThrow(RangeError);
  });

  it('has a figure on a stream shorter than the calibration, with the window chosen for it', () => {
    // 4096 symbols of QPSK at 10 dB without phase noise: the walk measured on them is zero, so the
    // Wiener choice alone takes the widest window (N = 512), whose default lags (2N + 2, 8N + 4)
    // exceed the stream. The window is held to the widest whose longer lag fits in the first half,
    // N = ⌊(4096/2 − 4)/8⌋ = 255, so an estimate exists: near zero, either sign (measured −52 Hz),
    // far below the 10 kHz of the narrowest lasers measured in the field (common practice).
    const s = carrierSignal({ seed: 13, modulation: 'qpsk', symbols: 4096, esN0Db: 10 });
    const stage = blindPhaseSearch({ modulation: 'qpsk', halfWindow: 'auto' });
    runSymbols(stage, s.x, s.y);
    const d = stage.diagnostics();
    expect(d.window.phaseWalk).toBe(0);
    expect(d.window.halfWindow).toBe(255);
    expect(Number.isFinite(d.linewidthHz)).toBe(true);
    expect(Math.abs(d.linewidthHz)).toBeLessThan(10e3);
  });
});
