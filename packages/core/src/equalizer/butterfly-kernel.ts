/**
 * Pure kernels of the 2×2 butterfly equalizer. No allocation, no state: the
 * stage in `equalizer.ts` owns the taps and the delay lines and calls these
 * once per symbol.
 *
 * Tap layout: one `Float64Array` of 8·L numbers holding the four complex
 * filters hxx, hxy, hyx, hyy one after the other, each L interleaved complex
 * taps (L odd). Tap j multiplies the input sample j places before the newest
 * one in the filter window, so with the centre index c = (L − 1)/2 the output
 * for the symbol at input sample n is
 *
 *   x̂ = Σⱼ hxx[j]·x[n + c − j] + hxy[j]·y[n + c − j]
 *   ŷ = Σⱼ hyx[j]·x[n + c − j] + hyy[j]·y[n + c − j]
 *
 * and a centre spike (hxx[c] = hyy[c] = 1) passes sample n through.
 */

import type { UpdateRule } from './update-rule.js';

/** Offsets of the four filters in the tap array, in numbers (multiply by L). */
export const FILTER_XX = 0;
/** Offset of h_xy (y input to x output) in the tap array, in numbers (multiply by L). */
export const FILTER_XY = 2;
/** Offset of h_yx (x input to y output) in the tap array, in numbers (multiply by L). */
export const FILTER_YX = 4;
/** Offset of h_yy in the tap array, in numbers (multiply by L). */
export const FILTER_YY = 6;

/**
 * Butterfly outputs for one symbol.
 * @param taps 8·L numbers (layout above)
 * @param L taps per filter (odd)
 * @param ux interleaved complex delay line of the x input polarization
 * @param uy interleaved complex delay line of the y input polarization
 * @param newest index (in complex samples) of the newest sample of the window, n + c
 * @param out receives [x̂re, x̂im, ŷre, ŷim]
 * @example butterflyOutput(taps, 11, ux, uy, n + 5, out); // out = [x̂re, x̂im, ŷre, ŷim] of symbol n
 */
export function butterflyOutput(
  taps: Float64Array,
  L: number,
  ux: Float64Array,
  uy: Float64Array,
  newest: number,
  out: Float64Array,
): void {
  const oXY = 2 * L;
  const oYX = 4 * L;
  const oYY = 6 * L;
  let xr = 0;
  let xi = 0;
  let yr = 0;
  let yi = 0;
  let s = 2 * newest;
  for (let t = 0; t < 2 * L; t += 2, s -= 2) {
    const ar = ux[s];
    const ai = ux[s + 1];
    const br = uy[s];
    const bi = uy[s + 1];
    let hr = taps[t];
    let hi = taps[t + 1];
    xr += hr * ar - hi * ai;
    xi += hr * ai + hi * ar;
    hr = taps[oXY + t];
    hi = taps[oXY + t + 1];
    xr += hr * br - hi * bi;
    xi += hr * bi + hi * br;
    hr = taps[oYX + t];
    hi = taps[oYX + t + 1];
    yr += hr * ar - hi * ai;
    yi += hr * ai + hi * ar;
    hr = taps[oYY + t];
    hi = taps[oYY + t + 1];
    yr += hr * br - hi * bi;
    yi += hr * bi + hi * br;
  }
  out[0] = xr;
  out[1] = xi;
  out[2] = yr;
  out[3] = yi;
}

/**
 * Stochastic-gradient tap update of one output row (the two filters feeding
 * output x when `row` = 0, output y when `row` = 1):
 *
 *   h ← h + μ·e·u*
 *
 * with u the input window and e the rule's error for that output. Every rule
 * of this library (CMA, RDE, DD-LMS) is written in this form; only e differs.
 * @example updateRow(taps, 11, ux, uy, n + 5, 0, er, ei, 3e-4); // adapt the x row with the error e = er + j·ei
 */
