import { DEFAULT_ROLL_OFF } from '../dsp/rrc.js';
import { MIN_TIMING_LINE } from '../frontend/iq-skew.js';
import { checkBlock, checkRate } from '../pipeline/block-checks.js';
import { type FieldBlock, fieldBlock } from '../pipeline/blocks.js';
import { BlockError, OptionError, type Stage, type StageRecord } from '../pipeline/stage.js';
import { dotComplex, InterpolationKernel } from '../resample/interpolation-kernel.js';
import { type ComplexArray, complexArray } from '../signal/complex.js';
import { squareTimingEstimate, squareTimingTone, type TimingTone } from './square-timing.js';

/** Samples per segment of the clock-offset acquisition. */
const ACQUISITION_SEGMENT = 2048;

/** Options of {@link gardnerClockRecovery}. */
export interface GardnerOptions {
  /** Transmitter roll-off β in (0, 1] (default 0.1): sets the detector gain. */
  readonly rollOff?: number;
  /**
   * Loop noise bandwidth times the symbol period, B_n·T (default 5e-4).
   * Wider acquires faster and follows faster clock wander; narrower jitters less.
   */
  readonly loopBandwidth?: number;
  /** Damping factor ζ (default 1/√2). */
  readonly damping?: number;
  /**
   * Where the first symbol is sought: 'square-timing' (default) estimates it
   * with {@link squareTimingEstimate} on the first `acquisitionSamples`
   * samples (held back until they arrive); a number gives it, in samples
   * from the first input sample, in [0, 2).
   */
  readonly initialTiming?: 'square-timing' | number;
  /** Samples of the acquisition span (default 65,536). */
  readonly acquisitionSamples?: number;
  /**
   * Estimate the clock offset on the acquisition span and start the loop's
   * integrator there (default true; with 'square-timing' only): the timing
   * line's phase on consecutive segments of 2,048 samples drifts by the
   * offset, so a loop narrow enough to be quiet need not pull a large
   * offset in by itself (±200 ppm and more at 2 samples per symbol).
   */
  readonly acquireClockOffset?: boolean;
}

/** What {@link gardnerClockRecovery} reports. */
export interface GardnerDiagnostics {
  /**
   * Estimated scope clock offset, ppm (input samples per symbol = 2·(1 + ppm·1e-6)):
   * the loop integrator averaged over the last complete 1,024 symbols (its
   * current value before that).
   */
  readonly clockOffsetPpm: number;
  /** Symbols delivered. */
  readonly symbols: number;
  /** Initial timing used, samples. */
  readonly initialTiming: number;
  /** Clock offset estimated on the acquisition span and loaded into the integrator, ppm (0 when not estimated or not trusted). */
  readonly acquiredClockOffsetPpm: number;
  /**
   * How consistently the timing line turned from segment to segment of the
   * acquisition span, 0…1 (|Σ c₍ₛ₊₁₎·c*ₛ| / Σ |c₍ₛ₊₁₎|·|cₛ|); below 0.5 the
   * offset estimate is not used (NaN when not estimated).
   */
  readonly acquisitionCoherence: number;
  /**
   * Strength of the timing line over the acquisition span, |Σₛ|cₛ|| / power
   * (see {@link squareTimingTone}); below {@link MIN_TIMING_LINE} the offset
   * estimate is not used (NaN when not estimated). A differential group delay
   * of half a symbol cancels the line of the total power whatever the
   * polarization state.
   */
  readonly acquisitionLineStrength: number;
  /** Mean-square normalized detector output over the last 1,024 symbols (small when locked). */
  readonly errorPower: number;
  /** Detector gain K_p used, per symbol of timing error. */
  readonly detectorGain: number;
}

