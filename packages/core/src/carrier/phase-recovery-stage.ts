import { constellation, MODULATIONS, type ModulationName } from '../modulation/constellation.js';
import { type FieldBlock, fieldBlock } from '../pipeline/blocks.js';
import { DecimatedTrace } from '../pipeline/decimated-trace.js';
import { BlockError, type JsonValue, OptionError, type Stage, type StageRecord } from '../pipeline/stage.js';
import { type ComplexArray, complexArray } from '../signal/complex.js';
import type { DualPol } from '../signal/dual-pol.js';
import { BlindPhaseSearchKernel, type BlindPhaseSearchOptions, CoarseFinePhaseKernel } from './blind-phase-search.js';
import type { CycleSlip, SlipMethod } from './cycle-slip.js';
import { checkLags, LinewidthAccumulator } from './linewidth.js';
import type { PhaseKernel } from './phase-kernel.js';
import { PhaseJumpSlipDetector } from './slips-phase-jump.js';
import { ReferenceSlipDetector } from './slips-reference.js';
import { ViterbiViterbiKernel, type ViterbiViterbiOptions } from './viterbi-viterbi.js';

/** Options shared by the carrier-phase recovery stages. */
export interface PhaseRecoveryOptions {
  /** The modulation of the symbols (square QAM at unit average power). */
  readonly modulation: ModulationName;
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

/** What a carrier-phase recovery stage learned. */
export interface PhaseRecoveryDiagnostics {
  /** Symbols delivered so far, per polarization. */
  readonly symbols: number;
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
export type ViterbiViterbiStageOptions = PhaseRecoveryOptions & ViterbiViterbiOptions;
/** Options of {@link blindPhaseSearch}. */
export type BlindPhaseSearchStageOptions = PhaseRecoveryOptions & BlindPhaseSearchOptions;

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
  const c = constellation(checkModulation(name, options.modulation));
  checkInteger(name, 'halfWindow', options.halfWindow, 0);
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
  return new PhaseRecoveryStage(name, record, () => new ViterbiViterbiKernel(c, options), options);
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
  const c = constellation(checkModulation(name, options.modulation));
  checkInteger(name, 'testPhases', options.testPhases, 2);
  checkInteger(name, 'halfWindow', options.halfWindow, 0);
  checkInteger(name, 'fineHalfWindow', options.fineHalfWindow, 0);
  const variant = options.variant ?? 'single';
  if (variant !== 'single' && variant !== 'coarse-fine')
    throw new OptionError(name, 'variant', "'single' or 'coarse-fine'", variant);
  if (variant === 'single' && options.fineHalfWindow !== undefined)
    throw new OptionError(name, 'fineHalfWindow', "to be given only with variant 'coarse-fine'", options.fineHalfWindow);
  const record: Record<string, JsonValue> = {
    modulation: c.name,
    testPhases: options.testPhases ?? 32,
    halfWindow: options.halfWindow ?? 12,
    variant,
  };
  if (variant === 'coarse-fine') record.fineHalfWindow = options.fineHalfWindow ?? options.halfWindow ?? 12;
  const make = () => (variant === 'coarse-fine' ? new CoarseFinePhaseKernel(c, options) : new BlindPhaseSearchKernel(c, options));
  return new PhaseRecoveryStage(name, record, make, options);
}

function checkModulation(name: string, m: unknown): ModulationName {
  if (!MODULATIONS.includes(m as ModulationName))
    throw new OptionError(name, 'modulation', `one of ${MODULATIONS.join(', ')}`, m);
  return m as ModulationName;
}

function checkInteger(name: string, option: string, v: unknown, min: number): void {
  if (v !== undefined && (!Number.isInteger(v) || (v as number) < min))
    throw new OptionError(name, option, `an integer ≥ ${min}`, v);
}

/** Per-polarization state: the kernel, the symbols waiting for their phase, the detectors. */
interface PolState {
  kernel: PhaseKernel;
  /** Delay line of input symbols, D + 1 slots. */
  re: Float64Array;
  im: Float64Array;
  linewidth: LinewidthAccumulator;
  refSlips: ReferenceSlipDetector | null;
  jumpSlips: PhaseJumpSlipDetector | null;
  phaseChunks: Float64Array[];
  trace: DecimatedTrace;
}

class PhaseRecoveryStage implements Stage<'symbols', 'symbols', PhaseRecoveryDiagnostics> {
  readonly input = 'symbols' as const;
  readonly output = 'symbols' as const;
  private readonly x: PolState;
  private readonly y: PolState;
  private readonly delay: number;
  private readonly reference: DualPol | null;
  private readonly recordPhase: boolean;
  private readonly pilotPeriod: number;
  /** Real symbols received, per polarization. */
  private pushed = 0;
  /** Pushes into the kernels, absent drain symbols included. */
  private kernelPushed = 0;
  private delivered = 0;
  private sampleRate = Number.NaN;

