import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { parseDecimal } from '../../src/load/decimal.js';

const encoder = new TextEncoder();

/** What the parser must give: Number() on the same text, NaN outside our grammar or when not finite. */
function expected(text: string): number {
  if (!/^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/.test(text)) return Number.NaN;
  const v = Number(text);
  return Number.isFinite(v) ? v : Number.NaN;
}

function parse(text: string): number {
  const b = encoder.encode(text);
  return parseDecimal(b, 0, b.length);
}

describe('parseDecimal', () => {
  // The reference is the JavaScript engine's own correctly rounded
  // string-to-double conversion (ECMA-262, Number(string)): results must be
  // bit-identical (Object.is also separates 0 from −0).
  it('agrees bit for bit with Number() on the shortest round-trip text of random doubles', () => {
    fc.assert(
      fc.property(fc.double({ noNaN: true, noDefaultInfinity: true }), (x) => {
        const s = String(x);
        expect(Object.is(parse(s), expected(s))).toBe(true);
      }),
      { numRuns: 20000 },
    );
  });

  it('agrees with Number() on fixed, exponential and precision forms and on digit strings', () => {
    fc.assert(
      fc.property(
        fc.double({ min: -1e6, max: 1e6, noNaN: true }),
        fc.integer({ min: 0, max: 20 }),
        fc.integer({ min: -25, max: 25 }),
        (x, digits, shift) => {
          const y = x * 10 ** shift;
          for (const s of [y.toExponential(digits), y.toPrecision(digits + 1), x.toFixed(digits)]) {
            expect(Object.is(parse(s), expected(s)), s).toBe(true);
          }
        },
      ),
      { numRuns: 10000 },
    );
    fc.assert(
      fc.property(fc.stringMatching(/^[+-]?\d{0,25}(\.\d{0,25})?([eE][+-]?\d{1,3})?$/), (s) => {
        expect(Object.is(parse(s), expected(s)), s).toBe(true);
      }),
      { numRuns: 10000 },
    );
  });

  it('is exact at the hard cases: ties and near ties of the double-double path', () => {
    // 2^53 + 1 is a tie between two doubles (round half to even gives 2^53);
    // the others sit one unit of the 17th digit around ties (from memory of
    // the usual string-to-double test lists; the assertion is Number() itself).
    const cases = [
      '9007199254740993',
      '9007199254740993.0000000001',
      '9007199254740992.9999999999',
      '18014398509481989',
      '0.30000000000000004',
      '2.2250738585072014e-308',
      '1.7976931348623157e308',
      '4.9406564584124654e-324',
      '123456789012345678',
      '1234567890123456789',
      '0.1',
      '-0',
      '+0.0e10',
      '00012.500',
      '1e22',
      '1e23',
      '1e-22',
      '1e-23',
    ];
    for (const s of cases) expect(Object.is(parse(s), expected(s)), s).toBe(true);
  });

  it('gives NaN outside the grammar and on overflow', () => {
    for (const s of [
      '',
      '-',
      '+',
      '.',
      'e5',
      '1e',
      '1e+',
      '1.2.3',
      '--1',
      'NaN',
      'Infinity',
      'inf',
      '0x10',
      ' 1',
      '1 ',
      '1e400',
      '1,5',
    ]) {
      expect(parse(s), s).toBeNaN();
    }
  });

  it('reads a token inside a larger buffer', () => {
    const b = encoder.encode('xx,-12.75e1,yy');
    expect(parseDecimal(b, 3, 11)).toBe(-127.5);
  });
});
