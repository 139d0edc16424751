import { InputError } from '../errors/input-error.js';

/** Time steps used to infer the sample period: the first 1000. */
const LEAD_STEPS = 1000;

/**
 * Largest deviation of one time step from the inferred period, as a fraction
 * of it: 0.1. A dropped sample (a step of 2 periods), a repeated sample (a
 * step of 0) or rows out of order fail; the rounding of time stamps printed
 * with few digits passes.
 */
export const TIME_STEP_TOLERANCE = 0.1;

/**
 * Largest relative difference between the period of the first steps and the
 * mean step over the whole file, and between the inferred and a stated sample
 * rate: 1e-4 (100 ppm).
 */
export const SAMPLE_RATE_TOLERANCE = 1e-4;

/**
 * Checks a time column (seconds) as it streams and infers the sample rate:
 * the period T is the mean of the first 1000 steps, (t[K] − t[0])/K; every
 * step must lie within ±{@link TIME_STEP_TOLERANCE}·T of T, and the mean step
 * over the whole file within {@link SAMPLE_RATE_TOLERANCE} of T. The sample
 * rate is 1/T. A stated rate (from the descriptor) must agree within
 * {@link SAMPLE_RATE_TOLERANCE}.
 */
export class TimeAxis {
  private readonly lead = new Float64Array(LEAD_STEPS + 1);
  private readonly leadLines = new Int32Array(LEAD_STEPS + 1);
  private count = 0;
  private period = Number.NaN;
  private previous = 0;
  private last = 0;
  private lastLine = 0;

  constructor(
    private readonly file: string,
    private readonly column: string,
    private readonly statedRate: number | undefined,
  ) {}

  /** True once the sample rate is known (after 1001 time stamps). */
  get known(): boolean {
    return !Number.isNaN(this.period);
  }

  /** The inferred sample rate, Sa/s (NaN until known). */
  get sampleRate(): number {
    return 1 / this.period;
  }

  /** Takes the next `rows` time stamps and the line of each. */
  push(t: Float64Array, lines: Int32Array, rows: number): void {
    for (let i = 0; i < rows; i++) {
      const v = t[i];
      if (this.count <= LEAD_STEPS) {
        this.lead[this.count] = v;
        this.leadLines[this.count] = lines[i];
        if (this.count === LEAD_STEPS) {
          this.count++;
          this.settle();
        } else this.count++;
      } else {
        this.checkStep(this.previous, v, lines[i]);
        this.count++;
      }
      this.previous = v;
      this.last = v;
      this.lastLine = lines[i];
    }
  }

  /**
   * Ends the column: settles the rate if fewer than 1001 stamps came, and
   * checks the mean step.
   * @returns the sample rate, Sa/s
   * @throws InputError for a single time stamp without a stated rate, for
   *   non-uniform or non-increasing stamps, or for a disagreement with the
   *   stated rate
   */
  finish(): number {
    if (!this.known) {
      if (this.count < 2) {
        if (this.statedRate !== undefined) return this.statedRate;
        throw new InputError(
          { file: this.file, line: this.lastLine },
          `time column '${this.column}'`,
          'at least two time stamps to infer the sample rate (or a stated sample rate)',
          `${this.count} row`,
        );
      }
      this.settle();
    }
    const mean = (this.last - this.lead[0]) / (this.count - 1);
    if (!(Math.abs(mean / this.period - 1) <= SAMPLE_RATE_TOLERANCE)) {
      throw new InputError(
        { file: this.file, line: this.lastLine },
        `time column '${this.column}'`,
        `a mean step over the file within ${SAMPLE_RATE_TOLERANCE * 1e6} ppm of the step of the first rows (${this.period} s)`,
        `${mean} s`,
      );
    }
    return this.sampleRate;
  }

  private settle(): void {
    const k = this.count - 1;
    const period = (this.lead[k] - this.lead[0]) / k;
    if (!(period > 0)) {
      throw new InputError(
        { file: this.file, line: this.leadLines[k] },
        `time column '${this.column}'`,
        'increasing time stamps (seconds)',
        `a mean step of ${period} s over the first ${k} rows`,
      );
    }
    this.period = period;
    for (let i = 1; i <= k; i++) this.checkStep(this.lead[i - 1], this.lead[i], this.leadLines[i]);
    if (this.statedRate !== undefined && !(Math.abs(this.statedRate * period - 1) <= SAMPLE_RATE_TOLERANCE)) {
      throw new InputError(
        { file: this.file, line: this.leadLines[0] },
        `time column '${this.column}'`,
        `the stated sample rate ${this.statedRate} Sa/s (within ${SAMPLE_RATE_TOLERANCE * 1e6} ppm)`,
        `time stamps ${period} s apart (${1 / period} Sa/s)`,
      );
    }
  }

  private checkStep(a: number, b: number, line: number): void {
    const step = b - a;
    if (!(Math.abs(step - this.period) <= TIME_STEP_TOLERANCE * this.period)) {
      throw new InputError(
        { file: this.file, line },
        `time column '${this.column}'`,
        `uniformly spaced time stamps, a step of ${this.period} s ± ${TIME_STEP_TOLERANCE * 100} %`,
        `a step of ${step} s (from ${a} to ${b})`,
      );
    }
  }
}
