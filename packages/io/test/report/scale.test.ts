import { describe, expect, it } from 'vitest';
import { formatTick, linearScale, logScale, niceDomain, niceTicks, powerOfTen } from '../../src/report/scale.js';

// Expected values are worked by hand from the definitions in scale.ts (1-2-5 steps, base-10 logarithms).
describe('linear scales', () => {
  it('maps the domain onto the range, downwards as a y axis does', () => {
    const s = linearScale([0, 10], [300, 100]);
    expect(s.map(0)).toBe(300);
    expect(s.map(10)).toBe(100);
    expect(s.map(2.5)).toBe(250);
  });

  it('ticks at 1, 2 or 5 × 10ᵏ, exact decimals, labels with the decimals of the step', () => {
    expect(niceTicks(0, 1, 5)).toEqual([0, 0.2, 0.4, 0.6, 0.8, 1]);
    expect(niceTicks(0, 0.3, 3)).toEqual([0, 0.1, 0.2, 0.3]);
    expect(niceTicks(-7, 23, 6)).toEqual([-5, 0, 5, 10, 15, 20]);
    expect(niceTicks(12, 24, 6)).toEqual([12, 14, 16, 18, 20, 22, 24]);
    expect(
      linearScale([-1.4, 1.4], [0, 1], 4)
        .ticks()
        .map((t) => t.label),
    ).toEqual(['−1', '0', '1']);
    expect(formatTick(0.25, 0.05)).toBe('0.25');
    expect(formatTick(-0, 1)).toBe('0');
  });

  it('widens a domain to whole steps, and gives an empty or constant one room', () => {
    expect(niceDomain([0.13, 0.87])).toEqual([0, 1]);
    expect(niceDomain([13.79, 21.63], 0.08)).toEqual([12, 24]);
    expect(niceDomain([5, 5])).toEqual([4.5, 5.5]);
    expect(niceDomain([Number.NaN])).toEqual([0, 1]);
    // Both ends fall on ticks of the step the axis will use (0.02 here, not the 0.01 of the first rounding).
    const [lo, hi] = niceDomain([0.015625, 0.078125]);
    expect([lo, hi]).toEqual([0, 0.08]);
    expect(niceTicks(lo, hi, 5)).toEqual([0, 0.02, 0.04, 0.06, 0.08]);
  });

  it('refuses an empty domain', () => {
    expect(() => linearScale([1, 1], [0, 1])).toThrow(RangeError);
  });
});

describe('log scales', () => {
  it('maps decades to equal distances', () => {
    const s = logScale([1e-5, 1e-1], [400, 0]);
    expect(s.map(1e-5)).toBeCloseTo(400, 9);
    expect(s.map(1e-3)).toBeCloseTo(200, 9);
    expect(s.map(1e-1)).toBeCloseTo(0, 9);
  });

  it('labels every decade and puts unlabelled minor ticks at 2…9 × 10ᵏ', () => {
    const ticks = logScale([1e-6, 1e-2], [0, 1]).ticks();
    expect(ticks.filter((t) => t.label).map((t) => t.label)).toEqual(['10⁻⁶', '10⁻⁵', '10⁻⁴', '10⁻³', '10⁻²']);
    // 4 decades × 8 minor ticks.
    expect(ticks.filter((t) => !t.major)).toHaveLength(32);
    expect(ticks.every((t) => t.value >= 1e-6 * (1 - 1e-12) && t.value <= 1e-2 * (1 + 1e-12))).toBe(true);
  });

  it('labels 2 and 5 × 10ᵏ within a narrow domain, thins labels over many decades', () => {
    const narrow = logScale([1e-3, 3e-2], [0, 1])
      .ticks()
      .filter((t) => t.label);
    expect(narrow.map((t) => t.value)).toEqual([1e-3, 2e-3, 5e-3, 1e-2, 2e-2]);
    const wide = logScale([1e-12, 1], [0, 1]).ticks();
    expect(wide.filter((t) => t.label).map((t) => t.label)).toEqual(['10⁻¹²', '10⁻¹⁰', '10⁻⁸', '10⁻⁶', '10⁻⁴', '10⁻²', '1']);
    expect(wide.some((t) => !t.major && t.label === '')).toBe(true);
  });

  it('writes powers of ten with superscripts and refuses a domain that is not positive', () => {
    expect(powerOfTen(-12)).toBe('10⁻¹²');
    expect(powerOfTen(3)).toBe('10³');
    expect(powerOfTen(0)).toBe('1');
    expect(() => logScale([0, 1], [0, 1])).toThrow(RangeError);
  });
});