/**
 * Clock recovery at 2 samples per symbol: a Gardner timing-error detector
 * (Gardner, "A BPSK/QPSK timing-error detector for sampled receivers", IEEE
 * Trans. Commun. 34(5), 1986) driving a band-limited interpolator through a
 * proportional-plus-integral loop filter, so that the output holds exactly 2
 * samples per symbol with the symbol instants on the even samples (output 0
 * is a symbol instant).
 *
 * Per symbol k, with the interpolated on-time samples a_k, a_(k−1) and the
 * midpoint m between them, summed over both polarizations and normalized by
 * a running power P of the on-time samples:
 *
 *   e_k = Re{ m*·(a_k − a_(k−1)) } / P              (Gardner; > 0 when late)
 *   I_k = I_(k−1) + K₂·e_k,   v_k = K₁·e_k + I_k    (loop filter)
 *   t_(k+1) = t_k + 2·(1 − v_k),  midpoint at t_k + (1 − v_k)   (input samples)
 *
 * with K₁ = 4ζθ/((1 + 2ζθ + θ²)·K_p), K₂ = 4θ²/((1 + 2ζθ + θ²)·K_p),
 * θ = B_nT/(ζ + 1/(4ζ)) (Rice, Digital Communications: A Discrete-Time
 * Approach, 2009, App. C). K_p is the slope at zero of the detector's
 * S-curve for raised-cosine pulses of the given roll-off (computed at
 * creation). The integrator I follows the clock offset: −I = ppm·1e-6.
 * A second-order loop tracks a frequency offset with no steady-state
 * timing error; the tests lock on ±20 and ±50 ppm at the default
 * B_nT = 5e-4.
 *
 * Acquisition: the symbol instants are placed, and the clock offset
 * estimated, on the first `acquisitionSamples` samples, cut into segments
 * of S = 2,048 samples: the square-timing line cₛ of each (Oerder & Meyr)
 * turns from one segment to the next by the offset δ (instants every
 * 2(1 + δ) samples: a drift of S·δ samples per segment, a turn of π·S·δ),
 * so the least-squares slope b of the unwrapped phases of cₛ against s
 * gives δ̂ = −b/(π·S), unambiguous for |δ| < 1/S (±488 ppm), and I starts
 * at −δ̂ — when the line is strong and steady enough to trust and b is
 * beyond three of its standard errors (a smaller offset is left to the
 * loop). The first instant comes from the fitted phase at the first
 * segment, carried back from its centre by the drift.
 *
 * The interpolator is a Kaiser-windowed sinc, flat to 70 dB over the
 * matched-filtered signal's band, (1 + β)/4 + 0.025 cycles per sample (at
 * most 0.45), with its stopband from 1 minus that on.
 *
 * @throws OptionError for options out of range
 * @example const clock = gardnerClockRecovery({ rollOff: 0.1, loopBandwidth: 1e-3 });
 */
export function gardnerClockRecovery(options: GardnerOptions = {}): Stage<'twoSps', 'twoSps', GardnerDiagnostics> {
  return new GardnerClockRecovery(options);
}

/**
 * Slope at τ = 0 of the Gardner detector's mean output per unit symbol
 * power for raised-cosine pulses g(t) of roll-off β (t in symbols):
 *   S(τ) = Σₘ g(m − ½ + τ)·[g(m + τ) − g(m − 1 + τ)]
 * @example gardnerDetectorGain(0.1) // the S-curve slope at zero timing error, for roll-off 0.1
 */
export function gardnerDetectorGain(rollOff: number): number {
  const s = (tau: number) => {
    let sum = 0;
    for (let m = -400; m <= 400; m++)
      sum +=
        raisedCosinePulse(m - 0.5 + tau, rollOff) *
        (raisedCosinePulse(m + tau, rollOff) - raisedCosinePulse(m - 1 + tau, rollOff));
    return sum;
  };
  const d = 1e-4;
  return (s(d) - s(-d)) / (2 * d);
}

/** Raised-cosine pulse at t symbols: sinc(t)·cos(πβt)/(1 − (2βt)²) (Proakis, 5th ed., §9.2). */
export function raisedCosinePulse(t: number, rollOff: number): number {
  const x = 2 * rollOff * t;
  const sinc = t === 0 ? 1 : Math.sin(Math.PI * t) / (Math.PI * t);
  if (Math.abs(Math.abs(x) - 1) < 1e-9) return (Math.PI / 4) * sinc;
  return (sinc * Math.cos(Math.PI * rollOff * t)) / (1 - x * x);
}

