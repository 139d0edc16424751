import { binFrequency } from '../dsp/fft.js';
import { dispersionPhase, SPEED_OF_LIGHT } from '../physics/link.js';
import { type ComplexArray, complexArray } from '../signal/complex.js';

/**
 * FIR length needed to compensate an accumulated dispersion D·z at a sample
 * period T = 1/fs (Savory, "Digital filters for coherent optical receivers",
 * Opt. Express 16(2), 2008, eq. (9)):
 *
 *   N = 2·⌊|D|·λ²·z/(2·c·T²)⌋ + 1
 *
 * the dispersive spread of the whole sampled band, |D·z|·λ²·fs/c, in samples.
 * @param dispersionPsPerNm accumulated dispersion D·z, ps/nm
 * @param sampleRate Sa/s
 * @param wavelengthM carrier wavelength, m (default 1550 nm)
 * @returns an odd tap count ≥ 1
 * @example cdTapCount(1360, 64e9) // 45 taps for 80 km of G.652 fibre at 64 GSa/s
 */
export function cdTapCount(dispersionPsPerNm: number, sampleRate: number, wavelengthM = 1550e-9): number {
  const dz = Math.abs(dispersionPsPerNm) * 1e-3; // ps/nm → s/m
  const spread = (dz * wavelengthM * wavelengthM * sampleRate * sampleRate) / SPEED_OF_LIGHT;
  return 2 * Math.floor(spread / 2) + 1;
}

/**
 * The compensating all-pass on an N-point FFT grid at `sampleRate`: the
 * inverse of the fibre response H(f) = exp(jφ(f)) of {@link dispersionPhase},
 *
 *   G[k] = exp(−j·φ(f_k)),  φ(f) = −π·λ²·(D·z)·f²/c,  f_k = binFrequency(k, N, fs)
 *
 * Sign convention of the library: the fibre (and the simulator) multiplies
 * the field spectrum by exp(jφ); compensation multiplies by exp(−jφ).
 * @example const H = dispersionCompensationResponse(4096, 64e9, 1360); // 80 km of standard fibre at 1550 nm
 */
export function dispersionCompensationResponse(
  fftSize: number,
  sampleRate: number,
  dispersionPsPerNm: number,
  wavelengthM = 1550e-9,
): ComplexArray {
  const g = complexArray(fftSize);
  for (let k = 0; k < fftSize; k++) {
    const phi = dispersionPhase(binFrequency(k, fftSize, sampleRate), dispersionPsPerNm, wavelengthM);
    g[2 * k] = Math.cos(phi);
    g[2 * k + 1] = -Math.sin(phi);
  }
  return g;
}
