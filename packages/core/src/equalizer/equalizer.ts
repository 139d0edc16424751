import { type Constellation, checkModulation, constellation, type ModulationName } from '../modulation/constellation.js';
import { checkBlock, checkRate } from '../pipeline/block-checks.js';
import { type FieldBlock, fieldBlock } from '../pipeline/blocks.js';
import { DecimatedTrace } from '../pipeline/decimated-trace.js';
import { BlockError, type JsonValue, OptionError, type Stage, type StageRecord } from '../pipeline/stage.js';
import { type ComplexArray, complexArray } from '../signal/complex.js';
import {
  ADAPT_STRIDE,
  adaptRadial,
  adaptWithRule,
  butterflyOutput,
  deriveOrthogonalRow,
  FILTER_XX,
  FILTER_XY,
  FILTER_YX,
  FILTER_YY,
  outputDependence,
  rowOrthogonality,
  separationIndex,
} from './butterfly-kernel.js';
import { cmaRule } from './cma.js';
import { DEFAULT_PHASE_LOOP, dataAidedRule, ddLmsRule, type EqualizerTraining, type PhaseLoopGains } from './dd-lms.js';
import { rdeRule } from './rde.js';
import type { CarrierLoopState, RadialTargets, UpdateRule } from './update-rule.js';

const NAME = 'butterfly-equalizer';

/** The four filters of the butterfly, L complex taps each (interleaved, 2·L numbers). */
export interface ButterflyTaps {
  /** x input to x output. */
  readonly xx: ComplexArray;
  /** y input to x output. */
  readonly xy: ComplexArray;
  /** x input to y output. */
  readonly yx: ComplexArray;
  /** y input to y output. */
  readonly yy: ComplexArray;
}

/** Options of {@link butterflyEqualizer}; only `modulation` is required. */
export interface EqualizerOptions {
  /** Sets the CMA radius, the RDE rings and the DD-LMS decisions. */
  readonly modulation: ModulationName;
  /** Taps per filter L, odd, 1 … 201 (default 11: 5.5 symbols at 2 Sa/symbol). */
  readonly taps?: number;
  /**
   * Rule after pre-convergence: 'cma' or 'rde' (default 'cma' for QPSK,
   * 'rde' for 16QAM and 64QAM), with the step of `stepSize`; or a rule
   * object ({@link UpdateRule}) with its own step.
   */
  readonly blindRule?: 'cma' | 'rde' | UpdateRule;
  /**
   * Step sizes μ per rule, for an input of about unit power per
   * polarization, as the front end delivers: `preConvergence` for CMA at
   * the start of pre-convergence (default 3e-3: fast, coarse; annealed to
   * `cma` over the second half of pre-convergence), `cma` and `rde` for the
   * blind phase (defaults 3e-4 and 1e-4; 1e-4 and 3e-5 for 64QAM, whose
   * dense rings need a quieter start), `ddLms` (default 3e-4).
   */
  readonly stepSize?: {
    /** CMA step at the start of pre-convergence (default 3e-3). */
    readonly preConvergence?: number;
    /** CMA step after pre-convergence (default 3e-4; 1e-4 for 64QAM). */
    readonly cma?: number;
    /** RDE step (default 1e-4; 3e-5 for 64QAM). */
    readonly rde?: number;
    /** DD-LMS step (default 3e-4). */
    readonly ddLms?: number;
  };
  /**
   * Pre-convergence length, in adapted symbols (default 8192): CMA runs first
   * for this many symbols, with the y-filters derived from the x-filters by
   * the orthogonality relation when `singularity.orthogonalStart` is on.
   */
  readonly preConvergenceSymbols?: number;
  /**
   * Passes over the start of the capture (default { symbols: 8192, passes: 2 }):
   * the first `symbols` symbols of input (2·`symbols` samples) are buffered,
   * the equalizer adapts over them `passes` times (each pass from a zero
   * delay line, the taps carried over), and then processes the capture from
   * its first sample with the converged taps, still adapting. The output thus
   * starts converged. A pass adapts on the symbols whose whole window lies
   * in the buffer (⌊(2·symbols − 1 − c)/2⌋ + 1 of them, c = (L − 1)/2); a
   * running DD-LMS loop is carried back to the start at each restart
   * (θ ← θ − ν·symbols). Nothing is output until the buffer is full (or the
   * stream ends). `passes` = 0 streams from the first sample with no
   * buffering. A capture shorter than `symbols` is used whole.
   */
  readonly convergeOnStart?: {
    /** Symbols buffered and adapted over (≥ 1). */
    readonly symbols: number;
    /** Passes over them (0: no buffering). */
    readonly passes: number;
  };
  /** Tap update every n-th symbol (default 1); the error is still computed on every symbol. */
  readonly updateEvery?: number;
  /** Where the adaptation starts: a named start (default 'centre-spike', see {@link EqualizerStart}) or given taps, L complex taps each. */
  readonly initialTaps?: EqualizerStart | ButterflyTaps;
  /**
   * Starts tried in turn when the passes over the start of the capture end
   * with singular taps or outputs that do not carry one source each (see
   * `convergence`): the adaptation is run again from each until one
   * separates, and the best attempt is kept (default ['rotated',
   * 'circular']; [] never retries). Needs `convergeOnStart.passes` > 0.
   */
  readonly retryStarts?: readonly EqualizerStart[];
  /**
   * Decision-directed LMS after the blind rules, with its own carrier-phase
   * loop (see {@link ddLmsRule}); absent: no DD-LMS. `startSymbol` counts
   * adapted symbols and must be at least `preConvergenceSymbols`.
   */
  readonly ddLms?: {
    /** Adapted symbols before DD-LMS takes over (≥ `preConvergenceSymbols`). */
    readonly startSymbol: number;
    /** Gains of its carrier-phase loop (default: {@link ddLmsRule}'s). */
    readonly phaseLoop?: PhaseLoopGains;
    /**
     * The decision-directed rule itself (default {@link ddLmsRule} with
     * `stepSize.ddLms` and `phaseLoop`): any {@link UpdateRule}; its carrier
     * hooks (`observe`, `acquire`, `rewind`, `loopState`) are used when it has them.
     */
    readonly rule?: UpdateRule;
  };
  /**
   * Train on the transmitted symbols instead of adapting blind: each output
   * is adapted towards the symbols the synchronization found it carries
   * ({@link dataAidedRule}, with its own phase loop), from the first symbol
   * on, with step `stepSize.ddLms`; no CMA, RDE or DD-LMS, no retries.
   * The figure this gives is the best case a blind receiver is compared
   * against.
   */
  readonly training?: EqualizerTraining;
  /**
   * Singularity handling: `orthogonalStart` (default false) derives the
   * y-filters from the x-filters during pre-convergence; `restart` (default
   * true) re-derives them whenever the row orthogonality falls below
   * `threshold` (default 0.5) at a check, every 1024 adapted symbols after
   * pre-convergence. The final taps are judged singular by the same test.
   * Both prevent singular convergence on SOP and DGD; the orthogonality
   * relation also conjugates any response common to both polarizations
   * (residual dispersion comes out with the opposite sign on y), so it is
   * off by default and restart on detection, which touches only the rare
   * singular case, is on.
   */
  readonly singularity?: {
    /** Derive the y-filters from the x-filters during pre-convergence (default false). */
    readonly orthogonalStart?: boolean;
    /** Re-derive the y-filters when a check finds them singular (default true). */
    readonly restart?: boolean;
    /** Row orthogonality below which the taps count as singular, 0…1 (default 0.5). */
    readonly threshold?: number;
  };
  /**
   * Convergence verdict over the last `window` output symbols (default
   * 8192): converged when the taps are not singular and, for blind
   * adaptation (not with `training`), the outputs each
   * carry one source ({@link outputDependence} at lags up to 2 symbols at
   * most `dependence`, default 0.15: a polarization mix beyond 17° or an
   * output sampled between symbols fails at any SNR, while separated outputs
   * stay below 0.06 from sampling spread alone), and the separation index of
   * both outputs is at least `threshold` (default 0.1: a perfectly equalized
   * output has (s/(1 + s))², so this only rejects outputs that are mostly
   * noise, below an SNR of −3.4 dB).
   */
  readonly convergence?: {
    /** Output symbols the verdict looks at (default 8192). */
    readonly window?: number;
    /** Least separation index of both outputs, 0…1 (default 0.1). */
    readonly threshold?: number;
    /** Largest dependence of the outputs, 0…1 (default 0.15). */
    readonly dependence?: number;
  };
  /**
   * Symbols per point of the error trace at its start (default 256); the
   * trace keeps at most 2048 points and halves its resolution when full.
   */
  readonly traceEvery?: number;
}