class GardnerClockRecovery implements Stage<'twoSps', 'twoSps', GardnerDiagnostics> {
  readonly name = 'gardner-clock-recovery';
  readonly input = 'twoSps' as const;
  readonly output = 'twoSps' as const;
  private readonly rollOff: number;
  private readonly bandwidth: number;
  private readonly damping: number;
  private readonly initial: 'square-timing' | number;
  private readonly acquisition: number;
  private readonly acquireOffset: boolean;
  private readonly kp: number;
  private readonly k1: number;
  private readonly k2: number;
  private readonly kernel: InterpolationKernel;
  private readonly H: number;
  private readonly c: Float64Array;
  // Input buffer (both polarizations) from absolute sample bufStart.
  private bufX = new Float64Array(0);
  private bufY = new Float64Array(0);
  private bufStart = 0;
  private bufLen = 0;
  private received = 0;
  private started = false;
  private sampleRate = Number.NaN;
  // Loop state.
  private t = 0;
  private onTime = true;
  private step = 2;
  private integ = 0;
  private power = 0;
  private symbols = 0;
  private t0 = 0;
  private prevX = new Float64Array(2);
  private prevY = new Float64Array(2);
  private midX = new Float64Array(2);
  private midY = new Float64Array(2);
  private errAcc = 0;
  private errRecent = 0;
  private integAcc = 0;
  private integRecent = Number.NaN;
  private acquiredPpm = 0;
  private coherence = Number.NaN;
  private lineStrength = Number.NaN;

  constructor(o: GardnerOptions) {
    this.rollOff = o.rollOff ?? DEFAULT_ROLL_OFF;
    if (!(this.rollOff > 0 && this.rollOff <= 1)) throw new OptionError(this.name, 'rollOff', 'a roll-off in (0, 1]', o.rollOff);
    this.bandwidth = o.loopBandwidth ?? 5e-4;
    if (!(this.bandwidth >= 1e-6 && this.bandwidth <= 0.05)) {
      throw new OptionError(this.name, 'loopBandwidth', 'B_n·T from 1e-6 to 0.05', o.loopBandwidth);
    }
    this.damping = o.damping ?? Math.SQRT1_2;
    if (!(this.damping >= 0.1 && this.damping <= 10)) throw new OptionError(this.name, 'damping', 'ζ from 0.1 to 10', o.damping);
    this.initial = o.initialTiming ?? 'square-timing';
    if (this.initial !== 'square-timing' && !(typeof this.initial === 'number' && this.initial >= 0 && this.initial < 2)) {
      throw new OptionError(this.name, 'initialTiming', "'square-timing' or a number of samples in [0, 2)", o.initialTiming);
    }
    this.acquisition = o.acquisitionSamples ?? 65536;
    if (!Number.isInteger(this.acquisition) || this.acquisition < 64) {
      throw new OptionError(this.name, 'acquisitionSamples', 'an integer ≥ 64', o.acquisitionSamples);
    }
    this.acquireOffset = o.acquireClockOffset ?? true;
    if (typeof this.acquireOffset !== 'boolean')
      throw new OptionError(this.name, 'acquireClockOffset', 'true or false', o.acquireClockOffset);
    this.kp = gardnerDetectorGain(this.rollOff);
    const z = this.damping;
    const th = this.bandwidth / (z + 1 / (4 * z));
    const den = (1 + 2 * z * th + th * th) * this.kp;
    this.k1 = (4 * z * th) / den;
    this.k2 = (4 * th * th) / den;
    // The matched-filtered signal occupies |f| ≤ (1 + β)·Rs/2, (1 + β)/4 of the rate at 2 samples per
    // symbol: the interpolator passes that with a margin, and its images (at 1 − f) stop beyond it.
    // For β = 0.1: 0.3 and 0.7 cycles per sample, 12 taps instead of the 24 of a 0.4–0.6 band.
    const passband = Math.min(0.45, (1 + this.rollOff) / 4 + 0.025);
    this.kernel = new InterpolationKernel({ passband, stopband: 1 - passband, attenuationDb: 70 });
    this.H = this.kernel.halfTaps;
    this.c = new Float64Array(this.kernel.taps);
    this.reset();
  }

