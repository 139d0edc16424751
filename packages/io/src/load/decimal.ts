/**
 * An exact decimal number parser on bytes, for the CSV loaders.
 *
 * It reads the grammar `[+-]? digits? (. digits?)? ([eE] [+-]? digits)?`
 * (at least one digit in the mantissa) from `bytes[start, end)` and returns
 * the IEEE-754 double nearest to the decimal value, the same number that
 * `Number()` gives on the same text. Anything else (letters, `NaN`,
 * `Infinity`, hexadecimal, an empty cell, spaces) and any value that
 * overflows gives NaN, which the caller turns into an error.
 *
 * Exactness, case by case:
 * - up to 15 significant digits and a decimal exponent |e| ≤ 22: the
 *   mantissa m and 10^|e| are both exact doubles, so one IEEE multiply or
 *   divide is correctly rounded (Clinger, "How to read floating point numbers
 *   accurately", PLDI 1990: the fast path);
 * - 16 to 19 significant digits, |e| ≤ 22 (the shortest round-trip output of
 *   `String(x)` has up to 17): m·10^e is computed in double-double
 *   arithmetic (Dekker, "A floating-point technique for extending the
 *   available precision", Numer. Math. 18, 1971: TwoSum and the split
 *   TwoProduct), with a relative error below 2^−100. The sum s = fl(hi + lo)
 *   is then the correctly rounded result unless the remainder hi + lo − s
 *   lies within 2^−90·s of half the gap to the next double (a near tie):
 *   only then, about once in 10^12 numbers, the parser falls back;
 * - everything else (more than 19 significant digits, |e| > 22, a near tie)
 *   falls back to `Number()` on the token's text, which is exact.
 */

const POW10 = new Float64Array(23);
for (let k = 0, p = 1; k <= 22; k++, p *= 10) POW10[k] = p;

/** Dekker's splitter for doubles: 2^27 + 1. */
const SPLIT = 134217729;

/** Half the gap between consecutive doubles of biased exponent k: 2^(k − 1076). */
const HALF_GAP = new Float64Array(2048);
for (let k = 1; k < 2047; k++) HALF_GAP[k] = 2 ** (k - 1076);

const bits = new Float64Array(1);
const words = new Uint32Array(bits.buffer);
bits[0] = 1;
/** The exponent trick reads the high word at index 1: little-endian only; otherwise always fall back. */
const LITTLE_ENDIAN = words[1] === 0x3ff00000;

/**
 * Low part of the last `twoProduct`: a·b = p + productError[0] exactly. In a typed
 * array, not a `let`: a double stored in a module variable is boxed on the heap, one
 * allocation per number parsed.
 */
const productError = new Float64Array(1);

// Dekker's TwoProduct without FMA: a·b = p + e exactly (no overflow here:
// |a|, |b| < 1e23).
function twoProduct(a: number, b: number): number {
  const p = a * b;
  let t = SPLIT * a;
  const ah = t - (t - a);
  const al = a - ah;
  t = SPLIT * b;
  const bh = t - (t - b);
  const bl = b - bh;
  productError[0] = ah * bh - p + ah * bl + al * bh + al * bl;
  return p;
}

/** Where the last {@link scanDecimal} stopped. */
let scanned = 0;

/** The offset just past the number read by the last {@link scanDecimal}. */
export function decimalEnd(): number {
  return scanned;
}

/**
 * Parses the decimal number in `bytes[start, end)` exactly (see the module
 * documentation for the method).
 * @returns the nearest double, −0 for a negative zero, or NaN when the text
 *   is not a decimal number or overflows to ±Infinity
 * @example parseDecimal(new TextEncoder().encode('-1.5e-3'), 0, 7) // -0.0015
 */
export function parseDecimal(bytes: Uint8Array, start: number, end: number): number {
  const v = scanDecimal(bytes, start, end);
  return scanned === end ? v : Number.NaN;
}

/**
 * Reads the longest decimal number that starts at `bytes[start]` and ends by
 * `limit` (the caller checks what follows with {@link decimalEnd}). Same
 * exactness as {@link parseDecimal}.
 * @returns the value, or NaN when no number starts here or it overflows
 */
export function scanDecimal(bytes: Uint8Array, start: number, limit: number): number {
  scanDecimalTo(bytes, start, limit, cell, 0);
  return cell[0];
}

/** One value's room, for the readers that return a number. */
const cell = new Float64Array(1);