/**
 * A named start of the adaptation: 'centre-spike' passes each input
 * polarization to its own output (hxx = hyy = δ); 'rotated' starts from a
 * 45° rotation, hxx = hxy = hyy = δ/√2, hyx = −δ/√2; 'circular' from the
 * 45° rotation about the other axis, hxx = hyy = δ/√2, hxy = hyx = j·δ/√2
 * (δ at the centre tap). Blind adaptation from a start near the
 * polarization state that makes CMA's outputs collapse onto one source
 * tends to stay there; the others are far from it.
 */
export type EqualizerStart = 'centre-spike' | 'rotated' | 'circular';

/** The named starts, in the order they are documented. */
export const EQUALIZER_STARTS: readonly EqualizerStart[] = ['centre-spike', 'rotated', 'circular'];

/** What one run of the passes over the start of the capture gave (see {@link EqualizerOptions.retryStarts}). */
export interface EqualizerAttempt {
  /** The start: a name, or 'given' for taps passed in the options. */
  readonly start: EqualizerStart | 'given';
  /** The taps' row orthogonality after the passes (see `singularity`). */
  readonly rowOrthogonality: number;
  /** Singular by the `singularity` threshold. */
  readonly singular: boolean;
  /** {@link outputDependence} of the outputs over the start with the taps after the passes. */
  readonly dependence: number;
  /** Separation index of the x output over the start. */
  readonly separationX: number;
  /** Separation index of the y output over the start. */
  readonly separationY: number;
  /** Whether it passed the convergence criteria over the start. */
  readonly separated: boolean;
}

/** One step of the equalizer's schedule. */
export interface EqualizerPhase {
  /** 'cma', 'rde' or 'dd-lms'. */
  readonly rule: string;
  /** First adapted symbol of the phase (adapted symbols count over the passes and the stream). */
  readonly fromSymbol: number;
  /** True while the y-filters are derived from the x-filters (orthogonal pre-convergence). */
  readonly orthogonalY: boolean;
}

/** What the equalizer reports. */
export interface EqualizerDiagnostics {
  /** Taps per filter. */
  readonly taps: number;
  /** Symbols delivered so far, per polarization. */
  readonly symbols: number;
  /** Symbols adapted on, over the passes over the start and the stream. */
  readonly adaptedSymbols: number;
  /** The schedule of rules. */
  readonly phases: readonly EqualizerPhase[];
  /** Rule in use at the last adapted symbol ('none' before the first). */
  readonly rule: string;
  /**
   * Downsampled error trace: point i is the mean, over adapted symbols
   * [i·every, (i + 1)·every), of the active rule's cost per symbol (|e|²
   * for DD-LMS, (R² − |z|²)² for CMA and RDE) and of the separation index
   * (over each `traceEvery` symbols, then averaged). At most
   * {@link EQUALIZER_TRACE_POINTS} points: `every` starts at `traceEvery` and
   * doubles whenever the trace is full (see {@link DecimatedTrace}).
   */
  readonly trace: {
    /** Adapted symbols per point. */
    readonly every: number;
    /** Mean cost of the x output per point (one value per `every` adapted symbols). */
    readonly costX: Float64Array;
    /** Mean cost of the y output per point. */
    readonly costY: Float64Array;
    /** Mean separation index of the x output per point, 0…1. */
    readonly separationX: Float64Array;
    /** Mean separation index of the y output per point, 0…1. */
    readonly separationY: Float64Array;
  };
  /** The taps now. */
  readonly finalTaps: ButterflyTaps;
  /**
   * The runs of the passes over the start, in order, and which one the
   * stream continued from (empty before the start is adapted, or with
   * `convergeOnStart.passes` = 0).
   */
  readonly start: {
    /** Every attempt made. */
    readonly attempts: readonly EqualizerAttempt[];
    /** Index in `attempts` of the one kept (−1 before the start is adapted). */
    readonly chosen: number;
  };
  /** The convergence verdict (see {@link EqualizerOptions.convergence}). */
  readonly convergence: {
    /** Both outputs separated and the taps not singular. */
    readonly converged: boolean;
    /** Separation index of each output over the last `window` output symbols. */
    readonly separationX: number;
    /** Separation index of the y output over the same symbols. */
    readonly separationY: number;
    /** {@link outputDependence} of the two outputs over the same symbols: 0 when each carries one source. */
    readonly dependence: number;
    /** Output symbols looked at. */
    readonly window: number;
    /** Least separation index accepted. */
    readonly threshold: number;
    /** Largest dependence accepted. */
    readonly dependenceThreshold: number;
    /** The criterion in words, for reports. */
    readonly criterion: string;
  };
  /** The singularity check on the final taps. */
  readonly singularity: {
    /** Both outputs extract the same source. */
    readonly singular: boolean;
    /** Mean in-band Hadamard ratio of the final 2×2 response (1 orthogonal rows, 0 parallel). */
    readonly rowOrthogonality: number;
    /** Row orthogonality below which the taps count as singular. */
    readonly threshold: number;
    /** Times the y-filters were re-derived after a failed check. */
    readonly restarts: number;
    /** The criterion in words, for reports. */
    readonly criterion: string;
  };
  /** State of the DD-LMS phase loops (null without DD-LMS or before it starts). */
  readonly carrierLoop: {
    /** Loop phase, rad, per polarization. */
    readonly phaseX: number;
    /** Loop phase of the y polarization, rad. */
    readonly phaseY: number;
    /** Loop frequency, Hz (ν·Rs/2π), per polarization. */
    readonly frequencyHzX: number;
    /** Loop frequency of the y polarization, Hz. */
    readonly frequencyHzY: number;
  } | null;
}