export function updateRow(
  taps: Float64Array,
  L: number,
  ux: Float64Array,
  uy: Float64Array,
  newest: number,
  row: 0 | 1,
  er: number,
  ei: number,
  mu: number,
): void {
  const o1 = row === 0 ? 0 : 4 * L;
  const o2 = o1 + 2 * L;
  // μ·e once, outside the tap loop.
  const gr = mu * er;
  const gi = mu * ei;
  let s = 2 * newest;
  for (let t = 0; t < 2 * L; t += 2, s -= 2) {
    const ar = ux[s];
    const ai = ux[s + 1];
    const br = uy[s];
    const bi = uy[s + 1];
    // (gr + j·gi)·(ar − j·ai)
    taps[o1 + t] += gr * ar + gi * ai;
    taps[o1 + t + 1] += gi * ar - gr * ai;
    taps[o2 + t] += gr * br + gi * bi;
    taps[o2 + t + 1] += gi * br - gr * bi;
  }
}

/**
 * Sets the y-row from the x-row by the orthogonality relation of a unitary
 * 2×2 response (Kikuchi, Opt. Express 19(10), 2011):
 *
 *   hyy[j] = conj(hxx[L − 1 − j]),   hyx[j] = −conj(hxy[L − 1 − j])
 *
 * i.e. Hyy(ω) = Hxx(ω)*, Hyx(ω) = −Hxy(ω)*, so that
 * det H(ω) = |Hxx(ω)|² + |Hxy(ω)|² > 0 and output y is the polarization
 * orthogonal to output x: the two outputs cannot pick the same source.
 * @example deriveOrthogonalRow(taps, 11); // y row from the x row
 */
export function deriveOrthogonalRow(taps: Float64Array, L: number): void {
  const oYX = 4 * L;
  const oYY = 6 * L;
  const oXY = 2 * L;
  for (let j = 0; j < L; j++) {
    const r = 2 * (L - 1 - j);
    taps[oYY + 2 * j] = taps[r];
    taps[oYY + 2 * j + 1] = -taps[r + 1];
    taps[oYX + 2 * j] = -taps[oXY + r];
    taps[oYX + 2 * j + 1] = taps[oXY + r + 1];
  }
}

/**
 * How far the equalizer's 2×2 frequency response is from singular, as the
 * mean over `points` in-band frequencies of the Hadamard ratio
 *
 *   ρ(ω) = |det H(ω)| / (‖row x(ω)‖·‖row y(ω)‖)  ∈ [0, 1]
 *
 * 1 when the rows are orthogonal (the inverse of a unitary channel), 0 when
 * they are parallel: both outputs then extract the same source, whatever
 * delay separates them. Frequencies ω = 2π·f/fs are spread uniformly over
 * |f| ≤ `bandFraction`·fs/2 (the stage uses 0.4, i.e. |f| ≤ 0.4·Rs at
 * 2 samples per symbol, inside the signal band for any roll-off).
 * A row of zero norm counts as singular (ρ = 0).
 * @example rowOrthogonality(taps, 11, 17, 0.4) < 0.5 // singular
 */
