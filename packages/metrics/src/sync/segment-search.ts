import { type ComplexArray, complexArray, fft, ifft } from '@intradyne/core';
import { MAX_TIED_DELAYS } from './constants.js';
import type { ReferenceSource } from './reference-source.js';
import type { PolName } from './synchronize.js';

/** Transform length of the block-wise correlation: 2^17 (each block covers 2^17 − 2^15 + 1 delays). */
const BLOCK_FFT = 1 << 17;

/**
 * A delay ties with the peak when its correlation magnitude is at least this
 * fraction of the peak's: the segment then lies in a copy of the same
 * pattern for at least half its length; an unrelated delay stays within a
 * few rms of the floor, √L times below the peak.
 */
const TIE_FRACTION = 0.5;

/** The peaks of one correlation of the segment with the reference over every delay. */
export interface SegmentPeaks {
  /** Delays whose |c| ties with the peak, in ascending order (the peak's among them). */
  readonly delays: number[];
  /** |c| at each of those delays. */
  readonly magnitudes: number[];
  /** rms of |c| over every delay but the peak's. */
  readonly floor: number;
  /** True when more than {@link MAX_TIED_DELAYS} delays tie: the delays are then incomplete. */
  readonly overflow: boolean;
}

/** Writes the sequence a search correlates (the symbols, or adjacent-symbol products) of reference q from symbol `from` on. */
export type SequenceReader = (q: PolName, from: number, count: number, out: Float64Array) => void;

/** The coherent or differential sequence of a reference (see `synchronize`), read from its source. */
export function sequenceReader(source: ReferenceSource, differential: boolean): SequenceReader {
  if (!differential) return (q, from, count, out) => source.read(q, from, count, out);
  return (q, from, count, out) => {
    // tⱼ·t*ⱼ₋₁ for j = from … from + count − 1: read one symbol more in front, then multiply in place,
    // forwards (out[k] is still a symbol when out[k − 1] becomes a product).
    source.read(q, from - 1, count + 1, out);
    for (let k = 1; k <= count; k++) {
      const ar = out[2 * k];
      const ai = out[2 * k + 1];
      const br = out[2 * k - 2];
      const bi = out[2 * k - 1];
      out[2 * k - 2] = ar * br + ai * bi;
      out[2 * k - 1] = ai * br - ar * bi;
    }
  };
}

/**
 * Correlates a segment of L received values with a periodic reference
 * sequence u of Nt values at every delay D in [0, Nt), in memory that does
 * not grow with Nt:
 *
 *   c[D] = Σ_{m<L} s[m]·conj(u[(start + m − D) mod Nt])
 *
 * (received value n carries u[(n − D) mod Nt]; `start` is the index of s[0]
 * in the stream), and with conj(u) in place of u. Overlap-save, one block of
 * B = N − L + 1 delays at a time with transforms of N = 2^17: the window
 * w[i] = u[(start − D₀ − B + 1 + i) mod Nt], i < N, gives
 * c[D₀ + b] = conj(IDFT{W·conj(Ŝ)}[B − 1 − b]), and for conj(u) the
 * spectrum of conj(w), conj(W[−k]), so no other transform is needed.
 * Keeps, per correlation, the delays that tie with the peak (see
 * {@link SegmentPeaks}) and Σ|c|² for the floor.
 * @param segments L ≤ 2^15 values per received polarization
 * @returns peaks per received polarization, reference polarization, and plain or conjugated reference
 */
