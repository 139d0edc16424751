import { cdTapCount } from '@intradyne/core';
import { describe, expect, it } from 'vitest';
import { LIMITS, maxDispersionPsPerNm, rateProblem } from '../../src/capture/limits.js';

describe('the limits checked before allocating', () => {
  it('bounds the dispersion by the taps of its compensation filter at two samples per symbol', () => {
    for (const rs of [10e9, 32e9, 96e9, 200e9]) {
      const d = maxDispersionPsPerNm(rs);
      // At the bound the filter fits; 1 % beyond it, it does not (the count is linear in |D|).
      expect(cdTapCount(d, 2 * rs)).toBeLessThanOrEqual(LIMITS.maxDispersionTaps);
      expect(cdTapCount(1.01 * d, 2 * rs)).toBeGreaterThan(LIMITS.maxDispersionTaps);
    }
    // 10,000 km of standard fibre (17 ps/nm/km, ITU-T G.652 range) fits up to 200 GBd, as LIMITS says.
    expect(maxDispersionPsPerNm(200e9)).toBeGreaterThan(170_000);
  });

  it('says what is wrong with a pair of rates', () => {
    expect(rateProblem(64e9, 32e9)).toBeNull();
    expect(rateProblem(16e9, 32e9)).toBe('at least the symbol rate (32000000000 Bd) in Sa/s');
    expect(rateProblem(64e15, 32e9)).toBe('at most 10000000000000 Sa/s');
    expect(rateProblem(256 * 1e9, 1e9)).toBeNull();
    expect(rateProblem(257 * 1e9, 1e9)).toBe('at most 256 samples per symbol (256000000000 Sa/s at 1000000000 Bd)');
  });
});
