import { type Constellation, checkModulation, constellation, type ModulationName } from '../modulation/constellation.js';
import { snrFromMoments } from '../modulation/moment-snr.js';
import { checkBlock, checkRate } from '../pipeline/block-checks.js';
import { type FieldBlock, fieldBlock } from '../pipeline/blocks.js';
import { DecimatedTrace } from '../pipeline/decimated-trace.js';
import { LeadingSpan } from '../pipeline/leading-span.js';
import { type JsonValue, OptionError, type Stage, type StageRecord } from '../pipeline/stage.js';
import { type ComplexArray, complexArray } from '../signal/complex.js';
import type { DualPol } from '../signal/dual-pol.js';
import { BlindPhaseSearchKernel, type BlindPhaseSearchOptions, CoarseFinePhaseKernel } from './blind-phase-search.js';
import type { CycleSlip, SlipMethod } from './cycle-slip.js';
import { type DualPhaseKernel, JointPhaseTracker, relativePhase, SeparatePhaseKernels } from './dual-phase.js';
import { checkLags, LinewidthAccumulator } from './linewidth.js';
import { type PairPhaseKernel, type PhaseKernel, runKernel } from './phase-kernel.js';
import { chooseHalfWindow } from './phase-window.js';
import { PhaseJumpSlipDetector } from './slips-phase-jump.js';
import { ReferenceSlipDetector } from './slips-reference.js';
import { ViterbiViterbiKernel, type ViterbiViterbiOptions } from './viterbi-viterbi.js';

/** Options shared by the carrier-phase recovery stages. */
export interface PhaseRecoveryOptions {
  /** The modulation of the symbols (square QAM at unit average power). */
  readonly modulation: ModulationName;
  /**
   * N: the phase is averaged over 2N + 1 symbols (integer ≥ 0; default 16
   * for Viterbi–Viterbi, 12 for blind phase search), or 'auto': chosen on
   * the first `calibrationSymbols` symbols for the least mean-square phase
   * error at the SNR and phase noise found there (see
   * {@link chooseHalfWindow}: a provisional estimate with N = 16 measures
   * the estimator's noise and the phase walk, and N follows from the
   * Wiener trade-off, within 4 … 512; a stream shorter than
   * `calibrationSymbols` caps it further so that the default linewidth lags
   * fit in its first half).
   */
  readonly halfWindow?: number | 'auto';
  /**
   * 'separate' (default): each polarization has its own phase estimate.
   * 'joint': one estimate from both (the lasers' phase is common to them;
   * see {@link JointPhaseTracker}), with y's own phase offset Δ estimated on
   * the first `calibrationSymbols` symbols and then tracked; twice the
   * symbols per window for the same tracking speed.
   */
  readonly polarizations?: 'separate' | 'joint';
  /**
   * Symbols buffered at the start for the 'auto' window and the 'joint'
   * phase offset (integer ≥ 64, default 8192); the output starts once they
   * are in. Unused (nothing is buffered) with a given window and separate
   * polarizations.
   */
  readonly calibrationSymbols?: number;
  /**
   * Transmitted symbols, aligned with the stream (output symbol k was sent as
   * reference symbol k mod length, per polarization): when given, cycle slips
   * are detected against them; otherwise by phase-jump statistics.
   */
  readonly reference?: DualPol;
  /**
   * With a reference: only every P-th symbol is known (pilots) — output
   * symbol m·P was sent as reference symbol m mod length (integer ≥ 1,
   * default 1). Slip positions are then those of the first pilot after the slip.
   */
  readonly pilotPeriod?: number;
  /** Window of the slip detector (integer ≥ 8): known symbols against a reference (default 64), symbols for phase jumps (default 32). */
  readonly slipWindow?: number;
  /** Phase-jump threshold, rad (in (0, π/2), default π/4). */
  readonly slipThreshold?: number;
  /** Lags [L₁, L₂] of the linewidth estimate (default [2D + 2, 4(2D + 1)], D the look-ahead). */
  readonly linewidthLags?: readonly [number, number];
  /** Keep the whole phase track in the diagnostics (default false: memory grows with the stream). */
  readonly recordPhase?: boolean;
}

