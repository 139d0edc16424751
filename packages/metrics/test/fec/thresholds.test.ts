import { describe, expect, it } from 'vitest';
import { clopperPearson } from '../../src/counting/clopper-pearson.js';
import { FEC_THRESHOLDS, fecThreshold, fecVerdict } from '../../src/fec/thresholds.js';
import { qFactorDb } from '../../src/quality/snr.js';

// A measurement's figures from a count, as measure() builds them.
function figures(errors: number, bits: number, ngmi = 0.9) {
  const ci = clopperPearson(errors, bits);
  const ber = errors > 0 ? errors / bits : ci[1];
  return { berCi95: ci, qDb: qFactorDb(ber), ngmi };
}

describe('FEC thresholds', () => {
  it('has the 7 % hard-decision limit 3.8e-3 (ITU-T G.975.1 App. I.9) and ideal soft-decision NGMI limits R = 1/(1 + OH)', () => {
    expect(fecThreshold('hd-7')).toMatchObject({ kind: 'ber', limit: 3.8e-3, overheadPercent: 7 });
    expect(fecThreshold('hd-7').source).toMatch(/G\.975\.1/);
    for (const name of ['sd-ideal-20', 'sd-ideal-25'] as const) {
      const t = FEC_THRESHOLDS[name];
      expect(t.kind).toBe('ngmi');
      expect(t.limit).toBeCloseTo(1 / (1 + t.overheadPercent / 100), 15);
    }
  });

  it('accepts a configured threshold and rejects bad ones', () => {
    const mine = { name: 'lab-sd', kind: 'ngmi', limit: 0.86, overheadPercent: 20, source: 'code data sheet' } as const;
    expect(fecThreshold(mine)).toBe(mine);
    expect(() => fecThreshold('hd-9' as 'hd-7')).toThrow(RangeError);
    expect(() => fecThreshold({ ...mine, limit: 1.2 })).toThrow(RangeError);
    expect(() => fecThreshold({ ...mine, kind: 'ber', limit: 0.7 })).toThrow(RangeError);
    expect(() => fecThreshold({ ...mine, overheadPercent: -1 })).toThrow(RangeError);
  });

  it('passes, fails or is uncertain according to where the 95 % interval lies', () => {
    // 3.8e-3 over 1e6 bits: ±4 % relative interval.
    expect(fecVerdict(figures(3000, 1e6), 'hd-7').verdict).toBe('pass');
    expect(fecVerdict(figures(4600, 1e6), 'hd-7').verdict).toBe('fail');
    expect(fecVerdict(figures(3800, 1e6), 'hd-7').verdict).toBe('uncertain');
    // Few bits: even zero errors cannot show BER ≤ 3.8e-3 (upper bound 1 − 0.025^(1/500) ≈ 7.3e-3).
    expect(fecVerdict(figures(0, 500), 'hd-7').verdict).toBe('uncertain');
    expect(fecVerdict(figures(10, 1e6, 0.85), 'sd-ideal-20').verdict).toBe('pass');
    expect(fecVerdict(figures(10, 1e6, 0.79), 'sd-ideal-25').verdict).toBe('fail');
  });

  it('states the margin in Q (dB) for BER limits and in NGMI for NGMI limits', () => {
    expect(fecVerdict(figures(3800, 1e6), 'hd-7').margin).toBeCloseTo(0, 9);
    const m = fecVerdict(figures(1000, 1e6), 'hd-7').margin as number;
    expect(m).toBeCloseTo(qFactorDb(1e-3) - qFactorDb(3.8e-3), 12);
    expect(m).toBeGreaterThan(0);
    expect(fecVerdict(figures(10, 1e6, 0.9), 'sd-ideal-25').margin).toBeCloseTo(0.1, 12);
  });
});
