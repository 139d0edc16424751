/** Options of the linewidth estimate. */
export interface LinewidthOptions {
  /**
   * The two lags L₁ < L₂ (symbols) of the phase increments compared
   * (integers ≥ 1, default [18, 68]: for a window of 17 symbols). Both should exceed the estimator's
   * window 2N + 1, so that its errors are uncorrelated across each increment.
   */
  readonly lags?: readonly [number, number];
}

/**
 * Combined linewidth Δν (transmitter plus local oscillator) from a recovered
 * phase track. The laser phase is a Wiener process whose increment over L
 * symbols has variance 2π·Δν·T·L (DOMAIN.md, common practice); the estimate
 * adds an error of its own, which over lags longer than its window adds a
 * constant 2σₑ² whatever L. The difference of the increment variances at two
 * such lags cancels it:
 *
 *   V(L) = var(θₖ₊L − θₖ),   Δν̂ = (V(L₂) − V(L₁)) / (2π·T·(L₂ − L₁))
 *
 * i.e. the increment variance per symbol divided by 2πT. Variances (not mean
 * squares) so that a residual frequency offset, a constant mean increment,
 * does not count. Streaming, O(1) per symbol.
 * @example const acc = new LinewidthAccumulator(); for (const theta of phaseTrack) acc.push(theta); acc.linewidthHz(32e9);
 */
export class LinewidthAccumulator {
  private readonly l1: number;
  private readonly l2: number;
  private readonly ring: Float64Array;
  private pushed = 0;
  private s1 = 0;
  private q1 = 0;
  private n1 = 0;
  private s2 = 0;
  private q2 = 0;
  private n2 = 0;

  constructor(options: LinewidthOptions = {}) {
    const [l1, l2] = options.lags ?? [18, 68];
    this.l1 = l1;
    this.l2 = l2;
    this.ring = new Float64Array(l2 + 1);
  }

  /** Feeds the unwrapped phase of the next symbol, rad. */
  push(theta: number): void {
    const len = this.l2 + 1;
    const n = this.pushed;
    if (n >= this.l1) {
      const d = theta - this.ring[(n - this.l1) % len];
      this.s1 += d;
      this.q1 += d * d;
      this.n1++;
    }
    if (n >= this.l2) {
      const d = theta - this.ring[(n - this.l2) % len];
      this.s2 += d;
      this.q2 += d * d;
      this.n2++;
    }
    this.ring[n % len] = theta;
    this.pushed++;
  }

  /**
   * Δν̂ in Hz for a symbol rate in Bd; NaN until there are at least two
   * increments at the longer lag. May come out slightly negative on a track
   * without phase noise (a statistical estimate).
   */
  linewidthHz(symbolRate: number): number {
    if (this.n2 < 2) return Number.NaN;
    const v1 = this.q1 / this.n1 - (this.s1 / this.n1) ** 2;
    const v2 = this.q2 / this.n2 - (this.s2 / this.n2) ** 2;
    return ((v2 - v1) * symbolRate) / (2 * Math.PI * (this.l2 - this.l1));
  }

  /** Forgets every phase seen: back to the state of a new accumulator. */
  reset(): void {
    this.ring.fill(0);
    this.pushed = 0;
    this.s1 = this.q1 = this.n1 = 0;
    this.s2 = this.q2 = this.n2 = 0;
  }
}

/**
 * Combined linewidth from a whole phase track (see {@link LinewidthAccumulator}).
 * @param phase N unwrapped phases, rad, one per symbol
 * @param symbolRate Rs = 1/T, Bd
 * @returns Δν̂, Hz (NaN when the track is shorter than L₂ + 2)
 * @throws RangeError for lags that are not integers 1 ≤ L₁ < L₂ or a symbol rate that is not positive
 * @example const dnu = estimateLinewidth(theta, 32e9); // ≈ 1e5 for a 100 kHz pair of lasers
 */
export function estimateLinewidth(phase: Float64Array, symbolRate: number, options: LinewidthOptions = {}): number {
  checkLags('estimateLinewidth', options.lags);
  if (!(symbolRate > 0)) throw new RangeError(`estimateLinewidth: expected a positive symbol rate in Bd, received ${symbolRate}`);
  const acc = new LinewidthAccumulator(options);
  for (let k = 0; k < phase.length; k++) acc.push(phase[k]);
  return acc.linewidthHz(symbolRate);
}

/** @throws RangeError unless lags is undefined or two integers 1 ≤ L₁ < L₂ */
export function checkLags(where: string, lags: readonly [number, number] | undefined): void {
  if (lags === undefined) return;
  const ok = Array.isArray(lags) && lags.length === 2 && Number.isInteger(lags[0]) && Number.isInteger(lags[1]);
  if (!ok || lags[0] < 1 || lags[1] <= lags[0])
    throw new RangeError(`${where}: expected lags [L1, L2] with integers 1 ≤ L1 < L2, received ${JSON.stringify(lags)}`);
}