/** How the averaging window was set, and what the calibration found. */
export interface PhaseWindowDiagnostics {
  /** N in force (null until the calibration, when 'auto'). */
  readonly halfWindow: number | null;
  /** 'given' (a number in the options) or 'auto'. */
  readonly choice: 'given' | 'auto';
  /** σₙ²: phase variance one symbol (pair) tells, rad² (NaN unless 'auto' found it). */
  readonly estimatorNoise: number;
  /** σₚ²: phase-walk variance per symbol, rad² (NaN unless 'auto' found it). */
  readonly phaseWalk: number;
  /** SNR (Es/N0) of the calibration symbols from their moments, dB (NaN before the calibration or without one). */
  readonly snrDb: number;
  /** Symbols the calibration used (0 without one). */
  readonly calibrationSymbols: number;
}

/** What a carrier-phase recovery stage learned. */
export interface PhaseRecoveryDiagnostics {
  /** Symbols delivered so far, per polarization. */
  readonly symbols: number;
  /** 'separate' or 'joint' estimates (see {@link PhaseRecoveryOptions.polarizations}). */
  readonly polarizations: 'separate' | 'joint';
  /** The averaging window and its calibration. */
  readonly window: PhaseWindowDiagnostics;
  /** Joint estimates: y's output phase relative to x's now, Δ, rad (null for separate estimates or before the start). */
  readonly relativePhaseRad: number | null;
  /** Combined linewidth estimated from the phase tracks, Hz: the mean of the two polarizations (NaN until enough symbols). */
  readonly linewidthHz: number;
  /** The linewidth estimated on each polarization's phase track, Hz (NaN until enough symbols). */
  readonly linewidthPerPolHz: {
    /** From the x polarization, Hz. */
    readonly x: number;
    /** From the y polarization, Hz. */
    readonly y: number;
  };
  /** Cycle slips seen in the phase tracks (blind: no reference here). */
  readonly cycleSlips: {
    /** How they were detected. */
    readonly method: SlipMethod;
    /** Slips of both polarizations. */
    readonly count: number;
    /** The slips of the x polarization, in symbol order. */
    readonly x: readonly CycleSlip[];
    /** The slips of the y polarization, in symbol order. */
    readonly y: readonly CycleSlip[];
  };
  /**
   * The unwrapped phase tracks in bounded memory, rad: point i is the mean
   * phase of delivered symbols [i·every, (i + 1)·every), at most
   * {@link PHASE_TRACE_POINTS} points per polarization (see {@link DecimatedTrace}).
   */
  readonly phaseTrace: {
    /** Delivered symbols per point. */
    readonly every: number;
    /** Mean phase of the x polarization per point, rad. */
    readonly x: Float64Array;
    /** Mean phase of the y polarization per point, rad. */
    readonly y: Float64Array;
  };
  /** The unwrapped phase tracks, rad, one value per delivered symbol (with `recordPhase`). */
  readonly phase?: {
    /** Phase of the x polarization, rad, one per symbol. */
    readonly x: Float64Array;
    /** Phase of the y polarization, rad, one per symbol. */
    readonly y: Float64Array;
  };
}

/** Most points of the decimated phase trace, per polarization. */
export const PHASE_TRACE_POINTS = 2048;

/** Options of {@link viterbiViterbi}. */
export type ViterbiViterbiStageOptions = PhaseRecoveryOptions & Omit<ViterbiViterbiOptions, 'halfWindow'>;
/** Options of {@link blindPhaseSearch}. */
export type BlindPhaseSearchStageOptions = PhaseRecoveryOptions & Omit<BlindPhaseSearchOptions, 'halfWindow'>;

/** The provisional half window of the 'auto' calibration. */
const PROVISIONAL_HALF_WINDOW = 16;
/** Least |E a⁴| at which Δ is taken from the fourth power of y·x* (see relativePhaseOf). */
const FOURTH_POWER_RELATIVE_PHASE = 0.3;
/** The half window when 'auto' has too few symbols to choose (a capture shorter than the calibration's need). */
const FALLBACK_HALF_WINDOW = 24;

