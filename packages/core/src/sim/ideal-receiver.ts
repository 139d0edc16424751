import { fft, ifft } from '../dsp/fft.js';
import { rootRaisedCosineSpectrum } from '../dsp/rrc.js';
import { type ComplexArray, complexArray } from '../signal/complex.js';

/**
 * A reference receiver for tests and benchmarks: an ideal root-raised-cosine
 * matched filter with unit passband gain, sampled exactly at the symbol
 * instants k·T (or, with `outputSps` = 2, at k·T/2) of a field whose symbol 0
 * sits at sample 0 (as the simulator makes it). Works in the frequency domain over the whole field, treating it
 * as periodic; `field` must hold exactly `symbols` × `samplesPerSymbol`
 * samples (non-integer samples per symbol allowed).
 *
 * Matched filtering then decimation to P = `outputSps` samples per symbol in
 * the frequency domain: Y[k] = (1/D)·Σ_{m ≡ k (mod P·N)} H(f_m)·X[m],
 * D = samples / (P·N).
 * @param field the field, `symbols` × (samples per symbol) complex samples
 * @param outputSps 1 (default) or 2 output samples per symbol
 * @returns P·`symbols` complex samples
 * @throws RangeError when the field holds fewer samples than the output
 * @example const sym = idealMatchedFilter(sim.field.x, 4096, 32e9, 0.1); // one sample per symbol
 */
export function idealMatchedFilter(
  field: ComplexArray,
  symbols: number,
  symbolRate: number,
  rollOff: number,
  outputSps: 1 | 2 = 1,
): ComplexArray {
  const nIn = field.length >> 1;
  const nOut = outputSps * symbols;
  if (nIn < nOut) throw new RangeError(`idealMatchedFilter: ${nIn} samples cannot hold ${nOut} output samples`);
  const X = fft(field);
  const Y = complexArray(nOut);
  const d = nIn / nOut;
  for (let m = 0; m < nIn; m++) {
    const mm = m < nIn / 2 ? m : m - nIn;
    const f = (mm * symbolRate) / symbols;
    const h = rootRaisedCosineSpectrum(f, symbolRate, rollOff);
    if (h === 0) continue;
    const k = ((mm % nOut) + nOut) % nOut;
    Y[2 * k] += (h * X[2 * m]) / d;
    Y[2 * k + 1] += (h * X[2 * m + 1]) / d;
  }
  return ifft(Y);
}