export function rowOrthogonality(taps: Float64Array, L: number, points: number, bandFraction: number): number {
  const c = (L - 1) / 2;
  let sum = 0;
  for (let p = 0; p < points; p++) {
    const w = Math.PI * bandFraction * (points === 1 ? 0 : -1 + (2 * p) / (points - 1));
    // H(ω) = Σⱼ h[j]·e^{−jω(j − c)} for each of the four filters.
    let xxr = 0;
    let xxi = 0;
    let xyr = 0;
    let xyi = 0;
    let yxr = 0;
    let yxi = 0;
    let yyr = 0;
    let yyi = 0;
    for (let j = 0; j < L; j++) {
      const a = -w * (j - c);
      const cr = Math.cos(a);
      const ci = Math.sin(a);
      const t = 2 * j;
      xxr += taps[t] * cr - taps[t + 1] * ci;
      xxi += taps[t] * ci + taps[t + 1] * cr;
      xyr += taps[2 * L + t] * cr - taps[2 * L + t + 1] * ci;
      xyi += taps[2 * L + t] * ci + taps[2 * L + t + 1] * cr;
      yxr += taps[4 * L + t] * cr - taps[4 * L + t + 1] * ci;
      yxi += taps[4 * L + t] * ci + taps[4 * L + t + 1] * cr;
      yyr += taps[6 * L + t] * cr - taps[6 * L + t + 1] * ci;
      yyi += taps[6 * L + t] * ci + taps[6 * L + t + 1] * cr;
    }
    const detr = xxr * yyr - xxi * yyi - (xyr * yxr - xyi * yxi);
    const deti = xxr * yyi + xxi * yyr - (xyr * yxi + xyi * yxr);
    const nx = Math.sqrt(xxr * xxr + xxi * xxi + xyr * xyr + xyi * xyi);
    const ny = Math.sqrt(yxr * yxr + yxi * yxi + yyr * yyr + yyi * yyi);
    const norm = nx * ny;
    sum += norm > 0 ? Math.hypot(detr, deti) / norm : 0;
  }
  return sum / points;
}

/**
 * Separation index of an equalizer output from its second and fourth
 * moments m2 = E|z|², m4 = E|z|⁴, for a source with unit power and
 * E|a|⁴ = `kurtosis` (circular, E a² = 0):
 *
 *   σ = (m4 − 2·m2²) / ((kurtosis − 2)·m2²)
 *
 * The numerator is the fourth cumulant of z. For z = Σᵢ gᵢ·sᵢ + n (sᵢ the
 * independent source symbols, both polarizations and all delays; n Gaussian
 * noise, whose fourth cumulant is zero) it equals (kurtosis − 2)·Σ|gᵢ|⁴, and
 * Σ|gᵢ|⁴ ≤ (Σ|gᵢ|²)² with equality only for a single source (Shalvi &
 * Weinstein, IEEE Trans. Inf. Theory 36(2), 1990). Hence σ = 1 for a
 * perfectly separated noiseless output, 0.5 for an equal mix of the two
 * polarizations, 0 for Gaussian noise; an output equalized perfectly at
 * signal-to-noise ratio s gives σ = (s/(1 + s))².
 * @example separationIndex(1, 1.32, 1.32) // 1: a noiseless, separated 16QAM output
 */
export function separationIndex(m2: number, m4: number, kurtosis: number): number {
  if (!(m2 > 0)) return 0;
  return (m4 - 2 * m2 * m2) / ((kurtosis - 2) * m2 * m2);
}

/**
 * How far two equalizer outputs are from carrying one independent source
 * each, from their fourth-order cumulants at small lags. For outputs u and
 * v (x or y) and a lag ℓ,
 *
 *   c(u, v, ℓ) = cum(uₖ, u*ₖ, vₖ₊ℓ, v*ₖ₊ℓ) / ((κ − 2)·E|u|²·E|v|²),
 *   cum(a, a*, b, b*) = E|a|²|b|² − E|a|²·E|b|² − |E a·b*|² − |E a·b|²
 *
 * (κ = E|a|⁴ of the unit-power constellation). Writing each output as
 * Σᵢ gᵢ·sᵢ + noise over the independent source symbols sᵢ (both
 * polarizations, all delays), c(u, v, ℓ) = Σᵢ |g_{u,i}|²·|g_{v,i−ℓ}|² / (P_u·P_v):
 * zero unless one source symbol appears in both u and v(ℓ), whatever the
 * Gaussian noise (whose fourth cumulants vanish). So the largest of
 * c(x, y, ℓ) for |ℓ| ≤ maxLag and c(x, x, ℓ), c(y, y, ℓ) for 1 ≤ ℓ ≤ maxLag
 * is 0 for separated outputs free of inter-symbol interference at any SNR,
 * ½·sin²2φ for a unitary mix of the polarizations by φ, and ¼ for an
 * output that sums two adjacent symbols (the equalizer sampling between
 * symbols). Cumulants as a measure of dependence: Comon, "Independent
 * component analysis, a new concept?", Signal Processing 36(3), 1994
 * (*from memory*); its sampling spread over N symbols is about
 * 1.7/(|κ − 2|·√N).
 * @param x N outputs of x, in order (interleaved complex); y the same of y
 * @param n N
 * @param kurtosis κ
 * @param maxLag largest lag looked at, symbols
 * @returns the largest |c|, ≥ 0 (0 for n ≤ maxLag)
 * @example outputDependence(x, y, 8192, 1.32, 2) < 0.15 // the 16QAM outputs each carry one source
 */