/** Most points the equalizer's error trace keeps (bounded memory on any capture length). */
export const EQUALIZER_TRACE_POINTS = 2048;
/** Longest segment of the hot loop, symbols (its scratch stays in the L1 cache). */
const SEGMENT_SYMBOLS = 256;
/** Symbols between singularity checks after pre-convergence. */
const CHECK_EVERY = 1024;
/** In-band frequencies of the singularity test, and the band (fraction of fs/2): |f| ≤ 0.4·Rs at 2 Sa/symbol. */
const CHECK_POINTS = 17;
const CHECK_BAND = 0.4;
/** Blind outputs observed before the DD-LMS switch to acquire its phase loop. */
const ACQUIRE_SYMBOLS = 256;

const SEPARATION_CRITERION =
  'over the last window of output symbols: the fourth-order cumulants between the outputs, and of each output with ' +
  'itself 1–2 symbols later, normalized (dependence; 0 when each output carries one source, at any SNR) at most its ' +
  'threshold; the separation index σ = (E|z|⁴ − 2(E|z|²)²)/((E|a|⁴ − 2)(E|z|²)²) of both outputs ((s/(1+s))² for a ' +
  'perfect output at SNR s; Shalvi & Weinstein 1990) at least its threshold; and the taps not singular';
/** Lags, in symbols, of the dependence measure. */
const DEPENDENCE_LAGS = 2;
const SINGULARITY_CRITERION =
  'mean over 17 frequencies |f| ≤ 0.4·Rs of |det H(f)|/(‖row x‖·‖row y‖) of the equalizer response below the threshold';

/**
 * The adaptive 2×2 butterfly equalizer: polarization demultiplexing and
 * linear equalization (DGD, residual dispersion, filtering) of a
 * T/2-spaced dual-polarization signal, one output symbol per polarization.
 *
 * Four complex FIR filters of L taps (L odd) form the butterfly
 *
 *   x̂[k] = Σⱼ hxx[j]·x[2k + c − j] + hxy[j]·y[2k + c − j],  c = (L − 1)/2
 *   ŷ[k] = Σⱼ hyx[j]·x[2k + c − j] + hyy[j]·y[2k + c − j]
 *
 * so output symbol k is centred on input sample 2k (the input's even
 * samples are the symbol instants; samples outside the capture count as
 * zero). The taps adapt by stochastic gradient, h ← h + μ·e·u*, with the
 * error e from the rule of the current phase of the schedule:
 * 1. pre-convergence: CMA (Godard 1980), optionally with the y-filters
 *    derived from the x-filters by the orthogonality relation (Kikuchi 2011)
 *    so that the two outputs cannot pick the same polarization;
 * 2. blind: CMA for QPSK, RDE for 16/64QAM (Fatadin, Ives & Savory 2009), all
 *    four filters free; singularity checked every 1024 symbols and the
 *    y-filters re-derived if it is found;
 * 3. optional DD-LMS with a decision-directed carrier-phase loop; the
 *    output keeps the carrier phase.
 * Convergence over the start of the capture: see `convergeOnStart`.
 *
 * Input: 'twoSps' blocks (samplesPerSymbol = 2); output: 'symbols' blocks at
 * half the sample rate, ⌈n/2⌉ symbols for n input samples in all. Block-size
 * invariant: delay line, sample phase and taps carry across blocks.
 *
 * @throws OptionError for any option out of range
 * @throws BlockError for a block that is not 'twoSps' at 2 samples per symbol
 * @example
 * const eq = butterflyEqualizer({ modulation: '16qam', taps: 11 });
 * const symbols = concatBlocks([eq.process(block), eq.flush() ?? emptyBlock('symbols', 32e9, 1)]);
 * if (!eq.diagnostics().convergence.converged) throw new Error('equalizer did not converge');
 */
export function butterflyEqualizer(options: EqualizerOptions): Stage<'twoSps', 'symbols', EqualizerDiagnostics> {
  return new ButterflyEqualizer(options);
}

interface Resolved {
  modulation: ModulationName;
  L: number;
  blindRule: 'cma' | 'rde' | UpdateRule;
  mu: { preConvergence: number; cma: number; rde: number; ddLms: number };
  pre: number;
  startSymbols: number;
  passes: number;
  updateEvery: number;
  initialTaps: EqualizerStart | ButterflyTaps;
  retryStarts: readonly EqualizerStart[];
  training: EqualizerTraining | null;
  dd: { startSymbol: number; phaseLoop: PhaseLoopGains; rule: UpdateRule | null } | null;
  orthogonalStart: boolean;
  restart: boolean;
  singularThreshold: number;
  window: number;
  convergenceThreshold: number;
  dependenceThreshold: number;
  traceEvery: number;
}

class ButterflyEqualizer implements Stage<'twoSps', 'symbols', EqualizerDiagnostics> {
  readonly name = NAME;
  readonly input = 'twoSps' as const;
  readonly output = 'symbols' as const;
  private readonly o: Resolved;
  private readonly L: number;
  private readonly c: number;
  private readonly kurtosis: number;
  private readonly preRule: UpdateRule;
  private readonly blind: UpdateRule;
  private readonly dd: UpdateRule | null;
  private readonly taps: Float64Array;
  /** Per-symbol factor of the pre-convergence step size. */
  private readonly preDecay: number;
  /** Pre-convergence symbols at the full step size. */
  private readonly preHold: number;
  /** Scratch: outputs [x̂re, x̂im, ŷre, ŷim] and errors. */
  private readonly z = new Float64Array(4);
  private readonly ex = new Float64Array(2);
  private readonly ey = new Float64Array(2);
  /** Scratch of one segment of the hot loop: {@link ADAPT_STRIDE} numbers per symbol. */
  private readonly segment = new Float64Array(ADAPT_STRIDE * SEGMENT_SYMBOLS);