export function segmentPeaks(
  segments: Record<PolName, ComplexArray>,
  start: number,
  nt: number,
  read: SequenceReader,
): Record<PolName, Record<PolName, { plain: SegmentPeaks; conj: SegmentPeaks }>> {
  const n = BLOCK_FFT;
  const l = segments.x.length >> 1;
  const b = n - l + 1;
  const spectra = { x: complexArray(n), y: complexArray(n) };
  const padded = complexArray(n);
  for (const p of ['x', 'y'] as const) {
    padded.fill(0);
    padded.set(segments[p]);
    fft(padded, spectra[p]);
  }
  // One symbol more than the transform: the differential reader needs it.
  const window = complexArray(n + 1);
  const windowSpectrum = complexArray(n);
  const prod = complexArray(n);
  const out = complexArray(n);
  const trackers = {
    x: { x: [new PeakTracker(), new PeakTracker()], y: [new PeakTracker(), new PeakTracker()] },
    y: { x: [new PeakTracker(), new PeakTracker()], y: [new PeakTracker(), new PeakTracker()] },
  };
  for (let d0 = 0; d0 < nt; d0 += b) {
    const lags = Math.min(b, nt - d0);
    for (const q of ['x', 'y'] as const) {
      read(q, start - d0 - b + 1, n, window);
      fft(window.subarray(0, 2 * n) as ComplexArray, windowSpectrum);
      for (const p of ['x', 'y'] as const) {
        const s = spectra[p];
        for (const conjugate of [false, true]) {
          for (let k = 0; k < n; k++) {
            const sr = s[2 * k];
            const si = s[2 * k + 1];
            if (conjugate) {
              // conj(W[−k]·S[k])
              const j = (n - k) % n;
              const wr = windowSpectrum[2 * j];
              const wi = windowSpectrum[2 * j + 1];
              prod[2 * k] = wr * sr - wi * si;
              prod[2 * k + 1] = -(wr * si + wi * sr);
            } else {
              // W[k]·conj(S[k])
              const wr = windowSpectrum[2 * k];
              const wi = windowSpectrum[2 * k + 1];
              prod[2 * k] = wr * sr + wi * si;
              prod[2 * k + 1] = wi * sr - wr * si;
            }
          }
          ifft(prod, out);
          // Delay d0 + i sits at out[b − 1 − i].
          trackers[p][q][conjugate ? 1 : 0].addReversed(out, b - 1, d0, lags);
        }
      }
    }
  }
  const result = (t: PeakTracker[]) => ({ plain: t[0].peaks(nt), conj: t[1].peaks(nt) });
  return {
    x: { x: result(trackers.x.x), y: result(trackers.x.y) },
    y: { x: result(trackers.y.x), y: result(trackers.y.y) },
  };
}

/** The largest |c|² seen (at most MAX_TIED_DELAYS + 1 of them) and Σ|c|², over delays added in any order. */
class PeakTracker {
  private readonly delays = new Int32Array(MAX_TIED_DELAYS + 1);
  private readonly m2 = new Float64Array(MAX_TIED_DELAYS + 1);
  private size = 0;
  /** Index of the smallest kept |c|². */
  private least = 0;
  private total = 0;

  /**
   * Adds |c|² of delays `first` … `first + count − 1`, read from the complex values
   * c[last], c[last − 1], …: one call per block, as a double passed to a method that
   * is not inlined is boxed on the heap (millions of them for a long reference).
   */
  addReversed(c: Float64Array, last: number, first: number, count: number): void {
    // Summed in the same order as one delay at a time: the floor is the same to the bit.
    let total = this.total;
    for (let i = 0; i < count; i++) {
      const e = last - i;
      const m2 = c[2 * e] * c[2 * e] + c[2 * e + 1] * c[2 * e + 1];
      total += m2;
      // Most delays are below every kept one: only those above the least kept go further.
      if (this.size === this.m2.length && !(m2 > this.m2[this.least])) continue;
      this.keep(first + i, m2);
    }
    this.total = total;
  }

  private keep(delay: number, m2: number): void {
    if (this.size < this.m2.length) {
      this.delays[this.size] = delay;
      this.m2[this.size] = m2;
      if (m2 < this.m2[this.least] || this.size === 0) this.least = this.size;
      this.size++;
      return;
    }
    if (!(m2 > this.m2[this.least])) return;
    this.delays[this.least] = delay;
    this.m2[this.least] = m2;
    let least = 0;
    for (let i = 1; i < this.size; i++) if (this.m2[i] < this.m2[least]) least = i;
    this.least = least;
  }

  peaks(nt: number): SegmentPeaks {
    let best = 0;
    for (let i = 1; i < this.size; i++) if (this.m2[i] > this.m2[best]) best = i;
    const max2 = this.m2[best];
    const tied: { delay: number; m2: number }[] = [];
    for (let i = 0; i < this.size; i++) {
      if (this.m2[i] >= TIE_FRACTION * TIE_FRACTION * max2) tied.push({ delay: this.delays[i], m2: this.m2[i] });
    }
    tied.sort((a, b) => a.delay - b.delay);
    return {
      delays: tied.map((t) => t.delay),
      magnitudes: tied.map((t) => Math.sqrt(t.m2)),
      floor: Math.sqrt(Math.max(this.total - max2, 0) / (nt - 1)),
      overflow: this.size === this.m2.length && tied.length === this.size,
    };
  }
}