/**
 * Viterbi–Viterbi carrier-phase recovery (see {@link ViterbiViterbiKernel})
 * as a streaming stage on symbol blocks: each polarization is de-rotated by
 * its own unwrapped phase track, rₖ·e^(−jθₖ) (the polarizations are
 * estimated separately, so that a residual phase difference between the
 * equalizer's outputs does no harm). Holds back N symbols per block
 * (the look-ahead) and releases them at `flush`.
 * @throws OptionError for a bad modulation, window, exponent, selection or slip/linewidth option
 * @example const cpr = viterbiViterbi({ modulation: 'qpsk', halfWindow: 10 });
 */
export function viterbiViterbi(options: ViterbiViterbiStageOptions): Stage<'symbols', 'symbols', PhaseRecoveryDiagnostics> {
  const name = 'viterbi-viterbi';
  const c = constellation(checkModulation(name, 'modulation', options.modulation));
  checkHalfWindow(name, options.halfWindow);
  const p = options.amplitudeExponent;
  if (p !== undefined && !(p >= 0 && Number.isFinite(p)))
    throw new OptionError(name, 'amplitudeExponent', 'a finite number ≥ 0', p);
  const sel = options.selection;
  if (sel !== undefined && sel !== 'all' && sel !== 'diagonal-rings')
    throw new OptionError(name, 'selection', "'all' or 'diagonal-rings'", sel);
  const record = {
    modulation: c.name,
    halfWindow: options.halfWindow ?? 16,
    amplitudeExponent: p ?? 4,
    selection: sel ?? 'diagonal-rings',
  };
  const make = (halfWindow: number) => new ViterbiViterbiKernel(c, { ...options, halfWindow });
  return new PhaseRecoveryStage(name, record, make, c, { ...options, halfWindow: record.halfWindow }, true);
}

/**
 * Blind-phase-search carrier-phase recovery (see {@link BlindPhaseSearchKernel}
 * and, for `variant: 'coarse-fine'`, {@link CoarseFinePhaseKernel}) as a
 * streaming stage on symbol blocks. Holds back the look-ahead (N, or N₁ + N₂)
 * and releases it at `flush`.
 * @throws OptionError for a bad modulation, test-phase count, window, variant or slip/linewidth option
 * @example const cpr = blindPhaseSearch({ modulation: '16qam', testPhases: 32, halfWindow: 8 });
 */
export function blindPhaseSearch(options: BlindPhaseSearchStageOptions): Stage<'symbols', 'symbols', PhaseRecoveryDiagnostics> {
  const name = 'blind-phase-search';
  const c = constellation(checkModulation(name, 'modulation', options.modulation));
  checkInteger(name, 'testPhases', options.testPhases, 2);
  checkHalfWindow(name, options.halfWindow);
  checkInteger(name, 'fineHalfWindow', options.fineHalfWindow, 0);
  const variant = options.variant ?? 'single';
  if (variant !== 'single' && variant !== 'coarse-fine')
    throw new OptionError(name, 'variant', "'single' or 'coarse-fine'", variant);
  if (variant === 'single' && options.fineHalfWindow !== undefined)
    throw new OptionError(name, 'fineHalfWindow', "to be given only with variant 'coarse-fine'", options.fineHalfWindow);
  const halfWindow = options.halfWindow ?? 12;
  const testPhases = options.testPhases ?? defaultTestPhases(c);
  const record: Record<string, JsonValue> = {
    modulation: c.name,
    testPhases,
    halfWindow,
    variant,
  };
  if (variant === 'coarse-fine') record.fineHalfWindow = options.fineHalfWindow ?? halfWindow;
  const make = (n: number) =>
    variant === 'coarse-fine'
      ? new CoarseFinePhaseKernel(c, { ...options, testPhases, halfWindow: n })
      : new BlindPhaseSearchKernel(c, { ...options, testPhases, halfWindow: n });
  return new PhaseRecoveryStage(name, record, make, c, { ...options, halfWindow }, true);
}

/**
 * Test phases B by default: 32 down to 64QAM's least distance, 64 for finer
 * constellations (128QAM, 256QAM). The phase is quantized in steps of
 * π/(2B), an error of rms π/(2B·√12) that bounds the SNR at 1/that²: 36.9 dB
 * at B = 32, 42.9 dB at 64 (measured on DP-256QAM without phase noise: 37.7
 * and 41.2 dB of implementation SNR), which 256QAM at BER 1e-3 (28.4 dB)
 * needs.
 */
function defaultTestPhases(c: Constellation): number {
  return c.minDistance >= 0.3 ? 32 : 64;
}