export function outputDependence(x: Float64Array, y: Float64Array, n: number, kurtosis: number, maxLag: number): number {
  if (n <= maxLag) return 0;
  let worst = 0;
  for (let lag = -maxLag; lag <= maxLag; lag++) {
    worst = Math.max(worst, Math.abs(laggedCumulant(x, y, n, lag, kurtosis)));
    if (lag > 0) {
      worst = Math.max(worst, Math.abs(laggedCumulant(x, x, n, lag, kurtosis)));
      worst = Math.max(worst, Math.abs(laggedCumulant(y, y, n, lag, kurtosis)));
    }
  }
  return worst;
}

/** c(u, v, ℓ) of {@link outputDependence} over the symbols where both uₖ and vₖ₊ℓ exist. */
function laggedCumulant(u: Float64Array, v: Float64Array, n: number, lag: number, kurtosis: number): number {
  const from = Math.max(0, -lag);
  const to = Math.min(n, n - lag);
  const m = to - from;
  let pu = 0;
  let pv = 0;
  let puv = 0;
  let cr = 0;
  let ci = 0;
  let sr = 0;
  let si = 0;
  for (let k = from; k < to; k++) {
    const i = 2 * k;
    const j = 2 * (k + lag);
    const ar = u[i];
    const ai = u[i + 1];
    const br = v[j];
    const bi = v[j + 1];
    const a2 = ar * ar + ai * ai;
    const b2 = br * br + bi * bi;
    pu += a2;
    pv += b2;
    puv += a2 * b2;
    // a·b* and a·b
    cr += ar * br + ai * bi;
    ci += ai * br - ar * bi;
    sr += ar * br - ai * bi;
    si += ar * bi + ai * br;
  }
  pu /= m;
  pv /= m;
  if (!(pu > 0 && pv > 0)) return 0;
  const cum = puv / m - pu * pv - (cr * cr + ci * ci) / (m * m) - (sr * sr + si * si) / (m * m);
  return cum / ((kurtosis - 2) * pu * pv);
}

/** Numbers per symbol in the output scratch of the adapting kernels: x̂re, x̂im, ŷre, ŷim, cost x, cost y. */
export const ADAPT_STRIDE = 6;

/** Outputs of the first symbol of a segment, before the fused update pass takes over (one per isolate). */
const firstOutputs = new Float64Array(4);

