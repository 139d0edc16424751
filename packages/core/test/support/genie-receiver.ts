import {
  type ComplexArray,
  complexArray,
  type DualPol,
  dispersionPhase,
  fft,
  idealMatchedFilter,
  ifft,
  type JonesMatrix,
  type SimulatedCapture,
} from '../../src/index.js';

export interface GenieOptions {
  /** Differential group delay the capture was simulated with, ps. */
  readonly dgdPs?: number;
  /** Accumulated dispersion the capture was simulated with, ps/nm. */
  readonly dispersionPsPerNm?: number;
  /** Carrier wavelength, nm (default 1550, the simulator's default). */
  readonly wavelengthNm?: number;
}

/**
 * A reference receiver that knows the channel: the ideal matched filter at
 * 2 samples per symbol, then the exact inverse of the simulator's linear
 * channel, field_in = pspᴴ · DGD(f)⁻¹ · sopᴴ · field_out with the dispersion
 * undone too, applied per frequency, then the samples at the symbol instants.
 * Its data-aided SNR is the realized channel SNR of each polarization (the
 * matched-filter bound of this noise realization), which a perfect equalizer
 * would reach. Only for captures without carrier offset or phase noise.
 * @returns symbols, x and y in the transmitter's polarizations, N each
 */
export function genieReceiver(cap: SimulatedCapture, symbols: number, options: GenieOptions = {}): DualPol {
  const Rs = cap.symbolRate;
  const M = 2 * symbols;
  const X = fft(idealMatchedFilter(cap.truth.field.x, symbols, Rs, cap.rollOff, 2));
  const Y = fft(idealMatchedFilter(cap.truth.field.y, symbols, Rs, cap.rollOff, 2));
  const tau = (options.dgdPs ?? 0) * 1e-12;
  const D = options.dispersionPsPerNm ?? 0;
  const lambda = (options.wavelengthNm ?? 1550) * 1e-9;
  const OX = complexArray(M);
  const OY = complexArray(M);
  const v = new Float64Array(4);
  for (let m = 0; m < M; m++) {
    const mm = m < M / 2 ? m : m - M;
    const f = (mm * Rs) / symbols;
    v[0] = X[2 * m];
    v[1] = X[2 * m + 1];
    v[2] = Y[2 * m];
    v[3] = Y[2 * m + 1];
    applyHermitian(cap.truth.sop, v);
    // The simulator multiplied x by e^{j(φcd − πfτ)} and y by e^{j(φcd + πfτ)}.
    const cd = D === 0 ? 0 : dispersionPhase(f, D, lambda);
    rotate(v, 0, -(cd - Math.PI * f * tau));
    rotate(v, 2, -(cd + Math.PI * f * tau));
    applyHermitian(cap.truth.psp, v);
    OX[2 * m] = v[0];
    OX[2 * m + 1] = v[1];
    OY[2 * m] = v[2];
    OY[2 * m + 1] = v[3];
  }
  return { x: everyOther(ifft(OX), symbols), y: everyOther(ifft(OY), symbols) };
}

/** v ← mᴴ·v for v = [x re, x im, y re, y im]. */
function applyHermitian(m: JonesMatrix, v: Float64Array): void {
  const [ar, ai, br, bi] = v;
  // (mᴴ)₀₀ = conj(m₀₀), (mᴴ)₀₁ = conj(m₁₀), (mᴴ)₁₀ = conj(m₀₁), (mᴴ)₁₁ = conj(m₁₁)
  v[0] = m[0] * ar + m[1] * ai + m[4] * br + m[5] * bi;
  v[1] = m[0] * ai - m[1] * ar + m[4] * bi - m[5] * br;
  v[2] = m[2] * ar + m[3] * ai + m[6] * br + m[7] * bi;
  v[3] = m[2] * ai - m[3] * ar + m[6] * bi - m[7] * br;
}

function rotate(v: Float64Array, at: number, a: number): void {
  const c = Math.cos(a);
  const s = Math.sin(a);
  const re = v[at];
  const im = v[at + 1];
  v[at] = re * c - im * s;
  v[at + 1] = re * s + im * c;
}

function everyOther(z: ComplexArray, n: number): ComplexArray {
  const out = complexArray(n);
  for (let k = 0; k < n; k++) {
    out[2 * k] = z[4 * k];
    out[2 * k + 1] = z[4 * k + 1];
  }
  return out;
}