  // Stream state.
  private collecting!: boolean;
  private collectX!: Float64Array;
  private collectY!: Float64Array;
  private collected!: number;
  private lineX!: Float64Array;
  private lineY!: Float64Array;
  /** Absolute index (input samples) of lineX[0]. */
  private lineStart!: number;
  private received!: number;
  private nextSymbol!: number;
  private sampleRate!: number;

  // Adaptation state.
  private attempts!: EqualizerAttempt[];
  private chosen!: number;
  /** True while the passes over the start run: the taps are judged after them, not re-derived during them. */
  private inStartPasses!: boolean;
  private adapted!: number;
  private restarts!: number;
  private currentRule!: string;
  /** Series: cost x, cost y, separation x, separation y; one step per `traceEvery` adapted symbols. */
  private readonly trace = new DecimatedTrace(4, EQUALIZER_TRACE_POINTS);
  /** Running sums over the current trace interval: cost x, cost y, |x̂|², |x̂|⁴, |ŷ|², |ŷ|⁴. */
  private readonly acc = new Float64Array(6);
  /** The last `window` output symbols, per polarization (interleaved complex ring buffers). */
  private windowX!: Float64Array;
  private windowY!: Float64Array;
  private windowFill!: number;
  private windowPos!: number;

  constructor(options: EqualizerOptions) {
    this.o = validate(options);
    const o = this.o;
    this.L = o.L;
    this.c = (o.L - 1) / 2;
    const con = constellation(o.modulation);
    // E|a|⁴ at unit power is the CMA radius R2.
    this.kurtosis = con.cmaRadius2;
    this.preRule = cmaRule(con, o.mu.preConvergence);
    this.blind =
      typeof o.blindRule === 'object' ? o.blindRule : o.blindRule === 'cma' ? cmaRule(con, o.mu.cma) : rdeRule(con, o.mu.rde);
    this.dd = o.training
      ? dataAidedRule(con, o.mu.ddLms, o.training, o.dd?.phaseLoop)
      : o.dd
        ? (o.dd.rule ?? ddLmsRule(con, o.mu.ddLms, o.dd.phaseLoop))
        : null;
    this.taps = new Float64Array(8 * o.L);
    this.preHold = Math.floor(o.pre / 2);
    this.preDecay = o.pre > this.preHold ? (o.mu.cma / o.mu.preConvergence) ** (1 / (o.pre - this.preHold)) : 1;
    this.reset();
  }

  process(block: FieldBlock<'twoSps'>): FieldBlock<'symbols'> {
    checkBlock(NAME, block, 'twoSps');
    if (block.samplesPerSymbol !== 2) {
      throw new BlockError(`${NAME}: expected 2 samples per symbol, received ${block.samplesPerSymbol}`);
    }
    this.sampleRate = checkRate(NAME, this.sampleRate, block.sampleRate);
    if (!this.collecting) return this.stream(block.x, block.y, false);
    this.collect(block.x, block.y);
    if (this.collected < 2 * this.o.startSymbols) return this.emptyOutput();
    return this.startStreaming(false);
  }

  flush(): FieldBlock<'symbols'> | null {
    if (Number.isNaN(this.sampleRate)) return null;
    if (this.collecting) return this.startStreaming(true);
    return this.stream(complexArray(0), complexArray(0), true);
  }

  reset(): void {
    const o = this.o;
    this.restartAdaptation(o.initialTaps);
    this.attempts = [];
    this.chosen = -1;
    this.inStartPasses = false;
    this.collecting = o.passes > 0;
    this.collectX = new Float64Array(0);
    this.collectY = new Float64Array(0);
    this.collected = 0;
    this.lineX = new Float64Array(2 * this.c);
    this.lineY = new Float64Array(2 * this.c);
    this.lineStart = -this.c;
    this.received = 0;
    this.nextSymbol = 0;
    this.sampleRate = Number.NaN;
    this.windowX = new Float64Array(2 * o.window);
    this.windowY = new Float64Array(2 * o.window);
    this.windowFill = 0;
    this.windowPos = 0;
  }

  diagnostics(): EqualizerDiagnostics {
    const o = this.o;
    const L = this.L;
    const rho = rowOrthogonality(this.taps, L, CHECK_POINTS, CHECK_BAND);
    const singular = !(rho >= o.singularThreshold);
    const { x: wx, y: wy, n: wn } = this.windowInOrder();
    const sepX = outputSeparation(wx, wn, this.kurtosis);
    const sepY = outputSeparation(wy, wn, this.kurtosis);
    const dependence = outputDependence(wx, wy, wn, this.kurtosis, DEPENDENCE_LAGS);
    // Trained outputs are pulled onto their own targets: the fourth-order verdicts are for blind
    // adaptation, and they cannot tell anything for a near-Gaussian constellation (a shaped one).
    const converged = !singular && (o.training !== null || this.separated(sepX, sepY, dependence));
    const filter = (offset: number) => this.taps.slice(offset * L, offset * L + 2 * L) as ComplexArray;
    const phases: EqualizerPhase[] = [];
    if (o.pre > 0) phases.push({ rule: 'cma', fromSymbol: 0, orthogonalY: o.orthogonalStart });
    phases.push({ rule: this.blind.name, fromSymbol: o.pre, orthogonalY: false });
    if (o.dd && this.dd) phases.push({ rule: this.dd.name, fromSymbol: o.dd.startSymbol, orthogonalY: false });
    const loopOn = this.dd !== null && o.dd !== null && this.adapted >= o.dd.startSymbol;
    const symbolRate = this.sampleRate / 2;
    const trace = this.trace.result();
    return {
      taps: L,
      symbols: this.nextSymbol,
      adaptedSymbols: this.adapted,
      phases,
      rule: this.currentRule,
      trace: {
        every: o.traceEvery * trace.every,
        costX: trace.series[0],
        costY: trace.series[1],
        separationX: trace.series[2],
        separationY: trace.series[3],
      },
      finalTaps: { xx: filter(FILTER_XX), xy: filter(FILTER_XY), yx: filter(FILTER_YX), yy: filter(FILTER_YY) },
      start: { attempts: this.attempts.slice(), chosen: this.chosen },
      convergence: {
        converged,
        separationX: sepX,
        separationY: sepY,
        dependence,
        window: o.window,
        threshold: o.convergenceThreshold,
        dependenceThreshold: o.dependenceThreshold,
        criterion: SEPARATION_CRITERION,
      },
      singularity: {
        singular,
        rowOrthogonality: rho,
        threshold: o.singularThreshold,
        restarts: this.restarts,
        criterion: SINGULARITY_CRITERION,
      },
      carrierLoop: loopOn && this.dd?.loopState ? carrierLoop(this.dd.loopState(0), this.dd.loopState(1), symbolRate) : null,
    };
  }