  process(block: FieldBlock<'twoSps'>): FieldBlock<'twoSps'> {
    checkBlock(this.name, block, 'twoSps');
    this.sampleRate = checkRate(this.name, this.sampleRate, block.sampleRate);
    this.append(block.x, block.y);
    if (!this.started) {
      if (this.initial === 'square-timing' && this.received < this.acquisition) return this.emptyOut();
      this.start();
    }
    return this.run(false);
  }

  flush(): FieldBlock<'twoSps'> | null {
    if (Number.isNaN(this.sampleRate)) return null;
    if (!this.started) this.start();
    return this.run(true);
  }

  reset(): void {
    this.bufX = new Float64Array(2 * 4096);
    this.bufY = new Float64Array(2 * 4096);
    // H zeros stand for the samples before the stream.
    this.bufStart = -this.H;
    this.bufLen = this.H;
    this.received = 0;
    this.started = false;
    this.sampleRate = Number.NaN;
    this.t = 0;
    this.t0 = 0;
    this.onTime = true;
    this.step = 2;
    this.integ = 0;
    this.power = 0;
    this.symbols = 0;
    this.prevX.fill(0);
    this.prevY.fill(0);
    this.midX.fill(0);
    this.midY.fill(0);
    this.errAcc = 0;
    this.errRecent = 0;
    this.integAcc = 0;
    this.integRecent = Number.NaN;
    this.acquiredPpm = 0;
    this.coherence = Number.NaN;
    this.lineStrength = Number.NaN;
  }

  diagnostics(): GardnerDiagnostics {
    return {
      clockOffsetPpm: -(Number.isNaN(this.integRecent) ? this.integ : this.integRecent) * 1e6,
      symbols: this.symbols,
      initialTiming: this.t0,
      acquiredClockOffsetPpm: this.acquiredPpm,
      acquisitionCoherence: this.coherence,
      acquisitionLineStrength: this.lineStrength,
      errorPower: this.errRecent,
      detectorGain: this.kp,
    };
  }

  describe(): StageRecord {
    return {
      stage: this.name,
      options: {
        rollOff: this.rollOff,
        loopBandwidth: this.bandwidth,
        damping: this.damping,
        initialTiming: this.initial,
        acquisitionSamples: this.acquisition,
        acquireClockOffset: this.acquireOffset,
      },
    };
  }

  private emptyOut(): FieldBlock<'twoSps'> {
    return fieldBlock('twoSps', complexArray(0), complexArray(0), this.sampleRate, 2);
  }

  private start(): void {
    this.started = true;
    if (this.initial !== 'square-timing') {
      this.t = this.initial;
    } else {
      const n = Math.min(this.received, this.acquisition);
      if (n < 64) {
        this.t = 0;
      } else {
        const off = 2 * this.H; // skip the leading zeros
        const x = this.bufX.subarray(off, off + 2 * n) as ComplexArray;
        const y = this.bufY.subarray(off, off + 2 * n) as ComplexArray;
        this.t = this.acquire(x, y, n);
      }
    }
    this.t0 = this.t;
  }