  constructor(
    readonly name: string,
    private readonly record: Record<string, JsonValue>,
    make: () => PhaseKernel,
    o: PhaseRecoveryOptions,
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
    if (o.pilotPeriod !== undefined && !ref)
      throw new OptionError(name, 'pilotPeriod', 'a reference holding the pilots', o.pilotPeriod);
    const th = o.slipThreshold;
    if (th !== undefined && !(th > 0 && th < Math.PI / 2))
      throw new OptionError(name, 'slipThreshold', 'a value in (0, π/2) rad', th);
    if (th !== undefined && ref) throw new OptionError(name, 'slipThreshold', 'no threshold when a reference is given', th);
    try {
      checkLags(name, o.linewidthLags);
    } catch {
      throw new OptionError(name, 'linewidthLags', 'two integers 1 ≤ L1 < L2', o.linewidthLags);
    }
    const probe = make();
    this.delay = probe.delay;
    // Just beyond the estimator's window, where its errors decorrelate, and
    // short enough for a small statistical spread of the increment variances.
    const lags = o.linewidthLags ?? ([2 * this.delay + 2, 8 * this.delay + 4] as const);
    const pol = (kernel: PhaseKernel): PolState => ({
      kernel,
      re: new Float64Array(this.delay + 1),
      im: new Float64Array(this.delay + 1),
      linewidth: new LinewidthAccumulator({ lags }),
      refSlips: ref ? new ReferenceSlipDetector({ window: o.slipWindow }) : null,
      jumpSlips: ref ? null : new PhaseJumpSlipDetector({ window: o.slipWindow, threshold: th }),
      phaseChunks: [],
      trace: new DecimatedTrace(1, PHASE_TRACE_POINTS),
    });
    this.x = pol(probe);
    this.y = pol(make());
    this.reference = ref;
    this.recordPhase = o.recordPhase ?? false;
    this.pilotPeriod = o.pilotPeriod ?? 1;
    this.record = { ...record, linewidthLags: [lags[0], lags[1]], recordPhase: this.recordPhase };
    if (o.slipWindow !== undefined) this.record.slipWindow = o.slipWindow;
    if (th !== undefined) this.record.slipThreshold = th;
    if (ref) this.record.referenceSymbols = ref.x.length >> 1;
    if (o.pilotPeriod !== undefined) this.record.pilotPeriod = o.pilotPeriod;
  }

  process(block: FieldBlock<'symbols'>): FieldBlock<'symbols'> {
    if (block.domain !== 'symbols') throw new BlockError(`${this.name}: expected a 'symbols' block, received '${block.domain}'`);
    if (block.x.length !== block.y.length)
      throw new BlockError(`${this.name}: x has ${block.x.length >> 1} symbols, y has ${block.y.length >> 1}`);
    if (!(block.sampleRate > 0) || !Number.isFinite(block.sampleRate))
      throw new BlockError(
        `${this.name}: expected a positive symbol rate as the block's sample rate, received ${block.sampleRate}`,
      );
    if (!Number.isNaN(this.sampleRate) && block.sampleRate !== this.sampleRate)
      throw new BlockError(`${this.name}: the symbol rate changed mid-stream from ${this.sampleRate} to ${block.sampleRate}`);
    this.sampleRate = block.sampleRate;
    const n = block.x.length >> 1;
    this.pushed += n;
    const outX = complexArray(n);
    const outY = complexArray(n);
    const got = this.run(this.x, block.x, n, true, outX, 'x');
    this.run(this.y, block.y, n, true, outY, 'y');
    this.kernelPushed += n;
    this.delivered += got;
    return fieldBlock(
      'symbols',
      outX.subarray(0, 2 * got) as ComplexArray,
      outY.subarray(0, 2 * got) as ComplexArray,
      block.sampleRate,
      1,
    );
  }

