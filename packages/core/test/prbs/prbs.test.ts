import { describe, expect, it } from 'vitest';
import { PRBS_PATTERNS, Prbs, type PrbsOrder } from '../../src/index.js';

// ITU-T O.150 (clause 5) defines the patterns 2^n − 1 for n = 9, 11, 15, 20, 23,
// 29, 31 with generator polynomials x^n + x^k + 1 and states which are
// inverted; PRBS7 (x^7 + x^6 + 1) is common practice. The polynomial table
// and the inversion flags are from memory of the standard.
const EXPECTED: Record<PrbsOrder, [number, boolean]> = {
  7: [6, false],
  9: [5, false],
  11: [9, false],
  15: [14, true],
  20: [3, false],
  23: [18, true],
  29: [27, true],
  31: [28, true],
};

describe('PRBS generators', () => {
  it('use the polynomials and inversions of ITU-T O.150', () => {
    for (const [order, [tap, inverted]] of Object.entries(EXPECTED)) {
      const p = PRBS_PATTERNS[Number(order) as PrbsOrder];
      expect(p.tap).toBe(tap);
      expect(p.inverted).toBe(inverted);
      expect(p.o150).toBe(Number(order) !== 7);
    }
  });

  // Maximal-length sequences (Golomb, Shift Register Sequences, 1967): period
  // 2^n − 1, 2^(n−1) ones per period, longest run of ones n and of zeros
  // n − 1 (complemented for the inverted patterns, whose longest zero run is n,
  // as O.150 states for them).
  for (const order of [7, 9, 11, 15, 20] as const) {
    it(`PRBS${order}: period 2^${order} − 1, balance and longest runs`, () => {
      const g = new Prbs(order);
      const period = 2 ** order - 1;
      const bits = g.fill(new Uint8Array(2 * period));
      expect(bits.subarray(period)).toEqual(bits.subarray(0, period));
      let ones = 0;
      for (let i = 0; i < period; i++) ones += bits[i];
      const inverted = PRBS_PATTERNS[order].inverted;
      expect(ones).toBe(inverted ? 2 ** (order - 1) - 1 : 2 ** (order - 1));
      const longest = [0, 0];
      let run = 1;
      for (let i = 1; i < 2 * period; i++) {
        run = bits[i] === bits[i - 1] ? run + 1 : 1;
        if (i >= period) longest[bits[i]] = Math.max(longest[bits[i]], run);
      }
      const [zeros, onesRun] = inverted ? [order, order - 1] : [order - 1, order];
      expect(longest[0]).toBe(zeros);
      expect(longest[1]).toBe(onesRun);
    });
  }

  it('PRBS23: period 2^23 − 1, and no shorter one', () => {
    const period = 2 ** 23 - 1;
    const bits = new Prbs(23).fill(new Uint8Array(period + 64));
    const same = (shift: number) => bits.subarray(0, 64).every((b, i) => b === bits[shift + i]);
    expect(same(period)).toBe(true);
    // A shorter period would divide 2^23 − 1 = 47 × 178481.
    expect(same(47)).toBe(false);
    expect(same(178481)).toBe(false);
  });

  // For n = 29 and 31, stepping 2^n bits is too slow for a unit test; the
  // period follows from the generator polynomial being primitive over GF(2),
  // checked here by the order of x modulo the polynomial: x^(2^n − 1) ≡ 1 and
  // x^((2^n − 1)/p) ≢ 1 for each prime p of 2^n − 1.
  const FACTORS: Record<number, number[]> = { 29: [233, 1103, 2089], 31: [2147483647] };
  for (const order of [29, 31] as const) {
    it(`PRBS${order}: generator polynomial is primitive (period 2^${order} − 1)`, () => {
      const tap = PRBS_PATTERNS[order].tap;
      const period = 2n ** BigInt(order) - 1n;
      expect(xPowMod(period, order, tap)).toBe(1n);
      for (const p of FACTORS[order]) expect(xPowMod(period / BigInt(p), order, tap)).not.toBe(1n);
    });
  }

  it('follows the recurrence a[j] = a[j − n] ⊕ a[j − k] from an all-ones register', () => {
    for (const order of [9, 15, 31] as const) {
      const { tap, inverted } = PRBS_PATTERNS[order];
      const g = new Prbs(order);
      const got = g.fill(new Uint8Array(5000));
      // The register history before the first output bit is all ones.
      const a: number[] = new Array(order).fill(1);
      for (let j = 0; j < 5000; j++) {
        const bit = a[a.length - order] ^ a[a.length - tap];
        a.push(bit);
        expect(got[j]).toBe(bit ^ (inverted ? 1 : 0));
      }
    }
  });

  it('rejects an unknown order or a zero seed', () => {
    expect(() => new Prbs(8 as PrbsOrder)).toThrow(/order/);
    expect(() => new Prbs(9, 0)).toThrow(/seed/);
  });
});

/** x^e mod (x^n + x^k + 1) over GF(2), polynomials as bigint bit masks. */
function xPowMod(e: bigint, n: number, k: number): bigint {
  const mod = (1n << BigInt(n)) | (1n << BigInt(k)) | 1n;
  const mulMod = (a: bigint, b: bigint): bigint => {
    let r = 0n;
    let x = a;
    let y = b;
    while (y) {
      if (y & 1n) r ^= x;
      y >>= 1n;
      x <<= 1n;
      if (x >> BigInt(n)) x ^= mod;
    }
    return r;
  };
  let result = 1n;
  let base = 2n; // the polynomial x
  let ee = e;
  while (ee) {
    if (ee & 1n) result = mulMod(result, base);
    base = mulMod(base, base);
    ee >>= 1n;
  }
  return result;
}
