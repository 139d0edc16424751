/**
 * Complex sample arrays.
 *
 * Complex data is one interleaved `Float64Array` `[re0, im0, re1, im1, …]`:
 * one allocation, real and imaginary parts side by side for the
 * multiply-accumulate loops, and fft.js's native layout. The brand keeps a
 * plain real array from being passed where complex samples are expected.
 */

declare const complexBrand: unique symbol;

/** Interleaved complex samples; `length` is twice the number of samples. */
export type ComplexArray = Float64Array & {
  /** Compile-time brand only: marks the array as interleaved complex. */
  readonly [complexBrand]: true;
};

/**
 * Allocates `samples` complex zeros.
 * @param samples number of complex samples (non-negative integer)
 * @throws RangeError when `samples` is not a non-negative integer
 * @example const z = complexArray(1024); // z.length === 2048
 */
export function complexArray(samples: number): ComplexArray {
  if (!Number.isInteger(samples) || samples < 0) {
    throw new RangeError(`complexArray: expected a non-negative integer sample count, received ${samples}`);
  }
  return new Float64Array(2 * samples) as ComplexArray;
}

/**
 * Views an interleaved `Float64Array` as complex samples (no copy).
 * @throws RangeError when the length is odd
 * @example const z = asComplex(new Float64Array([1, 0, 0, 1])); // 1 and j
 */
export function asComplex(data: Float64Array): ComplexArray {
  if (data.length % 2 !== 0) {
    throw new RangeError(`asComplex: expected an even length (re, im pairs), received length ${data.length}`);
  }
  return data as ComplexArray;
}

/**
 * Number of complex samples in `a`.
 * @example sampleCount(complexArray(10)) // 10
 */
export function sampleCount(a: ComplexArray): number {
  return a.length >> 1;
}

/**
 * Builds complex samples from separate real and imaginary parts.
 * @throws RangeError when the parts differ in length
 * @example fromParts([1, 2], [0, -1]) // [1, 0, 2, −1]: 1 and 2 − j
 */
export function fromParts(re: ArrayLike<number>, im: ArrayLike<number>): ComplexArray {
  if (re.length !== im.length) {
    throw new RangeError(`fromParts: real part has ${re.length} samples, imaginary part ${im.length}`);
  }
  const out = complexArray(re.length);
  for (let n = 0; n < re.length; n++) {
    out[2 * n] = re[n];
    out[2 * n + 1] = im[n];
  }
  return out;
}

/**
 * Copies samples `[start, end)` (in complex samples) into a new array.
 * @example sliceComplex(z, 2, 5) // samples 2, 3 and 4
 */
export function sliceComplex(a: ComplexArray, start: number, end: number): ComplexArray {
  return a.slice(2 * start, 2 * end) as ComplexArray;
}

/**
 * Concatenates complex arrays into one new array.
 * @example concatComplex([a, b]) // a's samples, then b's
 */
export function concatComplex(parts: readonly ComplexArray[]): ComplexArray {
  let total = 0;
  for (const p of parts) total += p.length;
  const out = new Float64Array(total) as ComplexArray;
  let offset = 0;
  for (const p of parts) {
    out.set(p, offset);
    offset += p.length;
  }
  return out;
}

/**
 * Mean power E|z|² of the samples (NaN for an empty array).
 * @example meanPower(fromParts([1, 0], [0, 1])) // 1
 */
export function meanPower(a: ComplexArray): number {
  let sum = 0;
  for (let i = 0; i < a.length; i++) sum += a[i] * a[i];
  return sum / (a.length >> 1);
}

/**
 * Multiplies every sample by the real factor `g`, in place. Returns `a`.
 * @example scaleInPlace(z, 1 / Math.sqrt(meanPower(z))); // unit power
 */
export function scaleInPlace(a: ComplexArray, g: number): ComplexArray {
  for (let i = 0; i < a.length; i++) a[i] *= g;
  return a;
}