  describe(): StageRecord {
    const o = this.o;
    const taps: JsonValue =
      typeof o.initialTaps === 'string'
        ? o.initialTaps
        : {
            xx: Array.from(o.initialTaps.xx),
            xy: Array.from(o.initialTaps.xy),
            yx: Array.from(o.initialTaps.yx),
            yy: Array.from(o.initialTaps.yy),
          };
    return {
      stage: NAME,
      options: {
        modulation: o.modulation,
        taps: o.L,
        blindRule: typeof o.blindRule === 'object' ? o.blindRule.name : o.blindRule,
        stepSize: { ...o.mu },
        preConvergenceSymbols: o.pre,
        convergeOnStart: { symbols: o.startSymbols, passes: o.passes },
        updateEvery: o.updateEvery,
        initialTaps: taps,
        retryStarts: [...o.retryStarts],
        ddLms: o.dd
          ? { startSymbol: o.dd.startSymbol, phaseLoop: { ...o.dd.phaseLoop }, ...(o.dd.rule ? { rule: o.dd.rule.name } : {}) }
          : null,
        // The targets by where they come from (the symbols themselves are the reference's).
        training: o.training
          ? {
              x: { delay: o.training.x.delay, conjugated: o.training.x.conjugated, symbols: o.training.x.symbols.length >> 1 },
              y: { delay: o.training.y.delay, conjugated: o.training.y.conjugated, symbols: o.training.y.symbols.length >> 1 },
            }
          : null,
        singularity: { orthogonalStart: o.orthogonalStart, restart: o.restart, threshold: o.singularThreshold },
        convergence: { window: o.window, threshold: o.convergenceThreshold, dependence: o.dependenceThreshold },
        traceEvery: o.traceEvery,
      },
    };
  }

  /** Sets the taps to a start and every adaptation state (rules, counts, trace) back to its beginning. */
  private restartAdaptation(init: EqualizerStart | ButterflyTaps): void {
    const L = this.L;
    const t = this.taps;
    const c = this.c;
    t.fill(0);
    if (init === 'centre-spike') {
      t[FILTER_XX * L + 2 * c] = 1;
      t[FILTER_YY * L + 2 * c] = 1;
    } else if (init === 'rotated') {
      t[FILTER_XX * L + 2 * c] = Math.SQRT1_2;
      t[FILTER_XY * L + 2 * c] = Math.SQRT1_2;
      t[FILTER_YX * L + 2 * c] = -Math.SQRT1_2;
      t[FILTER_YY * L + 2 * c] = Math.SQRT1_2;
    } else if (init === 'circular') {
      t[FILTER_XX * L + 2 * c] = Math.SQRT1_2;
      t[FILTER_XY * L + 2 * c + 1] = Math.SQRT1_2;
      t[FILTER_YX * L + 2 * c + 1] = Math.SQRT1_2;
      t[FILTER_YY * L + 2 * c] = Math.SQRT1_2;
    } else {
      t.set(init.xx, FILTER_XX * L);
      t.set(init.xy, FILTER_XY * L);
      t.set(init.yx, FILTER_YX * L);
      t.set(init.yy, FILTER_YY * L);
    }
    this.preRule.reset();
    this.blind.reset();
    this.dd?.reset();
    this.adapted = 0;
    this.restarts = 0;
    this.currentRule = 'none';
    this.trace.reset();
    this.acc.fill(0);
  }

  /** Whether outputs with these figures pass the convergence criteria (singularity aside). */
  private separated(sepX: number, sepY: number, dependence: number): boolean {
    const o = this.o;
    return sepX >= o.convergenceThreshold && sepY >= o.convergenceThreshold && dependence <= o.dependenceThreshold;
  }

  private emptyOutput(): FieldBlock<'symbols'> {
    return fieldBlock('symbols', complexArray(0), complexArray(0), this.sampleRate / 2, 1);
  }

  private collect(x: ComplexArray, y: ComplexArray): void {
    const need = 2 * (this.collected + (x.length >> 1));
    if (need > this.collectX.length) {
      const size = Math.max(need, 2 * this.collectX.length);
      const nx = new Float64Array(size);
      const ny = new Float64Array(size);
      nx.set(this.collectX.subarray(0, 2 * this.collected));
      ny.set(this.collectY.subarray(0, 2 * this.collected));
      this.collectX = nx;
      this.collectY = ny;
    }
    this.collectX.set(x, 2 * this.collected);
    this.collectY.set(y, 2 * this.collected);
    this.collected += x.length >> 1;
  }

  /** Adapts over the buffered start of the capture, then streams it from its first sample. */
  private startStreaming(final: boolean): FieldBlock<'symbols'> {
    const n = Math.min(this.collected, 2 * this.o.startSymbols);
    const c = this.c;
    // The start with c zeros of history before it, as the stream will see it.
    const ux = new Float64Array(2 * (c + n));
    const uy = new Float64Array(2 * (c + n));
    ux.set(this.collectX.subarray(0, 2 * n), 2 * c);
    uy.set(this.collectY.subarray(0, 2 * n), 2 * c);
    // Symbols whose whole window lies inside the buffer: 2k + c ≤ n − 1.
    const count = n - 1 - c >= 0 ? Math.floor((n - 1 - c) / 2) + 1 : 0;
    if (this.o.passes > 0) this.adaptOnStart(ux, uy, count);
    this.collecting = false;
    const x = this.collectX.subarray(0, 2 * this.collected) as ComplexArray;
    const y = this.collectY.subarray(0, 2 * this.collected) as ComplexArray;
    const out = this.stream(x, y, final);
    this.collectX = new Float64Array(0);
    this.collectY = new Float64Array(0);
    this.collected = 0;
    return out;
  }

