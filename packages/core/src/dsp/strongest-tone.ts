import type { ComplexArray } from '../signal/complex.js';
import { complexArray } from '../signal/complex.js';
import { fft, nextPowerOfTwo } from './fft.js';

/** A sequence and its weight in a summed periodogram. */
export interface WeightedSequence {
  /** N complex samples. */
  readonly z: ComplexArray;
  /** Its weight in the sum. */
  readonly weight: number;
}

/** The tone {@link strongestTone} found. */
export interface Tone {
  /** ν, cycles per sample, in [−½, ½). */
  readonly frequency: number;
  /** P(ν), the summed periodogram there. */
  readonly power: number;
}

/**
 * The frequency of the strongest tone of a weighted sum of periodograms,
 *
 *   P(ν) = Σᵢ wᵢ·|Σₙ zᵢ[n]·e^(−j2πνn)|²,   ν̂ = argmax P(ν)
 *
 * the maximum-likelihood frequency of a single tone common to the
 * sequences. The coarse peak comes from a zero-padded FFT; the sub-bin
 * step then maximizes the continuous P(ν) (the DTFT, evaluated directly) by
 * golden-section search between the neighbouring padded bins.
 * @param sequences one or more sequences, each at least one sample
 * @param padding zero-padding of the FFT over the next power of two of the longest length (a power of two)
 * @example const { frequency } = strongestTone([{ z: products, weight: 1 }], 4); // cycles per sample
 */
export function strongestTone(sequences: readonly WeightedSequence[], padding: number): Tone {
  let n = 1;
  for (const s of sequences) n = Math.max(n, s.z.length >> 1);
  const size = nextPowerOfTwo(n) * padding;
  const power = new Float64Array(size);
  const padded = complexArray(size);
  for (const { z, weight } of sequences) {
    padded.fill(0);
    padded.set(z);
    const Z = fft(padded);
    for (let k = 0; k < size; k++) power[k] += weight * (Z[2 * k] * Z[2 * k] + Z[2 * k + 1] * Z[2 * k + 1]);
  }
  let peak = 0;
  for (let k = 1; k < size; k++) if (power[k] > power[peak]) peak = k;
  const nuPeak = (peak < size / 2 ? peak : peak - size) / size;

  // Golden-section search of the continuous periodogram between the neighbouring bins.
  const g = (Math.sqrt(5) - 1) / 2;
  let a = nuPeak - 1 / size;
  let b = nuPeak + 1 / size;
  let c = b - g * (b - a);
  let d = a + g * (b - a);
  let pc = dtftPower(sequences, c);
  let pd = dtftPower(sequences, d);
  // 40 steps shrink the bracket by 0.618⁴⁰ ≈ 4e-9 of two bins: far below the statistical error.
  for (let it = 0; it < 40; it++) {
    if (pc > pd) {
      b = d;
      d = c;
      pd = pc;
      c = b - g * (b - a);
      pc = dtftPower(sequences, c);
    } else {
      a = c;
      c = d;
      pc = pd;
      d = a + g * (b - a);
      pd = dtftPower(sequences, d);
    }
  }
  let nu = (a + b) / 2;
  nu -= Math.round(nu); // back into [−½, ½]
  if (nu >= 0.5) nu -= 1;
  return { frequency: nu, power: Math.max(pc, pd) };
}

// P(ν) = Σ weight·|Σₙ zₙ·e^(−j2πνn)|². The phasor is advanced by multiplication
// and recomputed exactly every 256 samples so that rounding cannot build up.
function dtftPower(sequences: readonly WeightedSequence[], nu: number): number {
  const w = -2 * Math.PI * nu;
  const stepRe = Math.cos(w);
  const stepIm = Math.sin(w);
  let total = 0;
  for (const { z, weight } of sequences) {
    const n = z.length >> 1;
    let sr = 0;
    let si = 0;
    let pr = 1;
    let pi = 0;
    for (let k = 0; k < n; k++) {
      if ((k & 255) === 0) {
        pr = Math.cos(w * k);
        pi = Math.sin(w * k);
      }
      const zr = z[2 * k];
      const zi = z[2 * k + 1];
      sr += zr * pr - zi * pi;
      si += zr * pi + zi * pr;
      const t = pr * stepRe - pi * stepIm;
      pi = pr * stepIm + pi * stepRe;
      pr = t;
    }
    total += weight * (sr * sr + si * si);
  }
  return total;
}
