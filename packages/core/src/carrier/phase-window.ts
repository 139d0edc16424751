import { QUARTER_TURN } from './phase-unwrap.js';

/** Half windows the choice is kept within (symbols). */
export interface HalfWindowBounds {
  /** Least half window (default 4). */
  readonly min?: number;
  /** Largest half window (default 512: a window of 1,025 symbols, which no laser pair at tens of GBd is quiet enough to need more). */
  readonly max?: number;
}

/** What {@link chooseHalfWindow} found on a phase track. */
export interface HalfWindowChoice {
  /** The half window N: the estimator averages over 2N + 1 symbols. */
  readonly halfWindow: number;
  /**
   * σₙ²: the variance of the phase that one symbol (or one pair of
   * symbols, for a joint estimate) tells, rad² — the estimator's own noise
   * over a window of L symbols is σₙ²/L.
   */
  readonly estimatorNoise: number;
  /**
   * σₚ²: the variance per symbol of the phase walk, rad² (2π·Δν·T for
   * lasers of combined linewidth Δν, plus any slow wander of the outputs).
   */
  readonly phaseWalk: number;
  /** The window length L* = 2N + 1 before rounding and bounds, symbols (Infinity without a walk). */
  readonly optimalLength: number;
}

/**
 * The window length that minimizes the mean-square error of a rectangular
 * moving average of a Wiener phase in white noise. Averaging L = 2N + 1
 * observations θₖ₊ᵢ + nᵢ (i = −N … N; noise variance σₙ² each; a random walk
 * of variance σₚ² per step) around the centre gives
 *
 *   MSE(L) = σₙ²/L + σₚ²·(L² − 1)/(12·L)
 *
 * (the walk's part: Σᵢ (θₖ₊ᵢ − θₖ)/L has variance σₚ²·N(N + 1)/(3L)), which
 * is least at L* = √(12·σₙ²/σₚ² − 1) (≈ √(12·σₙ²/σₚ²); the trade-off of
 * feed-forward carrier recovery that Ip & Kahn, JLT 25(9), 2007, solve with
 * the Wiener filter — *from memory*). Without a walk, the longer the better:
 * Infinity.
 * @param estimatorNoise σₙ², rad² per symbol
 * @param phaseWalk σₚ², rad² per symbol
 * @returns L*, symbols (≥ 1)
 * @example optimalWindowLength(0.05, 4e-5) // ≈ 122 symbols: 16QAM near 12 dB, 200 kHz at 32 GBd
 */
export function optimalWindowLength(estimatorNoise: number, phaseWalk: number): number {
  if (!(phaseWalk > 0)) return Number.POSITIVE_INFINITY;
  return Math.sqrt(Math.max(1, (12 * estimatorNoise) / phaseWalk - 1));
}

/** The provisional phase tracks {@link chooseHalfWindow} reads. */
export interface ProvisionalTracks {
  /** The estimator's unwrapped phases over every symbol, rad. */
  readonly all: Float64Array;
  /** Its phases over the even-numbered symbols alone (symbols 0, 2, 4 …), rad. */
  readonly even: Float64Array;
  /** Its phases over the odd-numbered symbols alone (symbols 1, 3, 5 …), rad. */
  readonly odd: Float64Array;
}

/**
 * Chooses the half window of a carrier-phase estimator from phase tracks
 * the same estimator made with a provisional half window N₀ (so that its
 * efficiency at this SNR, and any slow wander of the outputs, are measured
 * rather than modelled), for the Wiener trade-off of
 * {@link optimalWindowLength}.
 *
 * The estimator's noise: the tracks over the even and over the odd symbols
 * alone see the same phase walk over the same span (their windows
 * interleave) but independent noise, each with L₀ = 2N₀ + 1 symbols, so
 * var(θ_even − θ_odd) = 2σₙ²/L₀ and σₙ² = L₀·var(θ_even − θ_odd)/2.
 *
 * The walk: over lags ℓ longer than L₀ the errors of two estimates of the
 * full track are independent, so its increments have variance
 * V(ℓ) = 2σₑ² + ℓ·σₚ²; two lags, ℓ₁ = L₀ + 1 and ℓ₂ = 4ℓ₁, give
 * σₚ² = (V(ℓ₂) − V(ℓ₁))/(ℓ₂ − ℓ₁).
 *
 * Differences and increments are taken modulo π/2 (the ambiguity of the
 * estimate), so that a slip of a provisional track does not count. Then
 * N = round((L* − 1)/2) within the bounds.
 * @param provisionalHalfWindow N₀ of the tracks
 * @returns the choice, or null for tracks too short to tell (fewer than 2ℓ₂ phases in all)
 * @example const choice = chooseHalfWindow({ all, even, odd }, 16); choice?.halfWindow
 */
export function chooseHalfWindow(
  tracks: ProvisionalTracks,
  provisionalHalfWindow: number,
  bounds: HalfWindowBounds = {},
): HalfWindowChoice | null {
  const min = bounds.min ?? 4;
  const max = bounds.max ?? 512;
  const l0 = 2 * provisionalHalfWindow + 1;
  const l1 = l0 + 1;
  const l2 = 4 * l1;
  const { all, even, odd } = tracks;
  if (all.length < 2 * l2) return null;
  const v1 = wrappedIncrementVariance(all, l1);
  const v2 = wrappedIncrementVariance(all, l2);
  const phaseWalk = Math.max(0, (v2 - v1) / (l2 - l1));
  // A floor of 1e-6 rad²: an estimator never tells the phase better than that from one symbol.
  const estimatorNoise = Math.max(1e-6, (l0 * wrappedDifferenceVariance(even, odd)) / 2);
  const optimalLength = optimalWindowLength(estimatorNoise, phaseWalk);
  const n = Number.isFinite(optimalLength) ? Math.round((optimalLength - 1) / 2) : max;
  return { halfWindow: Math.min(max, Math.max(min, n)), estimatorNoise, phaseWalk, optimalLength };
}

/** Variance of (aₖ − bₖ) folded into (−π/4, π/4], over the shorter of the two. */
function wrappedDifferenceVariance(a: Float64Array, b: Float64Array): number {
  const n = Math.min(a.length, b.length);
  let s = 0;
  let q = 0;
  for (let k = 0; k < n; k++) {
    const raw = a[k] - b[k];
    const d = raw - QUARTER_TURN * Math.round(raw / QUARTER_TURN);
    s += d;
    q += d * d;
  }
  const mean = s / n;
  return q / n - mean * mean;
}

/** Variance of (θₖ₊ℓ − θₖ) folded into (−π/4, π/4]. */
function wrappedIncrementVariance(track: Float64Array, lag: number): number {
  let s = 0;
  let q = 0;
  const n = track.length - lag;
  for (let k = 0; k < n; k++) {
    const raw = track[k + lag] - track[k];
    const d = raw - QUARTER_TURN * Math.round(raw / QUARTER_TURN);
    s += d;
    q += d * d;
  }
  const mean = s / n;
  return q / n - mean * mean;
}
