import FFT from 'fft.js';
import { type ComplexArray, complexArray } from '../signal/complex.js';

/**
 * Discrete Fourier transforms on interleaved complex arrays.
 *
 * Sign and scaling, stated once: the forward transform is
 * X[k] = Σₙ x[n]·e^(−j2πkn/N) (no scaling) and the inverse is
 * x[n] = (1/N)·Σₖ X[k]·e^(+j2πkn/N).
 *
 * Power-of-two sizes run on fft.js (radix-4) with one cached plan per size;
 * other sizes use Bluestein's chirp-z algorithm (Bluestein, IEEE Trans. Audio
 * Electroacoust. 18(4), 1970) on a power-of-two plan, so any length works.
 */

const plans = new Map<number, FFT>();

function plan(size: number): FFT {
  let p = plans.get(size);
  if (!p) {
    p = new FFT(size);
    plans.set(size, p);
  }
  return p;
}

/**
 * True when n is a power of two (n ≥ 2).
 * @example isPowerOfTwo(1024) // true
 */
export function isPowerOfTwo(n: number): boolean {
  return n >= 2 && (n & (n - 1)) === 0;
}

/**
 * Smallest power of two ≥ n (at least 2).
 * @example nextPowerOfTwo(1000) // 1024
 */
export function nextPowerOfTwo(n: number): number {
  let p = 2;
  while (p < n) p *= 2;
  return p;
}

/**
 * Forward DFT of `input` (N complex samples) into `out` (a new array when not given).
 * `out` must not be `input`.
 * @example const X = fft(fromParts([1, 0, 0, 0], [0, 0, 0, 0])); // [1, 0, 1, 0, 1, 0, 1, 0]: an impulse is flat
 */
export function fft(input: ComplexArray, out?: ComplexArray): ComplexArray {
  return transform(input, out, false);
}

/**
 * Inverse DFT with 1/N scaling. `out` must not be `input`.
 * @example const x = ifft(fft(signal)); // signal again, to rounding
 */
export function ifft(input: ComplexArray, out?: ComplexArray): ComplexArray {
  return transform(input, out, true);
}

function transform(input: ComplexArray, out: ComplexArray | undefined, inverse: boolean): ComplexArray {
  const n = input.length >> 1;
  const result = out ?? complexArray(n);
  if (result === input) throw new RangeError('fft: the output must be a different array from the input');
  if (n === 0) return result;
  if (n === 1) {
    result[0] = input[0];
    result[1] = input[1];
    return result;
  }
  if (isPowerOfTwo(n)) {
    const p = plan(n);
    if (inverse) p.inverseTransform(result, input);
    else p.transform(result, input);
    return result;
  }
  bluestein(input, result, inverse);
  return result;
}

interface Chirp {
  /** w[n] = e^(−jπn²/N), n < N. */
  readonly w: Float64Array;
  /** FFT of the conjugate chirp, wrapped to length M. */
  readonly kernel: Float64Array;
  readonly m: number;
}

const chirps = new Map<number, Chirp>();

function chirp(n: number): Chirp {
  const hit = chirps.get(n);
  if (hit) return hit;
  const m = nextPowerOfTwo(2 * n - 1);
  const w = new Float64Array(2 * n);
  for (let k = 0; k < n; k++) {
    // n² mod 2N keeps the angle small and exact for large n.
    const a = (Math.PI * ((k * k) % (2 * n))) / n;
    w[2 * k] = Math.cos(a);
    w[2 * k + 1] = -Math.sin(a);
  }
  const b = new Float64Array(2 * m);
  b[0] = 1;
  for (let k = 1; k < n; k++) {
    b[2 * k] = w[2 * k];
    b[2 * k + 1] = -w[2 * k + 1];
    b[2 * (m - k)] = w[2 * k];
    b[2 * (m - k) + 1] = -w[2 * k + 1];
  }
  const kernel = new Float64Array(2 * m);
  plan(m).transform(kernel, b);
  const c = { w, kernel, m };
  // Keep the cache small: chirps for large sizes are big.
  if (chirps.size > 8) chirps.clear();
  chirps.set(n, c);
  return c;
}

// X[k] = w[k]·Σₙ (x[n]·w[n])·conj(w[k − n]): a circular convolution of length M.
function bluestein(input: Float64Array, out: Float64Array, inverse: boolean): void {
  const n = input.length >> 1;
  const { w, kernel, m } = chirp(n);
  const p = plan(m);
  const a = new Float64Array(2 * m);
  // The inverse is the conjugate of the forward transform of the conjugate.
  const s = inverse ? -1 : 1;
  for (let k = 0; k < n; k++) {
    const xr = input[2 * k];
    const xi = s * input[2 * k + 1];
    a[2 * k] = xr * w[2 * k] - xi * w[2 * k + 1];
    a[2 * k + 1] = xr * w[2 * k + 1] + xi * w[2 * k];
  }
  const spec = new Float64Array(2 * m);
  p.transform(spec, a);
  for (let k = 0; k < m; k++) {
    const ar = spec[2 * k];
    const ai = spec[2 * k + 1];
    const br = kernel[2 * k];
    const bi = kernel[2 * k + 1];
    spec[2 * k] = ar * br - ai * bi;
    spec[2 * k + 1] = ar * bi + ai * br;
  }
  p.inverseTransform(a, spec);
  const scale = inverse ? 1 / n : 1;
  for (let k = 0; k < n; k++) {
    const cr = a[2 * k];
    const ci = a[2 * k + 1];
    out[2 * k] = scale * (cr * w[2 * k] - ci * w[2 * k + 1]);
    out[2 * k + 1] = s * scale * (cr * w[2 * k + 1] + ci * w[2 * k]);
  }
}

/**
 * Frequency in Hz of DFT bin k for an N-point transform at `sampleRate`:
 * bins from N/2 on are negative frequencies (the Nyquist bin of an even N is −fs/2).
 * @example binFrequency(3, 8, 64e9) // 24e9 Hz; bin 5 of 8 is −24e9 Hz
 */
export function binFrequency(k: number, n: number, sampleRate: number): number {
  return ((k < n / 2 ? k : k - n) * sampleRate) / n;
}