/**
 * {@link scanDecimal} writing the value into `out[at]` instead of returning it:
 * a double returned from a function that is not inlined is boxed on the heap,
 * and the loaders parse millions of them (the boxes were 0.2 GB of garbage for
 * a 2^20-symbol capture).
 *
 * The common shapes (at most 15 digits before the point, at most 19
 * significant digits, no leading zeros) take tight loops; any other shape
 * goes through the general digit-by-digit reader.
 * @example scanDecimalTo(bytes, 0, bytes.length, column, row); if (Number.isNaN(column[row])) fail();
 */
export function scanDecimalTo(bytes: Uint8Array, start: number, limit: number, out: Float64Array, at: number): void {
  let i = start;
  let negative = false;
  if (i < limit) {
    const c = bytes[i];
    if (c === 45) {
      negative = true;
      i++;
    } else if (c === 43) i++;
  }
  const intStart = i;
  let hi = 0;
  while (i < limit) {
    const d = bytes[i] - 48;
    if (d >>> 0 > 9) break;
    hi = hi * 10 + d;
    i++;
  }
  const intDigits = i - intStart;
  if (intDigits > 15 || (intDigits > 1 && bytes[intStart] === 48)) {
    out[at] = scanGeneral(bytes, start, limit);
    return;
  }
  let significant = hi === 0 ? 0 : intDigits;
  let lo = 0;
  let loDigits = 0;
  let fracDigits = 0;
  if (i < limit && bytes[i] === 46) {
    i++;
    const fracStart = i;
    if (significant === 0) while (i < limit && bytes[i] === 48) i++;
    const from = i;
    let stop = i + 15 - significant;
    if (stop > limit) stop = limit;
    while (i < stop) {
      const d = bytes[i] - 48;
      if (d >>> 0 > 9) break;
      hi = hi * 10 + d;
      i++;
    }
    significant += i - from;
    if (i === stop && i < limit) {
      const loFrom = i;
      let stop2 = i + 4;
      if (stop2 > limit) stop2 = limit;
      while (i < stop2) {
        const d = bytes[i] - 48;
        if (d >>> 0 > 9) break;
        lo = lo * 10 + d;
        i++;
      }
      loDigits = i - loFrom;
      if (i < limit && (bytes[i] - 48) >>> 0 <= 9) {
        out[at] = scanGeneral(bytes, start, limit);
        return;
      }
    }
    fracDigits = i - fracStart;
  }
  if (intDigits + fracDigits === 0) {
    scanned = start;
    out[at] = Number.NaN;
    return;
  }
  let exponent = -fracDigits;
  if (i < limit && (bytes[i] | 32) === 101) {
    let j = i + 1;
    let expNegative = false;
    if (j < limit && (bytes[j] === 45 || bytes[j] === 43)) {
      expNegative = bytes[j] === 45;
      j++;
    }
    const from = j;
    let e = 0;
    while (j < limit) {
      const d = bytes[j] - 48;
      if (d >>> 0 > 9) break;
      // Saturate: beyond 10^6 the value is 0 or Infinity anyway.
      if (e < 1e6) e = e * 10 + d;
      j++;
    }
    // '1e' is not a number (Number('1e') is NaN).
    if (j === from) {
      scanned = j;
      out[at] = Number.NaN;
      return;
    }
    exponent += expNegative ? -e : e;
    i = j;
  }
  scanned = i;
  if (significant === 0) out[at] = negative ? -0 : 0;
  else {
    mantissa[0] = hi;
    mantissa[1] = lo;
    assembleTo(negative, loDigits, exponent, bytes, start, i, out, at);
  }
}