  /**
   * The passes over the start from the configured start, then from each
   * retry start while the result is singular or its outputs dependent; the
   * stream continues from the first attempt that separates, or else from
   * the best one (not singular first, then the least dependent), run again.
   */
  private adaptOnStart(ux: Float64Array, uy: Float64Array, count: number): void {
    const o = this.o;
    const starts: (EqualizerStart | ButterflyTaps)[] = [o.initialTaps, ...o.retryStarts.filter((r) => r !== o.initialTaps)];
    this.attempts = [];
    this.inStartPasses = true;
    for (const start of starts) {
      if (this.attempts.length > 0) this.restartAdaptation(start);
      this.passesOverStart(ux, uy, count);
      const a = this.judgeStart(ux, uy, count, typeof start === 'string' ? start : 'given');
      this.attempts.push(a);
      if (a.separated) break;
    }
    let best = this.attempts.length - 1;
    if (!this.attempts[best].separated) {
      const score = (a: EqualizerAttempt) => (a.singular ? 1 : 0) + a.dependence;
      for (let i = 0; i < this.attempts.length; i++) if (score(this.attempts[i]) < score(this.attempts[best])) best = i;
      if (best !== this.attempts.length - 1) {
        this.restartAdaptation(starts[best]);
        this.passesOverStart(ux, uy, count);
      }
    }
    this.chosen = best;
    this.inStartPasses = false;
  }

  /** `passes` runs of adaptation over the start, each from the capture's first symbol, and back to it for the stream. */
  private passesOverStart(ux: Float64Array, uy: Float64Array, count: number): void {
    for (let p = 0; p < this.o.passes; p++) {
      if (p > 0) this.rewindCarrier(count);
      this.run(ux, uy, 2 * this.c, count, null, null);
    }
    this.rewindCarrier(count);
  }

  /** Filters the start with the taps as they are (no adaptation) and judges the outputs. */
  private judgeStart(ux: Float64Array, uy: Float64Array, count: number, start: EqualizerStart | 'given'): EqualizerAttempt {
    const ox = new Float64Array(2 * count);
    const oy = new Float64Array(2 * count);
    const z = this.z;
    for (let k = 0; k < count; k++) {
      butterflyOutput(this.taps, this.L, ux, uy, 2 * this.c + 2 * k, z);
      ox[2 * k] = z[0];
      ox[2 * k + 1] = z[1];
      oy[2 * k] = z[2];
      oy[2 * k + 1] = z[3];
    }
    const rho = rowOrthogonality(this.taps, this.L, CHECK_POINTS, CHECK_BAND);
    const singular = !(rho >= this.o.singularThreshold);
    const separationX = outputSeparation(ox, count, this.kurtosis);
    const separationY = outputSeparation(oy, count, this.kurtosis);
    const dependence = outputDependence(ox, oy, count, this.kurtosis, DEPENDENCE_LAGS);
    return {
      start,
      rowOrthogonality: rho,
      singular,
      dependence,
      separationX,
      separationY,
      separated: !singular && this.separated(separationX, separationY, dependence),
    };
  }

  /** Filters (and adapts on) every symbol whose window is complete; `final` pads the end with zeros. */
  private stream(x: ComplexArray, y: ComplexArray, final: boolean): FieldBlock<'symbols'> {
    const c = this.c;
    const nNew = x.length >> 1;
    const pad = final ? c : 0;
    const lineLen = this.lineX.length >> 1;
    const uLen = lineLen + nNew + pad;
    const ux = new Float64Array(2 * uLen);
    const uy = new Float64Array(2 * uLen);
    ux.set(this.lineX, 0);
    uy.set(this.lineY, 0);
    ux.set(x, 2 * lineLen);
    uy.set(y, 2 * lineLen);
    this.received += nNew;
    // Last symbol: its window must be in the buffer, and (at the end) its centre a real sample.
    let last = Math.floor((this.lineStart + uLen - 1 - c) / 2);
    if (final) last = Math.min(last, Math.floor((this.received - 1) / 2));
    const count = Math.max(0, last - this.nextSymbol + 1);
    const outX = complexArray(count);
    const outY = complexArray(count);
    this.run(ux, uy, 2 * this.nextSymbol + c - this.lineStart, count, outX, outY);
    this.nextSymbol += count;
    // Keep the samples the next symbol's window still needs.
    const keepFrom = Math.max(0, 2 * this.nextSymbol - c - this.lineStart);
    this.lineX = ux.slice(2 * keepFrom, 2 * (lineLen + nNew));
    this.lineY = uy.slice(2 * keepFrom, 2 * (lineLen + nNew));
    this.lineStart += keepFrom;
    return fieldBlock('symbols', outX, outY, this.sampleRate / 2, 1);
  }

  /**
   * The hot loop: `count` symbols, the first with its newest window sample at
   * index `newest0` of the delay lines, the next ones 2 samples later. Writes
   * the outputs when `outX`/`outY` are given (the output run), adapts always.
   *
   * The symbols go in segments that end where the schedule changes rule or
   * something is due (a trace point, a singularity check, the start of the
   * DD-LMS acquisition window); each segment runs in the kernel of its rule
   * ({@link adaptRadial} for CMA and RDE, {@link adaptWithRule} otherwise)
   * and its outputs and costs are then taken from the scratch.
   */
  private run(
    ux: Float64Array,
    uy: Float64Array,
    newest0: number,
    count: number,
    outX: Float64Array | null,
    outY: Float64Array | null,
  ): void {
    if (count <= 0) return;
    const o = this.o;
    const L = this.L;
    const taps = this.taps;
    const seg = this.segment;
    const maxSeg = seg.length / ADAPT_STRIDE;
    const dd = this.dd;
    const ddStart = o.dd ? o.dd.startSymbol : Number.POSITIVE_INFINITY;
    const acquireFrom = ddStart - ACQUIRE_SYMBOLS;
    const pre = o.pre;
    const blind = this.blind;
    const preRadial = this.preRule.radial as RadialTargets;
    const windowX = this.windowX;
    const windowY = this.windowY;
    const window = o.window;
    const acc = this.acc;
    let a = this.adapted;
    // Next adapted-symbol counts at which a trace point is due and the taps are checked for singularity.
    let nextTrace = (Math.floor(a / o.traceEvery) + 1) * o.traceEvery;
    let nextCheck = a < pre ? pre : pre + (Math.floor((a - pre) / CHECK_EVERY) + 1) * CHECK_EVERY;
    for (let s = 0; s < count; ) {
      let end = Math.min(a + count - s, a + maxSeg, nextTrace, nextCheck);
      if (a < pre) end = Math.min(end, pre);
      if (a < acquireFrom) end = Math.min(end, acquireFrom);
      if (a < ddStart) end = Math.min(end, ddStart);
      const n = end - a;
      const first = newest0 + 2 * s;
      if (a < pre) {
        adaptRadial(
          taps,
          L,
          ux,
          uy,
          first,
          n,
          preRadial.rings2,
          preRadial.bounds2,
          o.mu.preConvergence,
          this.preDecay,
          this.preHold,
          a,
          o.updateEvery,
          o.orthogonalStart,
          seg,
        );
      } else if (dd !== null && a >= ddStart) {
        adaptWithRule(taps, L, ux, uy, first, n, dd, dd.stepSize, a, o.updateEvery, this.z, this.ex, this.ey, seg);
      } else if (blind.radial) {
        adaptRadial(
          taps,
          L,
          ux,
          uy,
          first,
          n,
          blind.radial.rings2,
          blind.radial.bounds2,
          blind.stepSize,
          1,
          Number.POSITIVE_INFINITY,
          a,
          o.updateEvery,
          false,
          seg,
        );
      } else {
        adaptWithRule(taps, L, ux, uy, first, n, blind, blind.stepSize, a, o.updateEvery, this.z, this.ex, this.ey, seg);
      }
      // Only a rule that acquires its carrier observes the blind outputs before the switch.
      const observer = dd !== null && a >= acquireFrom && a < ddStart && dd.observe ? dd : null;
      for (let i = 0, k = 0; i < n; i++, k += ADAPT_STRIDE) {
        const xr = seg[k];
        const xi = seg[k + 1];
        const yr = seg[k + 2];
        const yi = seg[k + 3];
        const px = xr * xr + xi * xi;
        const py = yr * yr + yi * yi;
        if (outX !== null && outY !== null) {
          const j = 2 * (s + i);
          outX[j] = xr;
          outX[j + 1] = xi;
          outY[j] = yr;
          outY[j + 1] = yi;
          const p = 2 * this.windowPos;
          windowX[p] = xr;
          windowX[p + 1] = xi;
          windowY[p] = yr;
          windowY[p + 1] = yi;
          this.windowPos = this.windowPos + 1 === window ? 0 : this.windowPos + 1;
          if (this.windowFill < window) this.windowFill++;
        }
        if (observer !== null) {
          observer.observe?.(xr, xi, 0);
          observer.observe?.(yr, yi, 1);
        }
        acc[0] += seg[k + 4];
        acc[1] += seg[k + 5];
        acc[2] += px;
        acc[3] += px * px;
        acc[4] += py;
        acc[5] += py * py;
      }
      a = end;
      s += n;
      this.adapted = a;
      if (a === nextTrace) {
        this.tracePoint();
        nextTrace += o.traceEvery;
      }
      if (dd !== null && a === ddStart) dd.acquire?.();
      if (a === nextCheck) {
        if (o.restart && !this.inStartPasses) this.checkSingularity();
        nextCheck += CHECK_EVERY;
      }
    }
    const last = a - 1;
    this.currentRule = last < pre ? 'cma' : last >= ddStart && dd !== null ? dd.name : blind.name;
  }

