import { type ComplexArray, complexArray, ifft } from '@intradyne/core';

/**
 * Folds a received stream onto one period of an Nt-symbol periodic
 * reference: F[m] = Σ_{n ≥ start, n ≡ m (mod Nt)} r[n]. Received symbol n
 * lands in bin n mod Nt, so delays found on F are absolute.
 * @param received Nr complex symbols
 * @param start first symbol used
 * @param period Nt, the reference length
 * @param out Nt complex bins to write (a new array when not given)
 * @returns Nt complex bins
 */
export function foldOntoPeriod(received: ComplexArray, start: number, period: number, out = complexArray(period)): ComplexArray {
  out.fill(0);
  const n = received.length >> 1;
  let m = start % period;
  for (let k = start; k < n; k++) {
    out[2 * m] += received[2 * k];
    out[2 * m + 1] += received[2 * k + 1];
    if (++m === period) m = 0;
  }
  return out;
}

/**
 * Circular cross-correlation of a folded stream with one period of a
 * reference, from their spectra:
 *
 *   c[D] = Σₘ F[m]·conj(t[(m − D) mod Nt]) = IDFT{ F̂ · conj(T̂) }[D],
 *
 * (the DFT sign and scaling of core's fft/ifft). With `conjugate`, t is
 * replaced by conj(t), whose spectrum is conj(T̂[(−k) mod Nt]), so no other
 * transform is needed.
 * @param foldedSpectrum F̂, Nt bins
 * @param referenceSpectrum T̂, Nt bins
 * @param scratch Nt complex bins for the product of the spectra, and `out` for c: buffers
 *   reused across the correlations of one search (new ones when not given), as each is as
 *   long as the reference
 * @returns c, Nt complex lags
 */
export function circularCorrelation(
  foldedSpectrum: ComplexArray,
  referenceSpectrum: ComplexArray,
  conjugate: boolean,
  scratch?: { readonly prod: ComplexArray; readonly out: ComplexArray },
): ComplexArray {
  const n = foldedSpectrum.length >> 1;
  const prod = scratch?.prod ?? complexArray(n);
  for (let k = 0; k < n; k++) {
    const j = conjugate ? (n - k) % n : k;
    const fr = foldedSpectrum[2 * k];
    const fi = foldedSpectrum[2 * k + 1];
    // conj(T̂[k]) or, for conj(t), T̂[−k] (the conjugate of its conjugate).
    const tr = referenceSpectrum[2 * j];
    const ti = conjugate ? referenceSpectrum[2 * j + 1] : -referenceSpectrum[2 * j + 1];
    prod[2 * k] = fr * tr - fi * ti;
    prod[2 * k + 1] = fr * ti + fi * tr;
  }
  return ifft(prod, scratch?.out);
}