/** The digit-by-digit reader for every shape (exponents, long integer parts, many digits). */
function scanGeneral(bytes: Uint8Array, start: number, end: number): number {
  let i = start;
  if (i >= end) {
    scanned = start;
    return Number.NaN;
  }
  let negative = false;
  const c = bytes[i];
  if (c === 45) {
    negative = true;
    i++;
  } else if (c === 43) i++;
  // hi: the first 15 significant digits; lo: digits 16 to 19 (count loDigits).
  let hi = 0;
  let lo = 0;
  let loDigits = 0;
  let significant = 0;
  let digits = 0;
  let exponent = 0;
  let inexact = false;
  while (i < end) {
    const d = bytes[i] - 48;
    if (d < 0 || d > 9) break;
    digits++;
    if (significant === 0 && d === 0) {
      // a leading zero
    } else if (significant < 15) {
      hi = hi * 10 + d;
      significant++;
    } else if (significant < 19) {
      lo = lo * 10 + d;
      loDigits++;
      significant++;
    } else {
      exponent++;
      if (d !== 0) inexact = true;
    }
    i++;
  }
  if (i < end && bytes[i] === 46) {
    i++;
    while (i < end) {
      const d = bytes[i] - 48;
      if (d < 0 || d > 9) break;
      digits++;
      if (significant === 0 && d === 0) {
        exponent--;
      } else if (significant < 15) {
        hi = hi * 10 + d;
        significant++;
        exponent--;
      } else if (significant < 19) {
        lo = lo * 10 + d;
        loDigits++;
        significant++;
        exponent--;
      } else if (d !== 0) inexact = true;
      i++;
    }
  }
  if (digits === 0) {
    scanned = start;
    return Number.NaN;
  }
  if (i < end && (bytes[i] === 101 || bytes[i] === 69)) {
    i++;
    let expNegative = false;
    if (i < end && (bytes[i] === 45 || bytes[i] === 43)) {
      expNegative = bytes[i] === 45;
      i++;
    }
    let e = 0;
    let expDigits = 0;
    while (i < end) {
      const d = bytes[i] - 48;
      if (d < 0 || d > 9) break;
      // Saturate: beyond 10^6 the value is 0 or Infinity anyway.
      if (e < 1e6) e = e * 10 + d;
      expDigits++;
      i++;
    }
    // '1e' is not a number (Number('1e') is NaN).
    if (expDigits === 0) {
      scanned = i;
      return Number.NaN;
    }
    exponent += expNegative ? -e : e;
  }
  scanned = i;
  if (significant === 0) return negative ? -0 : 0;
  if (inexact) return fallback(bytes, start, i);
  mantissa[0] = hi;
  mantissa[1] = lo;
  assembleTo(negative, loDigits, exponent, bytes, start, i, cell, 0);
  return cell[0];
}

/**
 * The digits of the number being assembled: hi (its first 15 significant digits) and lo
 * (the next loDigits). Handed over in a typed array, as doubles passed as arguments to a
 * function that is not inlined are boxed on the heap.
 */
const mantissa = new Float64Array(2);

/** m·10^e with m = hi·10^loDigits + lo ({@link mantissa}), correctly rounded, or the fallback, into out[at]. */
function assembleTo(
  negative: boolean,
  loDigits: number,
  exponent: number,
  bytes: Uint8Array,
  start: number,
  end: number,
  out: Float64Array,
  at: number,
): void {
  if (exponent > 22 || exponent < -22 || !LITTLE_ENDIAN) {
    out[at] = fallback(bytes, start, end);
    return;
  }
  const hi = mantissa[0];
  const lo = mantissa[1];
  let v: number;
  if (loDigits === 0) {
    // Clinger's fast path: m and 10^|e| exact, one rounding.
    v = exponent >= 0 ? hi * POW10[exponent] : hi / POW10[-exponent];
  } else {
    // m = hi·10^loDigits + lo as a double-double (mh, ml).
    let mh = twoProduct(hi, POW10[loDigits]);
    const me = productError[0];
    const s = mh + lo;
    const bv = s - mh;
    const sumError = mh - (s - bv) + (lo - bv);
    mh = s;
    const ml = sumError + me;
    // q = m·10^e as a double-double (q1, q2).
    let q1: number;
    let q2: number;
    if (exponent >= 0) {
      const p = POW10[exponent];
      q1 = twoProduct(mh, p);
      q2 = ml * p + productError[0];
    } else {
      const d = POW10[-exponent];
      q1 = mh / d;
      const p2 = twoProduct(q1, d);
      // mh − p2 is exact (Sterbenz: p2 is within one rounding of mh).
      const r = mh - p2 - productError[0] + ml;
      q2 = r / d;
    }
    v = q1 + q2;
    const rest = q2 - (v - q1);
    bits[0] = v;
    const high = words[1];
    let halfGap = HALF_GAP[(high >>> 20) & 0x7ff];
    // Below a power of two the gap is half as wide.
    if (rest < 0 && (high & 0xfffff) === 0 && words[0] === 0) halfGap *= 0.5;
    if (!(Math.abs(rest) < halfGap - v * 8.077935669463161e-28)) {
      out[at] = fallback(bytes, start, end);
      return;
    }
  }
  out[at] = negative ? -v : v;
}

// 8.077935669463161e-28 is 2^−90: the margin for the double-double error.

function fallback(bytes: Uint8Array, start: number, end: number): number {
  let text = '';
  for (let k = start; k < end; k++) text += String.fromCharCode(bytes[k]);
  const v = Number(text);
  return Number.isFinite(v) ? v : Number.NaN;
}
