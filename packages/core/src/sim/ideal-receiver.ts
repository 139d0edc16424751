import { fft, ifft } from '../dsp/fft.js';
import { rootRaisedCosineSpectrum } from '../dsp/rrc.js';
import { type ComplexArray, complexArray } from '../signal/complex.js';

/**
 * A reference receiver for tests and benchmarks: an ideal root-raised-cosine
 * matched filter with unit passband gain, sampled exactly at the symbol
 * instants k·T of a field whose symbol 0 sits at sample 0 (as the simulator
 * makes it). Works in the frequency domain over the whole field, treating it
 * as periodic; `field` must hold exactly `symbols` × `samplesPerSymbol`
 * samples (non-integer samples per symbol allowed).
 *
 * Matched filtering then decimation to one sample per symbol in the frequency
 * domain: Y[k] = (1/D)·Σ_{m ≡ k (mod N)} H(f_m)·X[m], D = samples/symbols.
 * @throws RangeError when the field holds fewer samples than symbols
 */
export function idealMatchedFilter(field: ComplexArray, symbols: number, symbolRate: number, rollOff: number): ComplexArray {
  const nOut = field.length >> 1;
  if (nOut < symbols) throw new RangeError(`idealMatchedFilter: ${nOut} samples cannot hold ${symbols} symbols`);
  const X = fft(field);
  const Y = complexArray(symbols);
  const d = nOut / symbols;
  for (let m = 0; m < nOut; m++) {
    const mm = m < nOut / 2 ? m : m - nOut;
    const f = (mm * symbolRate) / symbols;
    const h = rootRaisedCosineSpectrum(f, symbolRate, rollOff);
    if (h === 0) continue;
    const k = ((mm % symbols) + symbols) % symbols;
    Y[2 * k] += (h * X[2 * m]) / d;
    Y[2 * k + 1] += (h * X[2 * m + 1]) / d;
  }
  return ifft(Y);
}
