import { OptionError } from './stage.js';

/** A decimated trace: point i of each series is the mean of the samples [i·every, (i + 1)·every). */
export interface TraceSeries {
  /** Samples per point. */
  readonly every: number;
  /** One array per series, all of the same length (at most the trace's capacity). */
  readonly series: readonly Float64Array[];
}

/**
 * A trace of a long stream in bounded memory: `series` parallel series of
 * samples, each point the mean of `every` consecutive samples. When the
 * `capacity` points are full, neighbouring points are merged pairwise
 * (pᵢ ← (p₂ᵢ + p₂ᵢ₊₁)/2) and `every` doubles, so a stream of n samples
 * keeps between capacity/2 and capacity points, whatever n. The points
 * depend only on the sequence of samples, not on how the caller cuts it
 * into blocks, so a stage keeps its block-size invariance.
 *
 * Per sample: `add` for each series, then `step`; neither allocates.
 * @throws OptionError for a series count below 1, an odd capacity below 2 or an `every` below 1
 * @example
 * const t = new DecimatedTrace(1, 512);
 * for (const v of values) { t.add(0, v); t.step(); }
 * const { every, series: [mean] } = t.result();
 */
export class DecimatedTrace {
  private readonly points: Float64Array[];
  private readonly sums: Float64Array;
  private count = 0;
  private length = 0;
  private every: number;

  constructor(
    /** Number of series traced side by side (≥ 1). */
    readonly seriesCount: number,
    /** Most points kept per series (even, ≥ 2). */
    readonly capacity: number,
    private readonly initialEvery = 1,
  ) {
    if (!Number.isInteger(seriesCount) || seriesCount < 1)
      throw new OptionError('decimated-trace', 'seriesCount', 'an integer ≥ 1', seriesCount);
    if (!Number.isInteger(capacity) || capacity < 2 || capacity % 2 !== 0)
      throw new OptionError('decimated-trace', 'capacity', 'an even integer ≥ 2', capacity);
    if (!Number.isInteger(initialEvery) || initialEvery < 1)
      throw new OptionError('decimated-trace', 'initialEvery', 'an integer ≥ 1', initialEvery);
    this.points = Array.from({ length: seriesCount }, () => new Float64Array(capacity));
    this.sums = new Float64Array(seriesCount);
    this.every = initialEvery;
  }

  /** Adds sample `value` to series `s` (0-based) for the current step. */
  add(s: number, value: number): void {
    this.sums[s] += value;
  }

  /** Ends the current sample of every series. */
  step(): void {
    this.count++;
    if (this.count < this.every) return;
    const at = this.length;
    for (let s = 0; s < this.seriesCount; s++) this.points[s][at] = this.sums[s] / this.every;
    this.sums.fill(0);
    this.count = 0;
    this.length = at + 1;
    if (this.length === this.capacity) this.halve();
  }

  /** The full points so far (a partial last interval is left out), copied. */
  result(): TraceSeries {
    return { every: this.every, series: this.points.map((p) => p.slice(0, this.length)) };
  }

  /** Back to the empty trace of the initial resolution. */
  reset(): void {
    this.sums.fill(0);
    this.count = 0;
    this.length = 0;
    this.every = this.initialEvery;
  }

  private halve(): void {
    const half = this.capacity >> 1;
    for (const p of this.points) {
      for (let i = 0; i < half; i++) p[i] = (p[2 * i] + p[2 * i + 1]) / 2;
    }
    this.length = half;
    this.every *= 2;
  }
}