  flush(): FieldBlock<'symbols'> | null {
    if (Number.isNaN(this.sampleRate)) return null;
    const pending = this.pushed - this.delivered;
    const outX = complexArray(pending);
    const outY = complexArray(pending);
    // Absent symbols past the end drain the window; a stream shorter than the
    // look-ahead needs every one of the D pushes too.
    const drain = pending === 0 ? 0 : this.delay;
    const empty = complexArray(drain);
    const got = this.run(this.x, empty, drain, false, outX, 'x');
    this.run(this.y, empty, drain, false, outY, 'y');
    this.kernelPushed += drain;
    this.delivered += got;
    for (const p of [this.x, this.y]) {
      p.jumpSlips?.finish();
      p.refSlips?.finish();
    }
    return fieldBlock('symbols', outX, outY, this.sampleRate, 1);
  }

  reset(): void {
    for (const p of [this.x, this.y]) {
      p.kernel.reset();
      p.re.fill(0);
      p.im.fill(0);
      p.linewidth.reset();
      p.refSlips?.reset();
      p.jumpSlips?.reset();
      p.phaseChunks = [];
      p.trace.reset();
    }
    this.pushed = 0;
    this.kernelPushed = 0;
    this.delivered = 0;
    this.sampleRate = Number.NaN;
  }

  diagnostics(): PhaseRecoveryDiagnostics {
    const rs = this.sampleRate;
    const lx = Number.isNaN(rs) ? Number.NaN : this.x.linewidth.linewidthHz(rs);
    const ly = Number.isNaN(rs) ? Number.NaN : this.y.linewidth.linewidthHz(rs);
    const sx = (this.reference ? this.x.refSlips?.slips() : this.x.jumpSlips?.slips()) ?? [];
    const sy = (this.reference ? this.y.refSlips?.slips() : this.y.jumpSlips?.slips()) ?? [];
    const tx = this.x.trace.result();
    const d: PhaseRecoveryDiagnostics = {
      symbols: this.delivered,
      linewidthHz: (lx + ly) / 2,
      linewidthPerPolHz: { x: lx, y: ly },
      cycleSlips: {
        method: this.reference ? 'reference' : 'phase-jump',
        count: sx.length + sy.length,
        x: sx.slice(),
        y: sy.slice(),
      },
      // Both polarizations get the same number of phases, so their traces share one resolution.
      phaseTrace: { every: tx.every, x: tx.series[0], y: this.y.trace.result().series[0] },
    };
    if (!this.recordPhase) return d;
    return { ...d, phase: { x: join(this.x.phaseChunks), y: join(this.y.phaseChunks) } };
  }

  describe(): StageRecord {
    return { stage: this.name, options: this.record };
  }

  /**
   * Pushes `n` symbols of one polarization (absent ones past the end when
   * `present` is false) and writes the de-rotated symbols whose phase became
   * known, rₖ·e^(−jθₖ), into `out`. Returns how many were written.
   */
  private run(p: PolState, input: ComplexArray, n: number, present: boolean, out: ComplexArray, pol: 'x' | 'y'): number {
    const len = this.delay + 1;
    const phases = this.recordPhase ? new Float64Array(n) : null;
    const ref = this.reference ? this.reference[pol] : null;
    const refLen = ref ? ref.length >> 1 : 0;
    const real = this.pushed;
    let written = 0;
    for (let i = 0; i < n; i++) {
      const index = this.kernelPushed + i;
      const re = present ? input[2 * i] : 0;
      const im = present ? input[2 * i + 1] : 0;
      p.re[index % len] = re;
      p.im[index % len] = im;
      const theta = p.kernel.push(re, im, present);
      // The phase is that of symbol index − D, whose sample sits D slots back in the delay line.
      const centre = index - this.delay;
      if (Number.isNaN(theta) || centre >= real) continue;
      const c = centre % len;
      const cs = Math.cos(theta);
      const sn = Math.sin(theta);
      const rr = p.re[c];
      const ri = p.im[c];
      // r·e^(−jθ)
      const or = rr * cs + ri * sn;
      const oi = ri * cs - rr * sn;
      out[2 * written] = or;
      out[2 * written + 1] = oi;
      if (phases) phases[written] = theta;
      p.trace.add(0, theta);
      p.trace.step();
      p.linewidth.push(theta);
      if (ref && p.refSlips && centre % this.pilotPeriod === 0) {
        const j = (centre / this.pilotPeriod) % refLen;
        p.refSlips.push(ref[2 * j], ref[2 * j + 1], or, oi, centre);
      }
      p.jumpSlips?.push(theta);
      written++;
    }
    if (phases) p.phaseChunks.push(phases.subarray(0, written));
    return written;
  }
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