function checkHalfWindow(name: string, v: unknown): void {
  if (v !== undefined && v !== 'auto' && (!Number.isInteger(v) || (v as number) < 0))
    throw new OptionError(name, 'halfWindow', "an integer ≥ 0 or 'auto'", v);
}

function checkInteger(name: string, option: string, v: unknown, min: number): void {
  if (v !== undefined && (!Number.isInteger(v) || (v as number) < min))
    throw new OptionError(name, option, `an integer ≥ ${min}`, v);
}

/** Per-polarization state: the symbols waiting for their phase, the detectors. */
interface PolState {
  /** Delay line of input symbols, D + 1 slots. */
  re: Float64Array;
  im: Float64Array;
  linewidth: LinewidthAccumulator;
  refSlips: ReferenceSlipDetector | null;
  jumpSlips: PhaseJumpSlipDetector | null;
  phaseChunks: Float64Array[];
  trace: DecimatedTrace;
}

/** The stage's options once its factory has resolved the defaults. */
type ResolvedPhaseOptions = PhaseRecoveryOptions & { readonly halfWindow: number | 'auto' };

class PhaseRecoveryStage implements Stage<'symbols', 'symbols', PhaseRecoveryDiagnostics> {
  readonly input = 'symbols' as const;
  readonly output = 'symbols' as const;
  private readonly reference: DualPol | null;
  private readonly recordPhase: boolean;
  private readonly pilotPeriod: number;
  private readonly joint: boolean;
  private readonly calibrationSymbols: number;
  private readonly slipWindow: number | undefined;
  private readonly slipThreshold: number | undefined;
  private readonly lagsOption: readonly [number, number] | undefined;
  /** The estimator, once the calibration (if any) has set it up. */
  private kernel: DualPhaseKernel | null = null;
  private delay = 0;
  private x!: PolState;
  private y!: PolState;
  /** [θx, θy] of the symbol whose phase became known. */
  private readonly theta = new Float64Array(2);
  /** The start of the stream, held for the calibration. */
  private readonly span: LeadingSpan<FieldBlock<'symbols'>>;
  private window: PhaseWindowDiagnostics;
  /** Real symbols received, per polarization. */
  private pushed = 0;
  /** Pushes into the kernels, absent drain symbols included. */
  private kernelPushed = 0;
  private delivered = 0;
  private sampleRate = Number.NaN;

  constructor(
    readonly name: string,
    private readonly record: Record<string, JsonValue>,
    private readonly make: (halfWindow: number) => PhaseKernel,
    private readonly c: Constellation,
    private readonly o: ResolvedPhaseOptions,
    pairCapable: boolean,
  ) {
    const ref = o.reference ?? null;
    if (ref) {
      const ok =
        ref.x instanceof Float64Array && ref.y instanceof Float64Array && ref.x.length > 0 && ref.x.length === ref.y.length;
      if (!ok)
        throw new OptionError(name, 'reference', 'x and y of equal, non-zero length', { x: ref.x?.length, y: ref.y?.length });
    }
    checkInteger(name, 'slipWindow', o.slipWindow, 8);
    checkInteger(name, 'pilotPeriod', o.pilotPeriod, 1);
    checkInteger(name, 'calibrationSymbols', o.calibrationSymbols, 64);
    if (o.pilotPeriod !== undefined && !ref)
      throw new OptionError(name, 'pilotPeriod', 'a reference holding the pilots', o.pilotPeriod);
    const th = o.slipThreshold;
    if (th !== undefined && !(th > 0 && th < Math.PI / 2))
      throw new OptionError(name, 'slipThreshold', 'a value in (0, π/2) rad', th);
    if (th !== undefined && ref) throw new OptionError(name, 'slipThreshold', 'no threshold when a reference is given', th);
    const pol = o.polarizations ?? 'separate';
    if (pol !== 'separate' && pol !== 'joint') throw new OptionError(name, 'polarizations', "'separate' or 'joint'", pol);
    if (pol === 'joint' && !pairCapable) throw new OptionError(name, 'polarizations', "'separate' for this estimator", pol);
    try {
      checkLags(name, o.linewidthLags);
    } catch {
      throw new OptionError(name, 'linewidthLags', 'two integers 1 ≤ L1 < L2', o.linewidthLags);
    }
    // Build one kernel now, so that a bad kernel option fails at creation.
    const probe = make(o.halfWindow === 'auto' ? PROVISIONAL_HALF_WINDOW : o.halfWindow);
    this.joint = pol === 'joint';
    this.calibrationSymbols = o.calibrationSymbols ?? 8192;
    this.span = new LeadingSpan(this.calibrationSymbols);
    this.slipWindow = o.slipWindow;
    this.slipThreshold = th;
    this.lagsOption = o.linewidthLags;
    this.reference = ref;
    this.recordPhase = o.recordPhase ?? false;
    this.pilotPeriod = o.pilotPeriod ?? 1;
    this.window = this.initialWindow();
    this.record = { ...record, polarizations: pol, recordPhase: this.recordPhase };
    if (this.calibrates()) this.record.calibrationSymbols = this.calibrationSymbols;
    // The linewidth lags follow the look-ahead D, known now unless the window is chosen later.
    const lags = o.linewidthLags ?? (o.halfWindow === 'auto' ? undefined : defaultLags(probe.delay));
    if (lags !== undefined) this.record.linewidthLags = [lags[0], lags[1]];
    if (o.slipWindow !== undefined) this.record.slipWindow = o.slipWindow;
    if (th !== undefined) this.record.slipThreshold = th;
    if (ref) this.record.referenceSymbols = ref.x.length >> 1;
    if (o.pilotPeriod !== undefined) this.record.pilotPeriod = o.pilotPeriod;
  }