  /** Carries the DD-LMS loop back to the capture's start if it is running. */
  private rewindCarrier(symbols: number): void {
    if (this.dd && this.o.dd && this.adapted > this.o.dd.startSymbol) this.dd.rewind?.(symbols);
  }

  private tracePoint(): void {
    const n = this.o.traceEvery;
    const acc = this.acc;
    const t = this.trace;
    t.add(0, acc[0] / n);
    t.add(1, acc[1] / n);
    t.add(2, separationIndex(acc[2] / n, acc[3] / n, this.kurtosis));
    t.add(3, separationIndex(acc[4] / n, acc[5] / n, this.kurtosis));
    t.step();
    acc.fill(0);
  }

  private checkSingularity(): void {
    const rho = rowOrthogonality(this.taps, this.L, CHECK_POINTS, CHECK_BAND);
    if (rho < this.o.singularThreshold) {
      deriveOrthogonalRow(this.taps, this.L);
      this.restarts++;
    }
  }

  /** The last `window` outputs of each polarization, oldest first. */
  private windowInOrder(): { x: Float64Array; y: Float64Array; n: number } {
    const n = this.windowFill;
    const w = this.o.window;
    // Full: the oldest sits at windowPos; filling: at 0.
    const first = n === w ? this.windowPos : 0;
    const order = (ring: Float64Array) => {
      const out = new Float64Array(2 * n);
      out.set(ring.subarray(2 * first, 2 * n));
      out.set(ring.subarray(0, 2 * first), 2 * (n - first));
      return out;
    };
    return { x: order(this.windowX), y: order(this.windowY), n };
  }
}

/** Separation index (see {@link separationIndex}) of N outputs (interleaved complex). */
function outputSeparation(z: Float64Array, n: number, kurtosis: number): number {
  if (n === 0) return 0;
  let m2 = 0;
  let m4 = 0;
  for (let i = 0; i < 2 * n; i += 2) {
    const p = z[i] * z[i] + z[i + 1] * z[i + 1];
    m2 += p;
    m4 += p * p;
  }
  return separationIndex(m2 / n, m4 / n, kurtosis);
}

