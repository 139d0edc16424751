/**
 * Physical constants and link relations of coherent optical transmission.
 */

/** Speed of light in vacuum, m/s (exact, SI). */
export const SPEED_OF_LIGHT = 299_792_458;

/** The 0.1 nm OSNR reference bandwidth at 1550 nm, Hz (12.5 GHz, common practice). */
export const OSNR_REFERENCE_BANDWIDTH_HZ = 12.5e9;

/** What the OSNR ↔ SNR conversions need to know about the signal. */
export interface OsnrOptions {
  /** Symbol rate, Bd. */
  readonly symbolRate: number;
  /** Polarizations carrying signal: 2 for dual polarization (default). */
  readonly polarizations?: 1 | 2;
  /** Reference bandwidth, Hz (default 12.5 GHz). */
  readonly referenceBandwidthHz?: number;
}

/**
 * Es/N0 per polarization (dB) for an OSNR (dB) in the reference bandwidth:
 * OSNR = (p·Rs / (2·Bref))·SNR (Essiambre et al., "Capacity limits of optical
 * fiber networks", JLT 28(4), 2010). At 32 GBd dual polarization,
 * SNR = OSNR − 4.08 dB.
 * @example osnrToSnrDb(20, { symbolRate: 32e9 }) // Es/N0 per polarization, dB
 */
export function osnrToSnrDb(osnrDb: number, options: OsnrOptions): number {
  return osnrDb - 10 * Math.log10(osnrFactor(options));
}

/**
 * OSNR (dB) in the reference bandwidth for an Es/N0 per polarization (dB).
 * @example snrToOsnrDb(osnrToSnrDb(20, { symbolRate: 32e9 }), { symbolRate: 32e9 }) // 20
 */
export function snrToOsnrDb(snrDb: number, options: OsnrOptions): number {
  return snrDb + 10 * Math.log10(osnrFactor(options));
}

function osnrFactor({ symbolRate, polarizations = 2, referenceBandwidthHz = OSNR_REFERENCE_BANDWIDTH_HZ }: OsnrOptions): number {
  if (!(symbolRate > 0)) throw new RangeError(`OSNR conversion: expected a positive symbol rate in Bd, received ${symbolRate}`);
  if (!(referenceBandwidthHz > 0)) {
    throw new RangeError(`OSNR conversion: expected a positive reference bandwidth in Hz, received ${referenceBandwidthHz}`);
  }
  return (polarizations * symbolRate) / (2 * referenceBandwidthHz);
}

/**
 * Phase (rad) of the fibre's chromatic-dispersion all-pass response at
 * baseband frequency `f` (Hz):
 *
 *   H(f) = exp(j·φ(f)),  φ(f) = −π·λ²·(D·z)·f² / c
 *
 * which is H(ω) = exp(−j·D·λ²·z·ω²/(4πc)) with ω = 2πf (Savory, Opt. Express
 * 16(2), 2008). `dispersionPsPerNm` is the accumulated dispersion D·z in ps/nm
 * (17 ps/(nm·km) × 80 km = 1,360 ps/nm), `wavelengthM` the carrier wavelength.
 * Convention of this library: the simulator's fibre multiplies by exp(jφ);
 * dispersion compensation multiplies by exp(−jφ).
 * @example dispersionPhase(10e9, 1360) // rad at +10 GHz after 80 km of standard fibre
 */
export function dispersionPhase(f: number, dispersionPsPerNm: number, wavelengthM = 1550e-9): number {
  const dz = dispersionPsPerNm * 1e-3; // ps/nm → s/m
  return (-Math.PI * wavelengthM * wavelengthM * dz * f * f) / SPEED_OF_LIGHT;
}

/**
 * Decibels to a power ratio.
 * @example dbToLinear(3) // ≈ 1.995
 */
export function dbToLinear(db: number): number {
  return 10 ** (db / 10);
}

/**
 * A power ratio in decibels.
 * @example linearToDb(100) // 20
 */
export function linearToDb(ratio: number): number {
  return 10 * Math.log10(ratio);
}