  process(block: FieldBlock<'symbols'>): FieldBlock<'symbols'> {
    checkBlock(this.name, block, 'symbols');
    this.sampleRate = checkRate(this.name, this.sampleRate, block.sampleRate);
    const n = block.x.length >> 1;
    this.pushed += n;
    if (this.kernel === null && this.calibrates()) {
      const held = this.span.push(block);
      return held === null ? this.symbolsBlock(complexArray(0), complexArray(0)) : this.startFromHeld(held);
    }
    if (this.kernel === null) this.start(this.o.halfWindow as number, 0);
    const outX = complexArray(n);
    const outY = complexArray(n);
    const got = this.run(block.x, block.y, n, true, outX, outY);
    return this.symbolsBlock(outX.subarray(0, 2 * got) as ComplexArray, outY.subarray(0, 2 * got) as ComplexArray);
  }

  flush(): FieldBlock<'symbols'> | null {
    if (Number.isNaN(this.sampleRate)) return null;
    let head: FieldBlock<'symbols'> | null = null;
    if (this.kernel === null && this.calibrates()) {
      const held = this.span.finish();
      if (held) head = this.startFromHeld(held);
    }
    if (this.kernel === null) this.start(this.o.halfWindow === 'auto' ? FALLBACK_HALF_WINDOW : this.o.halfWindow, 0);
    const pending = this.pushed - this.delivered;
    const outX = complexArray(pending);
    const outY = complexArray(pending);
    // Absent symbols past the end drain the window; a stream shorter than the
    // look-ahead needs every one of the D pushes too.
    const drain = pending === 0 ? 0 : this.delay;
    const empty = complexArray(drain);
    const got = this.run(empty, empty, drain, false, outX, outY);
    for (const p of [this.x, this.y]) {
      p.jumpSlips?.finish();
      p.refSlips?.finish();
    }
    const tail = this.symbolsBlock(outX.subarray(0, 2 * got) as ComplexArray, outY.subarray(0, 2 * got) as ComplexArray);
    if (head === null || head.x.length === 0) return tail;
    return this.symbolsBlock(concat(head.x, tail.x), concat(head.y, tail.y));
  }

  reset(): void {
    this.kernel = null;
    this.delay = 0;
    this.span.reset();
    this.window = this.initialWindow();
    this.pushed = 0;
    this.kernelPushed = 0;
    this.delivered = 0;
    this.sampleRate = Number.NaN;
  }

