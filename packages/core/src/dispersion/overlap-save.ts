import { fft, ifft, isPowerOfTwo } from '../dsp/fft.js';
import { type ComplexArray, complexArray, concatComplex } from '../signal/complex.js';

/**
 * Streaming frequency-domain filtering by overlap-save (Oppenheim & Schafer,
 * Discrete-Time Signal Processing, 3rd ed., §8.7.3), centred so that it adds
 * no delay: for a filter whose impulse response h[k] lies within
 * |k| ≤ P = overlap/2,
 *
 *   y[n] = Σₖ h[k]·x[n − k]
 *
 * computed frame by frame: frame j holds input samples
 * [jL − P, jL − P + N), N = fftSize, L = N − overlap; Y = IFFT(H·FFT(frame));
 * its samples P … N − P − 1 are outputs jL … jL + L − 1 (the others are
 * wrapped by the circular convolution and discarded). The input is taken as
 * zero outside the stream; the output has as many samples as the input.
 * Frames sit at fixed absolute positions, so block sizes do not matter.
 *
 * A response given directly in the frequency domain (such as the dispersion
 * all-pass) has no strictly finite impulse response: the part of it beyond
 * ±P wraps around, which the overlap must make negligible.
 * @example const os = new OverlapSave(dispersionCompensationResponse(1024, 64e9, 1360), 200); const y = os.process(x); const tail = os.flush();
 */
export class OverlapSave {
  /** FFT size N, samples. */
  readonly fftSize: number;
  /** Samples P shared with the previous block; each FFT delivers N − P new samples. */
  readonly overlap: number;
  private readonly response: ComplexArray;
  private readonly step: number;
  private buf: Float64Array;
  private bufLen = 0;
  private received = 0;
  private emitted = 0;
  private readonly frame: ComplexArray;
  private readonly spectrum: ComplexArray;
  private readonly back: ComplexArray;

  /**
   * @param response H at the FFT bins (bin k at frequency binFrequency(k, N, fs)), N complex values, N a power of two
   * @param overlap samples shared by consecutive frames: an even number below N
   * @throws RangeError when N is not a power of two or the overlap is odd, negative or ≥ N
   */
  constructor(response: ComplexArray, overlap: number) {
    const n = response.length >> 1;
    if (!isPowerOfTwo(n)) throw new RangeError(`OverlapSave: expected a power-of-two FFT size, received ${n}`);
    if (!Number.isInteger(overlap) || overlap < 0 || overlap % 2 !== 0 || overlap >= n) {
      throw new RangeError(`OverlapSave: expected an even overlap in [0, ${n}), received ${overlap}`);
    }
    this.fftSize = n;
    this.overlap = overlap;
    this.step = n - overlap;
    this.response = response.slice() as ComplexArray;
    this.frame = complexArray(n);
    this.spectrum = complexArray(n);
    this.back = complexArray(n);
    this.buf = new Float64Array(0);
    this.reset();
  }

  /** Back to the start of a stream: P zeros stand for the samples before it. */
  reset(): void {
    // P zeros stand for the samples before the stream.
    this.buf = new Float64Array(2 * Math.max(this.fftSize, 1024));
    this.bufLen = this.overlap / 2;
    this.received = 0;
    this.emitted = 0;
  }

  /** Filters the next samples; returns the outputs that complete frames. */
  process(x: ComplexArray): ComplexArray {
    this.append(x);
    return this.run(Number.POSITIVE_INFINITY);
  }

  /** Ends the stream: the remaining outputs (zeros after the last input). Resets the engine. */
  flush(): ComplexArray {
    const remaining = this.received - this.emitted;
    if (remaining <= 0) {
      this.reset();
      return complexArray(0);
    }
    const frames = Math.ceil(remaining / this.step);
    const need = (frames - 1) * this.step + this.fftSize;
    if (need > this.bufLen) this.append(complexArray(need - this.bufLen), false);
    const out = this.run(remaining);
    this.reset();
    return out;
  }

  private append(x: Float64Array, counts = true): void {
    const n = x.length >> 1;
    const need = 2 * (this.bufLen + n);
    if (need > this.buf.length) {
      const grown = new Float64Array(Math.max(need, 2 * this.buf.length));
      grown.set(this.buf.subarray(0, 2 * this.bufLen));
      this.buf = grown;
    }
    this.buf.set(x, 2 * this.bufLen);
    this.bufLen += n;
    if (counts) this.received += n;
  }

  /** Runs every complete frame, delivering at most `limit` outputs. */
  private run(limit: number): ComplexArray {
    const N = this.fftSize;
    const P = this.overlap / 2;
    const L = this.step;
    const parts: ComplexArray[] = [];
    let at = 0;
    let delivered = 0;
    while (this.bufLen - at >= N && delivered < limit) {
      this.frame.set(this.buf.subarray(2 * at, 2 * (at + N)));
      fft(this.frame, this.spectrum);
      const s = this.spectrum;
      const h = this.response;
      // Y[k] = H[k]·X[k]
      for (let k = 0; k < N; k++) {
        const xr = s[2 * k];
        const xi = s[2 * k + 1];
        const hr = h[2 * k];
        const hi = h[2 * k + 1];
        s[2 * k] = hr * xr - hi * xi;
        s[2 * k + 1] = hr * xi + hi * xr;
      }
      ifft(s, this.back);
      const take = Math.min(L, limit - delivered);
      parts.push(this.back.slice(2 * P, 2 * (P + take)) as ComplexArray);
      delivered += take;
      at += L;
    }
    if (at > 0) {
      this.buf.copyWithin(0, 2 * at, 2 * this.bufLen);
      this.bufLen -= at;
    }
    this.emitted += delivered;
    return parts.length === 1 ? parts[0] : concatComplex(parts);
  }
}

/**
 * The FFT size (a power of two) that minimizes the work per output sample,
 * N·log₂N/(N − overlap), among N ≥ max(2·overlap, 64) up to 2²⁰.
 * @example overlapSaveSize(200) // the power-of-two FFT size with the least work per output sample
 */
export function overlapSaveSize(overlap: number): number {
  let best = 64;
  let bestCost = Number.POSITIVE_INFINITY;
  for (let n = 64; n <= 1 << 20; n *= 2) {
    if (n < 2 * overlap) continue;
    const cost = (n * Math.log2(n)) / (n - overlap);
    if (cost < bestCost) {
      bestCost = cost;
      best = n;
    }
  }
  return best;
}

/**
 * Frequency response, on an N-point FFT grid, of centred taps h[−P … P]
 * (2P + 1 complex values, the middle one at lag 0): H[k] = Σ h[m]·e^(−j2πkm/N).
 * @throws RangeError when the taps are an even number or longer than N
 * @example const H = responseOfCenteredTaps(taps, 1024); // taps: an odd number of complex taps
 */
export function responseOfCenteredTaps(taps: ComplexArray, fftSize: number): ComplexArray {
  const L = taps.length >> 1;
  if (L % 2 === 0 || L > fftSize) {
    throw new RangeError(`responseOfCenteredTaps: expected an odd number of taps up to ${fftSize}, received ${L}`);
  }
  const P = (L - 1) / 2;
  const h = complexArray(fftSize);
  for (let m = -P; m <= P; m++) {
    const i = (m + fftSize) % fftSize;
    h[2 * i] = taps[2 * (m + P)];
    h[2 * i + 1] = taps[2 * (m + P) + 1];
  }
  return fft(h);
}