/**
 * Filters and adapts `count` consecutive symbols with a radius-directed rule
 * (CMA: one ring; RDE: the nearest ring), the rule evaluated inline:
 *
 *   x̂ = Σⱼ hxx[j]·ux[n − j] + hxy[j]·uy[n − j],   ŷ likewise with hyx, hyy
 *   e = z·(Rᵢ² − |z|²),   i = #{bounds2 < |z|²}
 *   h_row ← h_row + μₐ·e_row·u*,   μₐ = μ for a < hold, μ·decay^(a − hold) after
 *
 * for symbols s = 0 … count − 1 with n = newest0 + 2s and adapted-symbol
 * count a = a0 + s; taps are updated when a is a multiple of `updateEvery`.
 * With `orthogonalY` only the x-row adapts and the y-row is derived from it
 * ({@link deriveOrthogonalRow}). One specialized loop per rule form (this
 * one and {@link adaptWithRule}) keeps each call site monomorphic: V8
 * compiles it once instead of deoptimizing a loop holding every rule's
 * branch each time a new schedule phase begins (measured: the first
 * captures of a sweep ran 3–4× slower than the steady state).
 * @param taps 8·L numbers (layout above), updated in place
 * @param out receives {@link ADAPT_STRIDE} numbers per symbol (x̂, ŷ, the rule's cost (Rᵢ² − |z|²)² per output)
 * @example
 * // CMA (one ring, R² = 1.32 for 16QAM) over 256 symbols of 2-Sa/symbol input, 15 taps:
 * adaptRadial(taps, 15, ux, uy, 14, 256, Float64Array.of(1.32), new Float64Array(0), 1e-3, 1, Infinity, 0, 1, false, out);
 */
export function adaptRadial(
  taps: Float64Array,
  L: number,
  ux: Float64Array,
  uy: Float64Array,
  newest0: number,
  count: number,
  rings2: Float64Array,
  bounds2: Float64Array,
  mu: number,
  decay: number,
  hold: number,
  a0: number,
  updateEvery: number,
  orthogonalY: boolean,
  out: Float64Array,
): void {
  const L2 = 2 * L;
  const oXY = 2 * L;
  const oYX = 4 * L;
  const oYY = 6 * L;
  const nBounds = bounds2.length;
  // Outputs of symbol s; `ready` when the previous symbol's update pass already computed them.
  let xr = 0;
  let xi = 0;
  let yr = 0;
  let yi = 0;
  let ready = false;
  for (let s = 0; s < count; s++) {
    const newest2 = 2 * (newest0 + 2 * s);
    if (!ready) {
      butterflyOutput(taps, L, ux, uy, newest0 + 2 * s, firstOutputs);
      xr = firstOutputs[0];
      xi = firstOutputs[1];
      yr = firstOutputs[2];
      yi = firstOutputs[3];
    }
    ready = false;
    const px = xr * xr + xi * xi;
    const py = yr * yr + yi * yi;
    let i = 0;
    while (i < nBounds && px > bounds2[i]) i++;
    const dx = rings2[i] - px;
    i = 0;
    while (i < nBounds && py > bounds2[i]) i++;
    const dy = rings2[i] - py;
    const o = ADAPT_STRIDE * s;
    out[o] = xr;
    out[o + 1] = xi;
    out[o + 2] = yr;
    out[o + 3] = yi;
    out[o + 4] = dx * dx;
    out[o + 5] = dy * dy;
    const a = a0 + s;
    if (updateEvery !== 1 && a % updateEvery !== 0) continue;
    const m = a < hold ? mu : mu * decay ** (a - hold);
    // μ·e with e = z·d
    const gxr = m * (dx * xr);
    const gxi = m * (dx * xi);
    if (orthogonalY) {
      updateRow(taps, L, ux, uy, newest2 >> 1, 0, dx * xr, dx * xi, m);
      deriveOrthogonalRow(taps, L);
      continue;
    }
    const gyr = m * (dy * yr);
    const gyi = m * (dy * yi);
    if (s + 1 === count) {
      // Both rows in one pass over the window: h += (gr + j·gi)·(ar − j·ai)
      for (let t = 0, q = newest2; t < L2; t += 2, q -= 2) {
        const ar = ux[q];
        const ai = ux[q + 1];
        const br = uy[q];
        const bi = uy[q + 1];
        taps[t] += gxr * ar + gxi * ai;
        taps[t + 1] += gxi * ar - gxr * ai;
        taps[oXY + t] += gxr * br + gxi * bi;
        taps[oXY + t + 1] += gxi * br - gxr * bi;
        taps[oYX + t] += gyr * ar + gyi * ai;
        taps[oYX + t + 1] += gyi * ar - gyr * ai;
        taps[oYY + t] += gyr * br + gyi * bi;
        taps[oYY + t + 1] += gyi * br - gyr * bi;
      }
      continue;
    }
    // The same update, and in the same pass the next symbol's outputs from each tap just updated
    // over its window (2 samples later: index q + 4): each tap is loaded once per symbol instead of
    // twice (measured about 15 % faster). Same expressions in the same order, so the same numbers.
    let nxr = 0;
    let nxi = 0;
    let nyr = 0;
    let nyi = 0;
    for (let t = 0, q = newest2; t < L2; t += 2, q -= 2) {
      const ar = ux[q];
      const ai = ux[q + 1];
      const br = uy[q];
      const bi = uy[q + 1];
      const cr = ux[q + 4];
      const ci = ux[q + 5];
      const er = uy[q + 4];
      const ei = uy[q + 5];
      let hr = taps[t] + (gxr * ar + gxi * ai);
      let hi = taps[t + 1] + (gxi * ar - gxr * ai);
      taps[t] = hr;
      taps[t + 1] = hi;
      nxr += hr * cr - hi * ci;
      nxi += hr * ci + hi * cr;
      hr = taps[oXY + t] + (gxr * br + gxi * bi);
      hi = taps[oXY + t + 1] + (gxi * br - gxr * bi);
      taps[oXY + t] = hr;
      taps[oXY + t + 1] = hi;
      nxr += hr * er - hi * ei;
      nxi += hr * ei + hi * er;
      hr = taps[oYX + t] + (gyr * ar + gyi * ai);
      hi = taps[oYX + t + 1] + (gyi * ar - gyr * ai);
      taps[oYX + t] = hr;
      taps[oYX + t + 1] = hi;
      nyr += hr * cr - hi * ci;
      nyi += hr * ci + hi * cr;
      hr = taps[oYY + t] + (gyr * br + gyi * bi);
      hi = taps[oYY + t + 1] + (gyi * br - gyr * bi);
      taps[oYY + t] = hr;
      taps[oYY + t + 1] = hi;
      nyr += hr * er - hi * ei;
      nyi += hr * ei + hi * er;
    }
    xr = nxr;
    xi = nxi;
    yr = nyr;
    yi = nyi;
    ready = true;
  }
}