  /**
   * The first symbol instant (samples in [0, 2)) from the acquisition span
   * of n samples, and, when asked and the span holds two segments or more,
   * the clock offset loaded into the integrator (see the class doc).
   */
  private acquire(x: ComplexArray, y: ComplexArray, n: number): number {
    const segments = Math.floor(n / ACQUISITION_SEGMENT);
    const wrap = (eps: number) => {
      const t = 2 * (eps - Math.floor(eps));
      return t >= 2 ? 0 : t;
    };
    if (!this.acquireOffset || segments < 3) return wrap(squareTimingEstimate(x, y));
    // The line's phase per segment, unwrapped along the span (a turn of less than π per segment).
    const phase = new Float64Array(segments);
    let sumRe = 0;
    let sumIm = 0;
    let sumMag = 0;
    let lines = 0;
    let power = 0;
    let prev: TimingTone | null = null;
    for (let s = 0; s < segments; s++) {
      const from = 2 * s * ACQUISITION_SEGMENT;
      const to = from + 2 * ACQUISITION_SEGMENT;
      const tone = squareTimingTone(x.subarray(from, to) as ComplexArray, y.subarray(from, to) as ComplexArray);
      if (prev) {
        // c₍ₛ₊₁₎·c*ₛ
        const re = tone.re * prev.re + tone.im * prev.im;
        const im = tone.im * prev.re - tone.re * prev.im;
        sumRe += re;
        sumIm += im;
        sumMag += Math.hypot(tone.re, tone.im) * Math.hypot(prev.re, prev.im);
        phase[s] = phase[s - 1] + Math.atan2(im, re);
      } else phase[s] = Math.atan2(tone.im, tone.re);
      prev = tone;
      lines += Math.hypot(tone.re, tone.im);
      power += tone.power;
    }
    this.coherence = sumMag > 0 ? Math.hypot(sumRe, sumIm) / sumMag : 0;
    this.lineStrength = power > 0 ? lines / power : 0;
    // Least squares: phase = a + b·(s − s̄); b is the turn per segment, a the phase at the span's centre.
    const mid = (segments - 1) / 2;
    let a = 0;
    let sxy = 0;
    let sxx = 0;
    for (let s = 0; s < segments; s++) {
      a += phase[s] / segments;
      sxy += (s - mid) * phase[s];
      sxx += (s - mid) ** 2;
    }
    const b = sxy / sxx;
    let residual = 0;
    for (let s = 0; s < segments; s++) residual += (phase[s] - a - b * (s - mid)) ** 2;
    const slopeError = Math.sqrt(residual / (segments - 2) / sxx);
    // The first segment's centre sits at s = 0 (its line at half a segment from the first sample).
    const atFirst = (turn: number) => -(a - turn * mid) / (2 * Math.PI);
    // Trusted only from a line strong and steady enough, and only when it says more than its own spread:
    // a faint line's phase is noise, and an offset within 3 standard errors of 0 is left to the loop.
    const trusted = this.coherence >= 0.5 && this.lineStrength >= MIN_TIMING_LINE && Math.abs(b) > 3 * slopeError;
    if (!trusted) return wrap(atFirst(this.coherence >= 0.5 && this.lineStrength >= MIN_TIMING_LINE ? b : 0));
    const delta = -b / (Math.PI * ACQUISITION_SEGMENT);
    this.integ = -delta;
    this.acquiredPpm = delta * 1e6;
    // Carried back from the first segment's centre to its first sample by the drift over half a segment.
    return wrap(atFirst(b) - (delta * ACQUISITION_SEGMENT) / 4);
  }

  private append(x: ComplexArray, y: ComplexArray): void {
    const n = x.length >> 1;
    if (y.length !== x.length) throw new BlockError(`${this.name}: x has ${n} samples, y has ${y.length >> 1}`);
    const need = 2 * (this.bufLen + n);
    if (need > this.bufX.length) {
      const cap = Math.max(need, 2 * this.bufX.length);
      const nx = new Float64Array(cap);
      const ny = new Float64Array(cap);
      nx.set(this.bufX.subarray(0, 2 * this.bufLen));
      ny.set(this.bufY.subarray(0, 2 * this.bufLen));
      this.bufX = nx;
      this.bufY = ny;
    }
    this.bufX.set(x, 2 * this.bufLen);
    this.bufY.set(y, 2 * this.bufLen);
    this.bufLen += n;
    this.received += n;
  }