  diagnostics(): PhaseRecoveryDiagnostics {
    const rs = this.sampleRate;
    const started = this.kernel !== null;
    const lx = !started || Number.isNaN(rs) ? Number.NaN : this.x.linewidth.linewidthHz(rs);
    const ly = !started || Number.isNaN(rs) ? Number.NaN : this.y.linewidth.linewidthHz(rs);
    const slipsOf = (p: PolState | undefined) =>
      started && p ? ((this.reference ? p.refSlips?.slips() : p.jumpSlips?.slips()) ?? []) : [];
    const sx = slipsOf(this.x);
    const sy = slipsOf(this.y);
    const tx = started ? this.x.trace.result() : { every: 1, series: [new Float64Array(0)] };
    const ty = started ? this.y.trace.result() : { every: 1, series: [new Float64Array(0)] };
    const d: PhaseRecoveryDiagnostics = {
      symbols: this.delivered,
      polarizations: this.joint ? 'joint' : 'separate',
      window: { ...this.window },
      relativePhaseRad: this.joint && this.kernel instanceof JointPhaseTracker ? this.kernel.relativePhase() : null,
      linewidthHz: (lx + ly) / 2,
      linewidthPerPolHz: { x: lx, y: ly },
      cycleSlips: {
        method: this.reference ? 'reference' : 'phase-jump',
        count: sx.length + sy.length,
        x: sx.slice(),
        y: sy.slice(),
      },
      // Both polarizations get the same number of phases, so their traces share one resolution.
      phaseTrace: { every: tx.every, x: tx.series[0], y: ty.series[0] },
    };
    if (!this.recordPhase) return d;
    return {
      ...d,
      phase: {
        x: started ? join(this.x.phaseChunks) : new Float64Array(0),
        y: started ? join(this.y.phaseChunks) : new Float64Array(0),
      },
    };
  }

  describe(): StageRecord {
    return { stage: this.name, options: this.record };
  }

  /** Whether the start of the stream is held for a calibration. */
  private calibrates(): boolean {
    return this.o.halfWindow === 'auto' || this.joint;
  }

  private initialWindow(): PhaseWindowDiagnostics {
    const auto = this.o.halfWindow === 'auto';
    return {
      halfWindow: auto ? null : (this.o.halfWindow as number),
      choice: auto ? 'auto' : 'given',
      estimatorNoise: Number.NaN,
      phaseWalk: Number.NaN,
      snrDb: Number.NaN,
      calibrationSymbols: 0,
    };
  }

  private symbolsBlock(x: ComplexArray, y: ComplexArray): FieldBlock<'symbols'> {
    return fieldBlock('symbols', x, y, this.sampleRate, 1);
  }

  /**
   * Calibrates on the first `calibrationSymbols` symbols (all of them when
   * the stream ended sooner), starts the estimator, and runs it over
   * everything held.
   */
  private startFromHeld(held: { all: FieldBlock<'symbols'>; calibration: FieldBlock<'symbols'> }): FieldBlock<'symbols'> {
    const { x, y } = held.calibration;
    const m = x.length >> 1;
    const delta = this.joint ? this.relativePhaseOf(x, y) : 0;
    let m2 = 0;
    let m4 = 0;
    for (const z of [x, y]) {
      for (let i = 0; i < z.length; i += 2) {
        const p = z[i] * z[i] + z[i + 1] * z[i + 1];
        m2 += p;
        m4 += p * p;
      }
    }
    const snr = m > 0 ? snrFromMoments(m2 / (2 * m), m4 / (2 * m), this.c.cmaRadius2) : Number.NaN;
    let halfWindow = this.o.halfWindow;
    let estimatorNoise = Number.NaN;
    let phaseWalk = Number.NaN;
    if (halfWindow === 'auto') {
      const track = (every: number, first: number) => this.provisionalTrack(x, y, every, first, delta);
      const choice = chooseHalfWindow({ all: track(1, 0), even: track(2, 0), odd: track(2, 1) }, PROVISIONAL_HALF_WINDOW);
      halfWindow = choice?.halfWindow ?? FALLBACK_HALF_WINDOW;
      if (m < this.calibrationSymbols && this.lagsOption === undefined) halfWindow = this.fitLags(halfWindow, m);
      estimatorNoise = choice?.estimatorNoise ?? Number.NaN;
      phaseWalk = choice?.phaseWalk ?? Number.NaN;
    }
    this.window = {
      halfWindow,
      choice: this.o.halfWindow === 'auto' ? 'auto' : 'given',
      estimatorNoise,
      phaseWalk,
      snrDb: 10 * Math.log10(snr),
      calibrationSymbols: m,
    };
    this.start(halfWindow, delta);
    const n = held.all.x.length >> 1;
    const outX = complexArray(n);
    const outY = complexArray(n);
    const got = this.run(held.all.x, held.all.y, n, true, outX, outY);
    return this.symbolsBlock(outX.subarray(0, 2 * got) as ComplexArray, outY.subarray(0, 2 * got) as ComplexArray);
  }