/**
 * As {@link adaptRadial}, with the error from any rule object
 * (`rule.error`, once per symbol and polarization: DD-LMS, or a rule given
 * from outside), at a fixed step size μ.
 * @param z scratch of 4 numbers (the outputs), ex and ey of 2 (the errors)
 * @example adaptWithRule(taps, 15, ux, uy, 14, 256, ddLmsRule('16qam', 1e-4), 1e-4, 0, 1, new Float64Array(4), new Float64Array(2), new Float64Array(2), out);
 */
export function adaptWithRule(
  taps: Float64Array,
  L: number,
  ux: Float64Array,
  uy: Float64Array,
  newest0: number,
  count: number,
  rule: UpdateRule,
  mu: number,
  a0: number,
  updateEvery: number,
  z: Float64Array,
  ex: Float64Array,
  ey: Float64Array,
  out: Float64Array,
): void {
  for (let s = 0; s < count; s++) {
    const newest = newest0 + 2 * s;
    butterflyOutput(taps, L, ux, uy, newest, z);
    const o = ADAPT_STRIDE * s;
    out[o] = z[0];
    out[o + 1] = z[1];
    out[o + 2] = z[2];
    out[o + 3] = z[3];
    out[o + 4] = rule.error(z[0], z[1], 0, ex);
    out[o + 5] = rule.error(z[2], z[3], 1, ey);
    const a = a0 + s;
    if (updateEvery !== 1 && a % updateEvery !== 0) continue;
    updateRow(taps, L, ux, uy, newest, 0, ex[0], ex[1], mu);
    updateRow(taps, L, ux, uy, newest, 1, ey[0], ey[1], mu);
  }
}