  private run(end: boolean): FieldBlock<'twoSps'> {
    const H = this.H;
    if (end) {
      // Zeros after the end of the stream, for the interpolator's reach.
      const pad = complexArray(H + 2);
      const real = this.received;
      this.append(pad, pad);
      this.received = real;
    }
    // At most (samples available)/(1 − |v|) + 2 outputs: allocate generously, trim after.
    const avail = this.bufStart + this.bufLen - this.t;
    const cap = Math.max(0, Math.ceil(avail * 1.1) + 4);
    let ox = complexArray(cap);
    let oy = complexArray(cap);
    let count = 0;
    const c = this.c;
    for (;;) {
      const n0 = Math.floor(this.t);
      if (end ? this.t >= this.received : n0 + H >= this.received) break;
      if (count >= ox.length >> 1) {
        // The loop ran faster than 1.1 outputs per input sample: grow (per block, not per sample).
        const gx = complexArray(2 * (ox.length >> 1) + 4);
        const gy = complexArray(2 * (ox.length >> 1) + 4);
        gx.set(ox);
        gy.set(oy);
        ox = gx;
        oy = gy;
      }
      this.kernel.coefficients(this.t - n0, c);
      const start = n0 - H + 1 - this.bufStart;
      dotComplex(this.bufX, start, c, c.length, ox, count);
      dotComplex(this.bufY, start, c, c.length, oy, count);
      if (this.onTime) {
        this.update(ox, oy, count);
        this.t += this.step / 2;
      } else {
        this.midX[0] = ox[2 * count];
        this.midX[1] = ox[2 * count + 1];
        this.midY[0] = oy[2 * count];
        this.midY[1] = oy[2 * count + 1];
        this.t += this.step / 2;
      }
      this.onTime = !this.onTime;
      count++;
    }
    // Keep what the next output needs.
    const keepFrom = Math.min(Math.floor(this.t) - H + 1, this.bufStart + this.bufLen);
    const drop = keepFrom - this.bufStart;
    if (drop > 0) {
      this.bufX.copyWithin(0, 2 * drop, 2 * this.bufLen);
      this.bufY.copyWithin(0, 2 * drop, 2 * this.bufLen);
      this.bufLen -= drop;
      this.bufStart = keepFrom;
    }
    const x = ox.slice(0, 2 * count) as ComplexArray;
    const y = oy.slice(0, 2 * count) as ComplexArray;
    return fieldBlock('twoSps', x, y, this.sampleRate, 2);
  }

  /** Detector and loop filter at an on-time sample; sets the step to the next symbol. */
  private update(ox: Float64Array, oy: Float64Array, i: number): void {
    const ar = ox[2 * i];
    const ai = ox[2 * i + 1];
    const br = oy[2 * i];
    const bi = oy[2 * i + 1];
    const p = ar * ar + ai * ai + br * br + bi * bi;
    if (this.symbols === 0) {
      this.power = p;
    } else {
      this.power += (p - this.power) / 256;
      if (this.power > 0) {
        // e = Re{m*·(a_k − a_(k−1))} over both polarizations, / P
        const e =
          (this.midX[0] * (ar - this.prevX[0]) +
            this.midX[1] * (ai - this.prevX[1]) +
            this.midY[0] * (br - this.prevY[0]) +
            this.midY[1] * (bi - this.prevY[1])) /
          this.power;
        this.integ += this.k2 * e;
        const v = this.k1 * e + this.integ;
        this.step = 2 * (1 - v);
        this.errAcc += e * e;
        this.integAcc += this.integ;
        if (this.symbols % 1024 === 0) {
          this.errRecent = this.errAcc / 1024;
          this.integRecent = this.integAcc / 1024;
          this.errAcc = 0;
          this.integAcc = 0;
        }
      }
    }
    this.prevX[0] = ar;
    this.prevX[1] = ai;
    this.prevY[0] = br;
    this.prevY[1] = bi;
    this.symbols++;
  }
}