  /**
   * The provisional estimator's phase track (the common one, or x's) over
   * the calibration symbols `first`, `first + every`, … of x and y.
   */
  /**
   * Δ, y's phase relative to x's, from the calibration span. The fourth
   * power of y·x* ({@link relativePhase}) points at 4Δ with a strength of
   * |E a⁴|²: enough for square QAM and 8QAM (|E a⁴| ≥ 0.6), too little for
   * cross QAM (0.18–0.19: measured on DP-128QAM, Δ off by half a radian on
   * one capture in four, the joint estimate then 3–4 dB worse than two
   * separate ones). There each polarization's own track is estimated and Δ
   * is the mean of their differences, modulo π/2: arg Σₖ e^(j4(θyₖ − θxₖ))/4.
   */
  private relativePhaseOf(x: ComplexArray, y: ComplexArray): number {
    if (Math.abs(this.c.fourthPowerMean) >= FOURTH_POWER_RELATIVE_PHASE) return relativePhase(x, y);
    const tx = runKernel(this.make(PROVISIONAL_HALF_WINDOW), x);
    const ty = runKernel(this.make(PROVISIONAL_HALF_WINDOW), y);
    let re = 0;
    let im = 0;
    for (let k = 0; k < Math.min(tx.length, ty.length); k++) {
      const d = 4 * (ty[k] - tx[k]);
      re += Math.cos(d);
      im += Math.sin(d);
    }
    return re === 0 && im === 0 ? 0 : Math.atan2(im, re) / 4;
  }

  private provisionalTrack(x: ComplexArray, y: ComplexArray, every: number, first: number, delta: number): Float64Array {
    const kernel = this.dualKernel(PROVISIONAL_HALF_WINDOW, delta);
    const m = Math.max(0, Math.ceil(((x.length >> 1) - first) / every));
    const track = new Float64Array(m);
    const theta = this.theta;
    let got = 0;
    for (let k = 0; k < m + kernel.delay; k++) {
      const present = k < m;
      const i = 2 * (first + k * every);
      const ok = kernel.push(
        present ? x[i] : 0,
        present ? x[i + 1] : 0,
        present ? y[i] : 0,
        present ? y[i + 1] : 0,
        present,
        theta,
      );
      if (ok && got < m) track[got++] = theta[0];
    }
    return track;
  }

  /**
   * The largest half window up to `halfWindow` (and at least 4) whose default
   * linewidth lags fit in the first half of a stream of `symbols` symbols, so
   * that a short capture still has enough increments at the longer lag for a
   * linewidth estimate. Captures of the calibration length or longer always fit.
   */
  private fitLags(halfWindow: number, symbols: number): number {
    const fits = (n: number) => defaultLags(this.make(n).delay)[1] <= symbols / 2;
    if (fits(halfWindow)) return halfWindow;
    let lo = 4;
    let hi = halfWindow;
    while (hi - lo > 1) {
      const mid = (lo + hi) >> 1;
      if (fits(mid)) lo = mid;
      else hi = mid;
    }
    return lo;
  }

  private dualKernel(halfWindow: number, delta: number): DualPhaseKernel {
    return this.joint
      ? new JointPhaseTracker(this.make(halfWindow) as PairPhaseKernel, this.c, delta)
      : new SeparatePhaseKernels(this.make(halfWindow), this.make(halfWindow));
  }

  /** Sets up the estimator and the per-polarization state for a half window. */
  private start(halfWindow: number, delta: number): void {
    this.kernel = this.dualKernel(halfWindow, delta);
    this.delay = this.kernel.delay;
    const lags = this.lagsOption ?? defaultLags(this.delay);
    const pol = (): PolState => ({
      re: new Float64Array(this.delay + 1),
      im: new Float64Array(this.delay + 1),
      linewidth: new LinewidthAccumulator({ lags }),
      refSlips: this.reference ? new ReferenceSlipDetector({ window: this.slipWindow }) : null,
      jumpSlips: this.reference ? null : new PhaseJumpSlipDetector({ window: this.slipWindow, threshold: this.slipThreshold }),
      phaseChunks: [],
      trace: new DecimatedTrace(1, PHASE_TRACE_POINTS),
    });
    this.x = pol();
    this.y = pol();
  }

