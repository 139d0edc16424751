import { describe, expect, it } from 'vitest';
import { complexArray, decisionEqualizer, fieldBlock, OptionError } from '../../src/index.js';
import { carrierSignal, RS } from '../support/carrier-signals.js';
import { runAll, snrDb } from '../support/chain.js';

// What the blind equalizer leaves: a little inter-symbol interference and crosstalk between the
// polarizations. The decision-directed equalizer after the carrier recovery must remove it, to the
// SNR of the channel itself (the matched filter's output at the symbol instants, Es/N0 by the
// simulator's definition).
describe('decisionEqualizer', () => {
  it('removes a residual 3-tap response with crosstalk from 16QAM at 18 dB, to within 0.2 dB of the channel', () => {
    const n = 32768;
    const s = carrierSignal({ seed: 5, modulation: '16qam', symbols: n, esN0Db: 18 });
    // x' = 0.95·x[k] + 0.15·x[k−1] − 0.1·x[k+1] + 0.2·y[k]; y' = 0.95·y[k] + 0.12·y[k−1] − 0.2·x[k].
    const x = complexArray(n);
    const y = complexArray(n);
    const at = (z: Float64Array, k: number, i: number) => (k >= 0 && k < n ? z[2 * k + i] : 0);
    for (let k = 0; k < n; k++) {
      for (let i = 0; i < 2; i++) {
        x[2 * k + i] = 0.95 * at(s.x, k, i) + 0.15 * at(s.x, k - 1, i) - 0.1 * at(s.x, k + 1, i) + 0.2 * at(s.y, k, i);
        y[2 * k + i] = 0.95 * at(s.y, k, i) + 0.12 * at(s.y, k - 1, i) - 0.2 * at(s.x, k, i);
      }
    }
    const before = snrDb(x, s.refX, { step: 1, skip: 1000 });
    const eq = decisionEqualizer({ modulation: '16qam', taps: 9 });
    const out = runAll<'symbols'>(eq, fieldBlock('symbols', x, y, RS, 1));
    expect(out.x.length).toBe(x.length);
    // The channel: about 18 dB (the estimate over 31,768 symbols spreads by ±0.03 dB).
    const channel = snrDb(s.x, s.refX, { step: 1, skip: 1000 });
    const after = snrDb(out.x, s.refX, { step: 1, skip: 1000 });
    const afterY = snrDb(out.y, s.refY, { step: 1, skip: 1000 });
    expect(before).toBeLessThan(channel - 3);
    expect(after).toBeGreaterThan(channel - 0.2);
    expect(afterY).toBeGreaterThan(channel - 0.2);
    const d = eq.diagnostics();
    // The mean decision error power is the noise the SNR leaves: 10^(−18/10) ≈ 0.016 per symbol.
    expect(d.decisionErrorPower.x).toBeGreaterThan(0.01);
    expect(d.decisionErrorPower.x).toBeLessThan(0.025);
  });

  it('rejects bad options', () => {
    expect(() => decisionEqualizer({ modulation: '16qam', taps: 4 })).toThrow(OptionError);
    expect(() => decisionEqualizer({ modulation: '16qam', stepSize: 0 })).toThrow(/stepSize/);
    expect(() => decisionEqualizer({ modulation: '8psk' as '16qam' })).toThrow(/modulation/);
    expect(() => decisionEqualizer({ modulation: '16qam', phaseRefinement: { halfWindow: -1 } })).toThrow(/phaseRefinement/);
    expect(() => decisionEqualizer({ modulation: '16qam', phaseRefinement: null as unknown as false })).toThrow(
      /phaseRefinement/,
    );
    expect(decisionEqualizer({ modulation: '16qam', phaseRefinement: false }).diagnostics().phaseRefinementHalfWindow).toBeNull();
  });
});
