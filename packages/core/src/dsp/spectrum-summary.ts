import type { PowerSpectrum } from './welch.js';

/** What a power spectrum says about a single-carrier signal. */
export interface SpectrumSummary {
  /** Mean level of the bins far from the signal (power/Hz), 0 when there are too few such bins. */
  readonly noiseFloor: number;
  /** Mean in-band level (power/Hz, noise included) over the flat centre of the band. */
  readonly plateau: number;
  /** Plateau over floor, dB (Infinity without a floor). */
  readonly plateauToFloorDb: number;
  /** Edges where the signal (above the floor) falls to half the plateau, Hz. */
  readonly halfPowerLowHz: number;
  /** Upper half-power edge, Hz. */
  readonly halfPowerHighHz: number;
  /** Width between the half-power edges, Hz: the −3 dB bandwidth. */
  readonly bandwidth3dBHz: number;
  /** Centre of the half-power band, Hz (a coarse carrier offset). */
  readonly centreHz: number;
  /** Band holding 99 % of the power above the floor (0.5 % below, 0.5 % above), Hz. */
  readonly occupiedLowHz: number;
  /** Upper edge of the 99 % band, Hz. */
  readonly occupiedHighHz: number;
  /** Width of the 99 % band, Hz. */
  readonly occupiedBandwidthHz: number;
  /** Symbol rate estimate, Bd: the signal power above the floor over the plateau level. */
  readonly symbolRateBd: number;
}

/**
 * Summarizes the spectrum of a raised-cosine shaped single-carrier signal
 * and estimates its symbol rate.
 *
 * Method. A root-raised-cosine transmitter gives a raised-cosine power
 * spectrum: flat at S₀ for |f| < (1 − β)Rs/2, falling with odd symmetry about
 * |f| = Rs/2, where it is exactly S₀/2 (Proakis & Salehi, Digital
 * Communications, 5th ed., §9.2, the raised-cosine spectrum). Two
 * consequences, both independent of the roll-off β:
 * - the half-power (−3 dB) bandwidth is Rs;
 * - the area of the spectrum is S₀·Rs, so Rs = ∫(P(f) − N₀)df / S₀.
 * The estimate uses the area, which averages over many bins and so is less
 * noisy than two crossings. Steps: smooth the PSD over ±N/256 bins; find the
 * half-power edges around the peak (linear interpolation); S₀ is the mean of
 * the PSD over the central 60 % of that band; N₀ is the mean of the bins
 * farther than 0.75·B₃ from the band centre (0 when they are fewer than 5 %
 * of the bins, i.e. below about 1.5 samples per symbol); iterate twice; then
 * integrate P − N₀ over |f − fc| ≤ 0.75·B₃. Valid for β ≤ 0.5; the spectrum is
 * treated as periodic, so a band that wraps around ±fs/2 is handled.
 * @throws RangeError when the spectrum holds no signal above its floor, or
 *   no band of positive width (a pure tone)
 * @example const s = summarizeSpectrum(welchPsd(block.x, 64e9)); s.symbolRateBd;
 */
export function summarizeSpectrum(s: PowerSpectrum): SpectrumSummary {
  const { psd, resolutionHz: df } = s;
  const n = psd.length;
  const at = (i: number) => psd[((i % n) + n) % n];
  const h = Math.max(1, Math.round(n / 256));
  const smooth = new Float64Array(n);
  for (let j = 0; j < n; j++) {
    let acc = 0;
    for (let k = -h; k <= h; k++) acc += at(j + k);
    smooth[j] = acc / (2 * h + 1);
  }
  const sm = (i: number) => smooth[((i % n) + n) % n];
  let peak = 0;
  for (let j = 1; j < n; j++) if (smooth[j] > smooth[peak]) peak = j;
  const sorted = Float64Array.from(smooth).sort();
  let floor = sorted[Math.floor(0.1 * n)];
  let plateau = smooth[peak];
  let lo = 0;
  let hi = 0;
  let centre = peak;
  for (let pass = 0; pass < 3; pass++) {
    const half = floor + (plateau - floor) / 2;
    if (!(plateau > floor)) throw new RangeError('summarizeSpectrum: expected a signal above the noise floor');
    // Walk out from the peak to the half-power crossings (fractional bin indexes).
    let a = peak;
    while (sm(a - 1) >= half && peak - a < n) a--;
    lo = a - (sm(a) - half) / (sm(a) - sm(a - 1));
    let b = peak;
    while (sm(b + 1) >= half && b - peak < n) b++;
    hi = b + (sm(b) - half) / (sm(b) - sm(b + 1));
    // A tone or a level step has no band to measure (and would give no positive width below).
    if (!(hi - lo > 0 && hi - lo < n)) throw new RangeError('summarizeSpectrum: expected a signal band wider than one bin');
    centre = (lo + hi) / 2;
    const width = hi - lo;
    let acc = 0;
    let count = 0;
    for (let j = Math.ceil(centre - 0.3 * width); j <= Math.floor(centre + 0.3 * width); j++) {
      acc += at(j);
      count++;
    }
    plateau = count > 0 ? acc / count : plateau;
    acc = 0;
    count = 0;
    for (let j = 0; j < n; j++) {
      const d = Math.abs(((((j - centre) % n) + n + n / 2) % n) - n / 2);
      if (d > 0.75 * width) {
        acc += psd[j];
        count++;
      }
    }
    floor = count >= 0.05 * n ? acc / count : 0;
  }
  const width = hi - lo;
  const reach = Math.min(Math.floor(0.75 * width), Math.floor(n / 2) - 1);
  const c0 = Math.round(centre);
  let area = 0;
  const above = new Float64Array(2 * reach + 1);
  for (let k = -reach; k <= reach; k++) {
    const v = at(c0 + k) - floor;
    area += v;
    above[k + reach] = Math.max(0, v);
  }
  let total = 0;
  for (const v of above) total += v;
  let cum = 0;
  let occLo = 0;
  let occHi = above.length - 1;
  for (let k = 0; k < above.length; k++) {
    const before = cum;
    cum += above[k];
    if (before < 0.005 * total && cum >= 0.005 * total) occLo = k;
    if (before < 0.995 * total && cum >= 0.995 * total) occHi = k;
  }
  const f = (i: number) => (i - Math.floor(n / 2)) * df;
  const f0 = f(c0 - reach);
  return {
    noiseFloor: floor,
    plateau,
    plateauToFloorDb: floor > 0 ? 10 * Math.log10(plateau / floor) : Number.POSITIVE_INFINITY,
    halfPowerLowHz: f(lo),
    halfPowerHighHz: f(hi),
    bandwidth3dBHz: width * df,
    centreHz: f(centre),
    occupiedLowHz: f0 + occLo * df,
    occupiedHighHz: f0 + (occHi + 1) * df,
    occupiedBandwidthHz: (occHi + 1 - occLo) * df,
    symbolRateBd: (area * df) / (plateau - floor),
  };
}