  /**
   * Pushes `n` symbols of each polarization (absent ones past the end when
   * `present` is false) and writes the de-rotated symbols whose phase became
   * known, rₖ·e^(−jθₖ), into `outX` and `outY`. Returns how many were written.
   */
  private run(inX: ComplexArray, inY: ComplexArray, n: number, present: boolean, outX: ComplexArray, outY: ComplexArray): number {
    const kernel = this.kernel as DualPhaseKernel;
    const len = this.delay + 1;
    const px = this.x;
    const py = this.y;
    const phasesX = this.recordPhase ? new Float64Array(n) : null;
    const phasesY = this.recordPhase ? new Float64Array(n) : null;
    const real = this.pushed;
    const theta = this.theta;
    let written = 0;
    for (let i = 0; i < n; i++) {
      const index = this.kernelPushed + i;
      const xr = present ? inX[2 * i] : 0;
      const xi = present ? inX[2 * i + 1] : 0;
      const yr = present ? inY[2 * i] : 0;
      const yi = present ? inY[2 * i + 1] : 0;
      const slot = index % len;
      px.re[slot] = xr;
      px.im[slot] = xi;
      py.re[slot] = yr;
      py.im[slot] = yi;
      if (!kernel.push(xr, xi, yr, yi, present, theta)) continue;
      // The phase is that of symbol index − D, whose sample sits D slots back in the delay line.
      const centre = index - this.delay;
      if (centre >= real) continue;
      const c = centre % len;
      this.emit(px, theta[0], c, centre, 'x', outX, written);
      this.emit(py, theta[1], c, centre, 'y', outY, written);
      if (phasesX && phasesY) {
        phasesX[written] = theta[0];
        phasesY[written] = theta[1];
      }
      written++;
    }
    this.kernelPushed += n;
    this.delivered += written;
    if (phasesX && phasesY) {
      px.phaseChunks.push(phasesX.subarray(0, written));
      py.phaseChunks.push(phasesY.subarray(0, written));
    }
    return written;
  }

  /** De-rotates one polarization's centre symbol by its phase into `out`, and feeds the detectors. */
  private emit(p: PolState, theta: number, c: number, centre: number, pol: 'x' | 'y', out: ComplexArray, at: number): void {
    const cs = Math.cos(theta);
    const sn = Math.sin(theta);
    const rr = p.re[c];
    const ri = p.im[c];
    // r·e^(−jθ)
    const or = rr * cs + ri * sn;
    const oi = ri * cs - rr * sn;
    out[2 * at] = or;
    out[2 * at + 1] = oi;
    p.trace.add(0, theta);
    p.trace.step();
    p.linewidth.push(theta);
    const ref = this.reference ? this.reference[pol] : null;
    if (ref && p.refSlips && centre % this.pilotPeriod === 0) {
      const j = (centre / this.pilotPeriod) % (ref.length >> 1);
      p.refSlips.push(ref[2 * j], ref[2 * j + 1], or, oi, centre);
    }
    p.jumpSlips?.push(theta);
  }
}

/**
 * Lags of the linewidth estimate for a look-ahead D: just beyond the
 * estimator's window, where its errors decorrelate, and short enough for a
 * small statistical spread of the increment variances.
 */
function defaultLags(delay: number): readonly [number, number] {
  return [2 * delay + 2, 8 * delay + 4];
}

function concat(a: ComplexArray, b: ComplexArray): ComplexArray {
  const out = complexArray((a.length + b.length) >> 1);
  out.set(a);
  out.set(b, a.length);
  return out;
}

function join(chunks: readonly Float64Array[]): Float64Array {
  let total = 0;
  for (const c of chunks) total += c.length;
  const out = new Float64Array(total);
  let at = 0;
  for (const c of chunks) {
    out.set(c, at);
    at += c.length;
  }
  return out;
}