function validate(opt: EqualizerOptions): Resolved {
  const fail = (option: string, expected: string, received: unknown): never => {
    throw new OptionError(NAME, option, expected, received);
  };
  const integer = (option: string, v: unknown, def: number, min: number, max = Number.MAX_SAFE_INTEGER): number => {
    if (v === undefined) return def;
    if (typeof v !== 'number' || !Number.isInteger(v) || v < min || v > max) {
      fail(option, max === Number.MAX_SAFE_INTEGER ? `an integer ≥ ${min}` : `an integer from ${min} to ${max}`, v);
    }
    return v as number;
  };
  const positive = (option: string, v: unknown, def: number): number => {
    if (v === undefined) return def;
    if (typeof v !== 'number' || !Number.isFinite(v) || !(v > 0)) fail(option, 'a finite number > 0', v);
    return v as number;
  };
  const fraction = (option: string, v: unknown, def: number): number => {
    if (v === undefined) return def;
    if (typeof v !== 'number' || !(v > 0 && v < 1)) fail(option, 'a number in (0, 1)', v);
    return v as number;
  };
  if (opt === null || typeof opt !== 'object') fail('options', 'an options object', opt);
  checkModulation(NAME, 'modulation', opt.modulation);
  const L = integer('taps', opt.taps, 11, 1, 201);
  if (L % 2 === 0) fail('taps', 'an odd number of taps', L);
  const con = constellation(opt.modulation);
  const blindRule = opt.blindRule ?? (con.ringRadii2.length === 1 ? 'cma' : 'rde');
  if (blindRule !== 'cma' && blindRule !== 'rde' && !isRule(blindRule))
    fail('blindRule', "'cma', 'rde' or an update rule ({ name, stepSize, error(), reset() })", blindRule);
  const mu = {
    preConvergence: positive('stepSize.preConvergence', opt.stepSize?.preConvergence, 3e-3),
    cma: positive('stepSize.cma', opt.stepSize?.cma, blindStepSizes(con).cma),
    rde: positive('stepSize.rde', opt.stepSize?.rde, blindStepSizes(con).rde),
    ddLms: positive('stepSize.ddLms', opt.stepSize?.ddLms, 3e-4),
  };
  // Training adapts on the known symbols from the first one: no blind pre-convergence.
  const pre = opt.training ? 0 : integer('preConvergenceSymbols', opt.preConvergenceSymbols, 8192, 0);
  const start = opt.convergeOnStart ?? { symbols: 8192, passes: 2 };
  const startSymbols = integer('convergeOnStart.symbols', start.symbols, 8192, 1);
  const passes = integer('convergeOnStart.passes', start.passes, 2, 0, 100);
  const updateEvery = integer('updateEvery', opt.updateEvery, 1, 1);
  const initialTaps = opt.initialTaps ?? 'centre-spike';
  const startNames = EQUALIZER_STARTS.map((n) => `'${n}'`).join(', ');
  if (typeof initialTaps === 'string') {
    if (!EQUALIZER_STARTS.includes(initialTaps)) fail('initialTaps', `one of ${startNames} or { xx, xy, yx, yy }`, initialTaps);
  } else {
    if (typeof initialTaps !== 'object' || initialTaps === null)
      fail('initialTaps', `one of ${startNames} or { xx, xy, yx, yy }`, initialTaps);
    for (const k of ['xx', 'xy', 'yx', 'yy'] as const) {
      const f = initialTaps[k];
      if (!(f instanceof Float64Array) || f.length !== 2 * L) {
        fail(`initialTaps.${k}`, `${L} complex taps (a Float64Array of ${2 * L} numbers)`, f?.length ?? f);
      }
      for (const v of f) if (!Number.isFinite(v)) fail(`initialTaps.${k}`, 'finite values', v);
    }
  }
  const training = opt.training ?? null;
  if (training !== null) {
    for (const p of ['x', 'y'] as const) {
      const t = training[p];
      if (!(t?.symbols instanceof Float64Array) || t.symbols.length < 2 || t.symbols.length % 2 !== 0)
        fail(`training.${p}.symbols`, 'transmitted symbols (a non-empty interleaved Float64Array)', t?.symbols);
      if (!Number.isInteger(t.delay)) fail(`training.${p}.delay`, 'an integer delay in symbols', t.delay);
      if (typeof t.conjugated !== 'boolean') fail(`training.${p}.conjugated`, 'true or false', t.conjugated);
    }
  }
  const retryStarts = training !== null ? [] : (opt.retryStarts ?? ['rotated', 'circular']);
  if (!Array.isArray(retryStarts) || retryStarts.some((r) => !EQUALIZER_STARTS.includes(r)))
    fail('retryStarts', `a list of ${startNames}`, retryStarts);
  let dd: Resolved['dd'] = null;
  if (training !== null) dd = { startSymbol: 0, phaseLoop: opt.ddLms?.phaseLoop ?? DEFAULT_PHASE_LOOP, rule: null };
  else if (opt.ddLms !== undefined) {
    const startSymbol = integer('ddLms.startSymbol', opt.ddLms.startSymbol, 0, pre);
    const loop = opt.ddLms.phaseLoop ?? DEFAULT_PHASE_LOOP;
    const kp = loop.proportional;
    const ki = loop.integral;
    if (typeof kp !== 'number' || !(kp > 0 && kp < 1)) fail('ddLms.phaseLoop.proportional', 'a gain in (0, 1)', kp);
    if (typeof ki !== 'number' || !(ki >= 0 && ki < kp)) fail('ddLms.phaseLoop.integral', 'a gain in [0, proportional)', ki);
    const rule = opt.ddLms.rule ?? null;
    if (rule !== null && !isRule(rule)) fail('ddLms.rule', 'an update rule ({ name, stepSize, error(), reset() })', rule);
    dd = { startSymbol, phaseLoop: { proportional: kp, integral: ki }, rule };
  }
  const sing = opt.singularity ?? {};
  const orthogonalStart = sing.orthogonalStart ?? false;
  const restart = sing.restart ?? true;
  if (typeof orthogonalStart !== 'boolean') fail('singularity.orthogonalStart', 'true or false', orthogonalStart);
  if (typeof restart !== 'boolean') fail('singularity.restart', 'true or false', restart);
  const singularThreshold = fraction('singularity.threshold', sing.threshold, 0.5);
  const conv = opt.convergence ?? {};
  const window = integer('convergence.window', conv.window, 8192, 16);
  const convergenceThreshold = fraction('convergence.threshold', conv.threshold, 0.1);
  const dependenceThreshold = fraction('convergence.dependence', conv.dependence, 0.15);
  const traceEvery = integer('traceEvery', opt.traceEvery, 256, 1);
  return {
    modulation: opt.modulation,
    L,
    blindRule,
    mu,
    pre,
    startSymbols,
    passes,
    updateEvery,
    initialTaps,
    retryStarts,
    training,
    dd,
    orthogonalStart,
    restart,
    singularThreshold,
    window,
    convergenceThreshold,
    dependenceThreshold,
    traceEvery,
  };
}

/** Whether a value has what the equalizer calls of an update rule. */
function isRule(r: unknown): r is UpdateRule {
  if (typeof r !== 'object' || r === null) return false;
  const u = r as Partial<UpdateRule>;
  return typeof u.name === 'string' && typeof u.error === 'function' && typeof u.reset === 'function' && (u.stepSize ?? 0) > 0;
}

/** The diagnostics' view of a carrier loop: phases in rad, frequencies in Hz. */
function carrierLoop(x: CarrierLoopState, y: CarrierLoopState, symbolRate: number) {
  return {
    phaseX: x.phase,
    phaseY: y.phase,
    frequencyHzX: (x.frequency * symbolRate) / (2 * Math.PI),
    frequencyHzY: (y.frequency * symbolRate) / (2 * Math.PI),
  };
}

/**
 * The blind rules' step sizes for a constellation, by its least distance d
 * at unit power (the finer the constellation, the smaller the steps, so that
 * the misadjustment stays below its decision regions): d above 0.5 (QPSK,
 * 8QAM, 16QAM, PS-64QAM down to about 4.3 bits) 3e-4 for CMA and 1e-4 for
 * RDE; above 0.25 (32QAM, 64QAM) 1e-4 and 3e-5 (measured on 64QAM: the
 * 16QAM steps cost about 0.3 dB at BER 1e-3); below (128QAM, 256QAM)
 * 1e-4 and 1e-5.
 */
function blindStepSizes(c: Constellation): { readonly cma: number; readonly rde: number } {
  if (c.minDistance > 0.5) return { cma: 3e-4, rde: 1e-4 };
  if (c.minDistance > 0.25) return { cma: 1e-4, rde: 3e-5 };
  return { cma: 1e-4, rde: 1e-5 };
}
