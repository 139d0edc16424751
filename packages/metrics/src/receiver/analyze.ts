import {
  type ChannelBlock,
  type ChannelSpectra,
  ChannelSpectraEstimator,
  type CycleSlip,
  checkModulation,
  constellation,
  type DualPol,
  DualPolBuffer,
  type dataAidedRule,
  defaultReceiver,
  type FieldBlock,
  type InputHasher,
  LIBRARY_VERSION,
  type ModulationName,
  type NoReplacement,
  OptionError,
  type ReceiverDiagnostics,
  type ReceiverSettings,
  type ReceiverStages,
  type ReplacedStages,
  runReceiver,
  type StageRecord,
  type StagesWith,
} from '@intradyne/core';
import { type CompactReference, isCompactReference, referencePoints } from '../counting/compact-reference.js';
import { ReferenceMismatchError } from '../counting/reference-mismatch.js';
import { ConstellationDensity, type ConstellationHistogram } from '../density/constellation-density.js';
import { DEFAULT_FIT_SYMBOLS, type Measurement, MeasurementStream, ReferenceNotFoundError } from '../measure/measure.js';
import { snrForGmi } from '../theory/awgn-information.js';
import { snrForBer, theoryBer } from '../theory/qam-ber.js';
import { AcquisitionError, acquireWithReference, type ReferenceAcquisition } from './reference-acquisition.js';

/** Options of {@link analyzeCapture}. */
export interface AnalyzeOptions {
  /** Leading recovered symbols left out of the figures (default 2048: clock and carrier loops settling). */
  readonly skipSymbols?: number;
  /**
   * Trailing recovered symbols left out (default 128): the filters (matched
   * filter, dispersion, equalizer) see zeros beyond the end of a capture, so
   * its last symbols carry the edge, not the channel.
   */
  readonly skipTailSymbols?: number;
  /** Largest |measured − expected| normalized fourth moment accepted for the stated modulation (default 0.1). */
  readonly modulationTolerance?: number;
  /**
   * Keep the recovered symbols in the result (default false): memory then
   * grows with the capture; `onSymbols` hands them out in bounded memory.
   */
  readonly keepSymbols?: boolean;
  /**
   * Called with each block of recovered symbols, in order, as the chain
   * delivers it (all of them, the skipped ones too): to write them out
   * while the capture streams.
   */
  readonly onSymbols?: (block: DualPol) => void;
  /**
   * Recovered symbols after the skipped ones on which the synchronization,
   * gains and noise variances are fitted before the rest is measured as it
   * streams (default 262,144, and at least the reference's length; see
   * {@link MeasurementStream}).
   */
  readonly fitSymbols?: number;
  /** Gather the data of the report's pictures in bounded memory (default false): see {@link PlotData}. */
  readonly plotData?: boolean;
  /**
   * The SHA-256 hasher of the input samples (default core's Sha256):
   * a caller with a native one (Node's crypto, WebCrypto in a worker) passes
   * a factory of it; the digest must be the same.
   */
  readonly inputHasher?: () => InputHasher;
  /**
   * How the 2×2 equalizer adapts: 'blind' (CMA and RDE, as a receiver in
   * the field must; the default for uniform formats) or 'data-aided': a
   * blind pass first finds which transmitted symbol each output carries,
   * then the capture runs again with the equalizer trained on those symbols
   * ({@link dataAidedRule}), the best case that blind processing is
   * compared against. The second pass's figures are reported, with
   * `equalizerTraining` saying so. Needs `blocks` that can be read twice
   * (an array, or an iterable that starts over on each iteration), and
   * costs two passes.
   *
   * Shaped formats default to 'data-aided', placed without a blind pass:
   * nearly Gaussian, they give CMA and RDE, and the fourth-power offset
   * estimates, too little to start on, so the reference and the carrier
   * offset are found against the reference on the start of the capture
   * ({@link acquireWithReference}), and the frequency stages remove that
   * offset instead of estimating one.
   */
  readonly equalizerTraining?: EqualizerTrainingMode;
}

/** How the equalizer of an analysis was adapted (see {@link AnalyzeOptions.equalizerTraining}). */
export type EqualizerTrainingMode = 'blind' | 'data-aided';

/** What the report draws beyond the stages' diagnostics, gathered while streaming (bounded memory). */
export interface PlotData {
  /** Density of the recovered symbols that the figures measure (the same leading and trailing symbols left out). */
  readonly constellation: ConstellationHistogram;
  /** Welch spectra of the four input channels (null for a capture shorter than one segment). */
  readonly inputSpectra: ChannelSpectra | null;
}

/** Why an analysis failed; no figure is valid then. */
export interface AnalysisFailure {
  /** Which check failed. */
  readonly check: 'equalizer' | 'reference' | 'modulation' | 'length';
  /** What was found, in a sentence for the user. */
  readonly reason: string;
}

/** Cycle slips found against the synchronized reference, per polarization. */
export interface SlipReport {
  /** Slips of both polarizations. */
  readonly count: number;
  /** Slips of x, in symbol order. */
  readonly x: readonly CycleSlip[];
  /** Slips of y, in symbol order. */
  readonly y: readonly CycleSlip[];
}

/**
 * Does the data look like the stated modulation? The normalized fourth
 * moment K = E|z|⁴/(E|z|²)² of unit-power symbols a plus circular Gaussian
 * noise of variance σ² is (k + 4σ² + 2σ⁴)/(1 + σ²)², k = E|a|⁴ of the
 * constellation (1 for QPSK, 1.32 for 16QAM, 1.381 for 64QAM): a QPSK
 * stream analysed as 16QAM, whose reference sits on the corner points,
 * shows K near 1 instead of 1.32.
 *
 * And are the errors as many as noise of that SNR makes? A denser
 * constellation analysed as a sparser one (16QAM as QPSK, against a
 * reference of its quadrants) has its extra points counted as noise: the
 * measured SNR is low, yet its decisions hardly ever fail. Gaussian noise
 * at the measured SNR gives the BER of Cho & Yoon (2002); one that the
 * measurement's 95 % interval puts at most a twentieth of it is not noise
 * but structure (impairments that distort without noise only ever add
 * errors).
 */
export interface ModulationFit {
  /** K measured on the recovered symbols. */
  readonly measured: number;
  /** K expected for the stated modulation at the measured SNR. */
  readonly expected: number;
  /** Largest |measured − expected| accepted. */
  readonly tolerance: number;
  /** The AWGN BER of the stated modulation at the measured SNR (Cho & Yoon 2002). */
  readonly theoryBer: number;
  /** The upper end of the measured BER's 95 % interval. */
  readonly berUpper: number;
  /** Whether the data fit the stated modulation: the fourth moment within the tolerance, and berUpper > theoryBer/20. */
  readonly fits: boolean;
}

/** Everything needed to run the same analysis again. */
export interface ReproducibilityRecord {
  /** Always 'intradyne'. */
  readonly library: string;
  /** The library version that made the result. */
  readonly version: string;
  /** The chain with every option of every stage. */
  readonly pipeline: StageRecord;
  /** The analysis options used. */
  readonly analysis: {
    /** How the equalizer was adapted. */
    readonly equalizerTraining: EqualizerTrainingMode;
    /** Leading symbols left out. */
    readonly skipSymbols: number;
    /** Trailing symbols left out. */
    readonly skipTailSymbols: number;
    /** Tolerance of the modulation check. */
    readonly modulationTolerance: number;
    /** Symbols the synchronization, gains and noise variances were fitted on. */
    readonly fitSymbols: number;
  };
  /** SHA-256 of the input samples, rows (xi, xq, yi, yq) as little-endian float64. */
  readonly inputSha256: string;
  /** Input samples per channel. */
  readonly samples: number;
}

/**
 * The result of {@link analyzeCapture}; `D` is the chain's diagnostics,
 * typed by its stages (the default chain's unless some were replaced).
 */
export interface AnalysisResult<D extends ReceiverDiagnostics<ReceiverStages> = ReceiverDiagnostics> {
  /** True when every check passed and `measurement` holds valid figures. */
  readonly ok: boolean;
  /** How the equalizer was adapted: 'blind', or 'data-aided' (trained on the transmitted symbols after a blind pass). */
  readonly equalizerTraining: EqualizerTrainingMode;
  /** Which check failed and why; null when `ok`. */
  readonly failure: AnalysisFailure | null;
  /** BER, SER, EVM, SNR, Q, GMI, NGMI, MI per polarization and total; null when the analysis failed. */
  readonly measurement: Measurement | null;
  /** Carrier offset from the local oscillator, Hz (x rotates as exp(+j2π·f·t)); NaN when not estimated. */
  readonly freqOffsetHz: number;
  /** Slips against the reference (empty when the reference was not found). */
  readonly cycleSlips: SlipReport;
  /** Combined laser linewidth estimated from the recovered phase, Hz (NaN when unknown). */
  readonly linewidthHz: number;
  /** Measured SNR minus the SNR theory needs for the measured BER, dB; null without errors or when failed. */
  readonly implementationPenaltyDb: number | null;
  /** Es/N0 that theory needs for the measured BER, dB (Cho & Yoon 2002); null when not defined. */
  readonly theorySnrDb: number | null;
  /** The modulation check; null when it was not reached. */
  readonly modulationFit: ModulationFit | null;
  /** What every stage of the chain reported, by slot. */
  readonly diagnostics: D;
  /** Recovered symbols per polarization. */
  readonly symbols: number;
  /** The recovered symbols, when `keepSymbols` was set. */
  readonly recovered: DualPol | null;
  /** The report's pictures, when `plotData` was set. */
  readonly plotData: PlotData | null;
  /** Everything needed to run the same analysis again. */
  readonly record: ReproducibilityRecord;
}

/**
 * The default receiver, from a capture's four channels to its figures.
 *
 * Streams `blocks` through {@link defaultReceiver} and measures the
 * recovered symbols against the reference as they come
 * ({@link MeasurementStream}: synchronization, gains and noise variances
 * fitted on the first `fitSymbols` after the skipped ones, then every
 * symbol counted; memory stays flat with the capture's length unless
 * `keepSymbols` is set), and checks the result: the equalizer must have converged (its criterion is in
 * its diagnostics), the reference must be found, and the data must fit the
 * stated modulation ({@link ModulationFit}). A failed check gives
 * `ok: false` with the reason and no figures.
 *
 * The result does not depend on how the capture is cut into blocks.
 * @param blocks the capture, in blocks of any sizes (or one block)
 * @param settings what the descriptor says, and chain options
 * @param reference transmitted symbols, any scale; periodic when shorter than the capture; or their labels
 *   ({@link CompactReference}: 2 bytes per symbol, what keeps a reference as long as the capture cheap)
 * @throws OptionError for bad settings or options; what a stage throws for malformed blocks
 * @example const r = analyzeCapture([block], { modulation: '16qam', symbolRate: 32e9, sampleRate: 80e9 }, ref); r.ok && r.measurement.ber;
 */
export function analyzeCapture<R extends ReplacedStages = NoReplacement>(
  blocks: Iterable<ChannelBlock>,
  settings: ReceiverSettings<R>,
  reference: DualPol | CompactReference,
  options: AnalyzeOptions = {},
): AnalysisResult<ReceiverDiagnostics<StagesWith<R>>> {
  const shaped = constellation(checkModulation('analyze', 'modulation', settings.modulation)).shaped;
  const training = resolveAnalyzeOptions({
    ...options,
    equalizerTraining: options.equalizerTraining ?? (shaped ? 'data-aided' : 'blind'),
  }).equalizerTraining;
  if (training === 'blind') {
    const blind = analyzeOnce(blocks, settings, reference, options, 'blind');
    if (!shaped || blind.ok || blind.failure?.check !== 'equalizer') return blind;
    const failure = blind.failure;
    const hint = ' (a shaped signal is nearly Gaussian, too little for a blind equalizer: its default is data-aided)';
    return { ...blind, failure: { ...failure, reason: `${failure.reason}${hint}` } };
  }
  // An iterator is its own iterable: it would give nothing the second time.
  if ((blocks[Symbol.iterator]() as unknown) === blocks)
    throw new OptionError(
      'analyze',
      'equalizerTraining',
      "blocks that can be read twice for 'data-aided' (an array, or an iterable that starts over)",
      'a one-pass iterator',
    );
  if (shaped) return analyzeAcquired(blocks, settings, reference, options);
  // The first pass only finds the alignment: nothing of it is kept or handed out.
  const firstPass = { ...options, keepSymbols: false, plotData: false, onSymbols: undefined };
  const blind = analyzeOnce(blocks, settings, reference, firstPass, 'blind');
  const m = blind.measurement;
  if (!blind.ok || m === null) {
    const failure = blind.failure as AnalysisFailure;
    return {
      ...blind,
      equalizerTraining: 'data-aided',
      failure: { ...failure, reason: `the blind pass before the data-aided one failed: ${failure.reason}` },
    };
  }
  const target = (p: 'x' | 'y') => {
    const a = m.perPol[p].alignment;
    // The data-aided equalizer needs the symbols themselves: labels become their points here.
    const symbols = isCompactReference(reference) ? referencePoints(reference, a.source) : reference[a.source];
    return { symbols, delay: a.delay, conjugated: a.conjugated };
  };
  const equalizer = { ...settings.options?.equalizer, training: { x: target('x'), y: target('y') } };
  return analyzeOnce(blocks, { ...settings, options: { ...settings.options, equalizer } }, reference, options, 'data-aided');
}

/**
 * The data-aided analysis of a shaped format: the reference placed and the
 * offset found against it ({@link acquireWithReference}), then one pass
 * with the equalizer trained on the reference and the offset removed as
 * found. When the reference cannot be placed, the blind analysis runs
 * instead and its failure says why both failed.
 */
function analyzeAcquired<R extends ReplacedStages>(
  blocks: Iterable<ChannelBlock>,
  settings: ReceiverSettings<R>,
  reference: DualPol | CompactReference,
  options: AnalyzeOptions,
): AnalysisResult<ReceiverDiagnostics<StagesWith<R>>> {
  let acquired: ReferenceAcquisition;
  try {
    acquired = acquireWithReference(blocks, settings as ReceiverSettings<ReplacedStages>, reference);
  } catch (e) {
    if (!(e instanceof AcquisitionError)) throw e;
    const blind = analyzeOnce(blocks, settings, reference, { ...options, equalizerTraining: 'blind' }, 'blind');
    if (blind.ok) return blind;
    const failure = blind.failure as AnalysisFailure;
    // The blind dispersion estimate reads the field's fourth moment, which a nearly Gaussian signal does not move.
    const guessed = settings.dispersionPsPerNm === undefined && settings.estimateDispersion !== false;
    const hint = guessed
      ? ' (the dispersion was estimated blindly, which a shaped signal does not allow: state it as dispersionPsPerNm)'
      : '';
    return {
      ...blind,
      failure: { ...failure, reason: `${e.message}${hint}; the blind analysis failed too: ${failure.reason}` },
    };
  }
  const target = (p: 'x' | 'y') => ({
    symbols: isCompactReference(reference) ? referencePoints(reference, p) : reference[p],
    delay: acquired.delays[p],
    conjugated: acquired.conjugated,
  });
  const o = settings.options ?? {};
  const trained = {
    ...settings,
    options: {
      ...o,
      coarseFrequency: { freqOffsetHz: acquired.freqOffsetHz },
      frequency: { freqOffsetHz: 0 },
      equalizer: { ...o.equalizer, training: { x: target('x'), y: target('y') } },
    },
  };
  return analyzeOnce(blocks, trained, reference, { ...options, equalizerTraining: 'data-aided' }, 'data-aided');
}

/** The settings of an analysis with every default filled in (the reproducibility record's `analysis`). */
export type ResolvedAnalyzeOptions = ReproducibilityRecord['analysis'];

/**
 * The analysis's own settings checked and with their defaults: the one
 * place they are validated (the command checks a pipeline file with it
 * before any capture is read).
 * @throws OptionError naming the option, what was expected and what was received
 * @example resolveAnalyzeOptions({ skipSymbols: 4096 }).skipTailSymbols // 128
 */
export function resolveAnalyzeOptions(options: AnalyzeOptions = {}): ResolvedAnalyzeOptions {
  const equalizerTraining = options.equalizerTraining ?? 'blind';
  if (equalizerTraining !== 'blind' && equalizerTraining !== 'data-aided')
    throw new OptionError('analyze', 'equalizerTraining', "'blind' or 'data-aided'", equalizerTraining);
  const count = (option: string, v: number | undefined, fallback: number, least: number) => {
    const n = v ?? fallback;
    if (!Number.isSafeInteger(n) || n < least) throw new OptionError('analyze', option, `an integer ≥ ${least}`, n);
    return n;
  };
  const modulationTolerance = options.modulationTolerance ?? 0.1;
  if (!(modulationTolerance > 0) || !Number.isFinite(modulationTolerance))
    throw new OptionError('analyze', 'modulationTolerance', 'a positive number', modulationTolerance);
  return {
    equalizerTraining,
    skipSymbols: count('skipSymbols', options.skipSymbols, 2048, 0),
    skipTailSymbols: count('skipTailSymbols', options.skipTailSymbols, 128, 0),
    modulationTolerance,
    fitSymbols: count('fitSymbols', options.fitSymbols, DEFAULT_FIT_SYMBOLS, 1),
  };
}

function analyzeOnce<R extends ReplacedStages>(
  blocks: Iterable<ChannelBlock>,
  settings: ReceiverSettings<R>,
  reference: DualPol | CompactReference,
  options: AnalyzeOptions,
  equalizerTraining: EqualizerTrainingMode,
): AnalysisResult<ReceiverDiagnostics<StagesWith<R>>> {
  const { skipSymbols, skipTailSymbols: skipTail, modulationTolerance: tolerance, fitSymbols } = resolveAnalyzeOptions(options);
  const chain = defaultReceiver(settings);
  const kept = options.keepSymbols ? new DualPolBuffer(1 << 14) : null;
  const density = options.plotData
    ? new ConstellationDensity(settings.modulation, { skipLeading: skipSymbols, skipTrailing: skipTail })
    : null;
  // The input spectra's estimator, made at the first block (its rate).
  const input: { spectra: ChannelSpectraEstimator | null } = { spectra: null };
  // What measure() throws is held until the end: the equalizer's verdict comes first.
  let measureError: unknown = null;
  let stream: MeasurementStream | null = null;
  try {
    stream = new MeasurementStream(reference, settings.modulation, {
      skipSymbols,
      symbolRate: settings.symbolRate,
      fitSymbols,
    });
  } catch (e) {
    measureError = e;
  }
  // The last skipTail symbols are held back from the measurement until the stream ends.
  const held = new HoldBack(skipTail);
  const take = (b: FieldBlock<'symbols'>) => {
    kept?.append(b.x, b.y);
    density?.push(b);
    options.onSymbols?.({ x: b.x, y: b.y });
    const measured = held.push(b);
    if (measured === null || stream === null || measureError !== null) return;
    try {
      stream.add(measured);
    } catch (e) {
      measureError = e;
    }
  };
  const run = runReceiver(blocks, chain, take, {
    hasher: options.inputHasher,
    onInput: options.plotData
      ? (block) => {
          input.spectra ??= new ChannelSpectraEstimator(block.sampleRate);
          input.spectra.push(block);
        }
      : undefined,
  });
  const { diagnostics, symbols } = run;
  const record: ReproducibilityRecord = {
    library: 'intradyne',
    version: LIBRARY_VERSION,
    pipeline: run.pipeline,
    analysis: { equalizerTraining, skipSymbols, skipTailSymbols: skipTail, modulationTolerance: tolerance, fitSymbols },
    inputSha256: run.inputSha256,
    samples: run.samples,
  };
  const base = {
    // The coarse shift before the matched filter plus the residual found after the equalizer.
    freqOffsetHz: sumKnown(
      numberField(diagnostics.coarseFrequency, 'freqOffsetHz'),
      numberField(diagnostics.frequency, 'freqOffsetHz'),
    ),
    linewidthHz: numberField(diagnostics.phase, 'linewidthHz'),
    diagnostics,
    symbols,
    recovered: kept ? kept.copy() : null,
    plotData: density ? { constellation: density.result(), inputSpectra: input.spectra?.result() ?? null } : null,
    record,
  };
  const failed = (
    failure: AnalysisFailure,
    fit: ModulationFit | null = null,
  ): AnalysisResult<ReceiverDiagnostics<StagesWith<R>>> => ({
    ok: false,
    equalizerTraining,
    failure,
    measurement: null,
    cycleSlips: { count: 0, x: [], y: [] },
    implementationPenaltyDb: null,
    theorySnrDb: null,
    modulationFit: fit,
    ...base,
  });

  const tooShort = symbols <= skipSymbols + skipTail + 128;
  // The measurement first (when there is enough to measure), so that the equalizer's verdict can use the measured SNR.
  let m: Measurement | null = null;
  let referenceFailure: AnalysisFailure | null = null;
  if (!tooShort) {
    try {
      if (measureError !== null) throw measureError;
      m = (stream as MeasurementStream).finish();
    } catch (e) {
      if (e instanceof ReferenceNotFoundError || e instanceof ReferenceMismatchError)
        referenceFailure = { check: 'reference', reason: e.message };
      else throw e;
    }
  }
  const eq = equalizerVerdict(diagnostics.equalizer, m, equalizerTraining);
  if (eq) return failed(eq);
  if (tooShort) {
    return failed({
      check: 'length',
      reason: `${symbols} symbols recovered: too few to measure after leaving out ${skipSymbols} leading and ${skipTail} trailing`,
    });
  }
  if (referenceFailure !== null || m === null) return failed(referenceFailure as AnalysisFailure);
  const fit = modulationFit(m, settings.modulation, tolerance);
  if (!fit.fits) {
    const reason =
      Math.abs(fit.measured - fit.expected) > tolerance
        ? `normalized fourth moment ${fit.measured.toFixed(3)}, ${fit.expected.toFixed(3)} expected at the measured SNR (tolerance ${tolerance})`
        : `BER at most ${fit.berUpper.toExponential(2)} (95 % interval) where noise at the measured SNR of ` +
          `${m.snrDb.toFixed(2)} dB gives ${fit.theoryBer.toExponential(2)}: the symbols spread like a denser constellation, not like noise`;
    return failed({ check: 'modulation', reason: `the recovered symbols do not fit ${settings.modulation}: ${reason}` }, fit);
  }
  const slips = (stream as MeasurementStream).slips();
  // A shaped format is judged by its GMI (its BER says little of what a bit-metric decoder achieves).
  const shaped = constellation(settings.modulation).shaped;
  const theory = shaped
    ? snrForGmiOrNull(settings.modulation, m.gmi)
    : m.bitErrors > 0 && m.ber < 0.5
      ? snrForBer(settings.modulation, m.ber)
      : null;
  return {
    ok: true,
    equalizerTraining,
    failure: null,
    measurement: m,
    cycleSlips: { count: slips.x.length + slips.y.length, ...slips },
    implementationPenaltyDb: theory === null || !Number.isFinite(m.snrDb) ? null : m.snrDb - theory,
    theorySnrDb: theory,
    modulationFit: fit,
    ...base,
  };
}

/**
 * Separation index below which an output is taken as not separated when no
 * measured SNR says otherwise: what a perfectly equalized output has at an
 * SNR of 7.1 dB. Without the reference found, nothing tells a correct output
 * at a low SNR from a broken one (a wrong symbol rate, dispersion, …), and
 * the equalizer is the likelier culprit.
 */
const UNMEASURED_SEPARATION = 0.7;

/**
 * The equalizer's own verdict (singular taps; outputs that do not carry one
 * source each; outputs that are mostly noise), then the separation index of
 * each output: when the symbols were measured, against the one a perfectly
 * equalized output has at the SNR measured on that polarization,
 * (s/(1 + s))², at least half of which is required, so that the test
 * follows the operating point (a correct output at 5 dB has σ ≈ 0.58)
 * instead of a fixed threshold; when they could not be measured, against
 * {@link UNMEASURED_SEPARATION}. A trained equalizer is judged by its
 * singularity alone: its outputs are pulled onto their own targets, the
 * measurement against the reference tells the rest, and the separation
 * index says nothing for a near-Gaussian (shaped) constellation.
 */
function equalizerVerdict(diagnostics: unknown, m: Measurement | null, training: EqualizerTrainingMode): AnalysisFailure | null {
  const d = equalizerReport(diagnostics);
  if (d === null) return null; // a replaced equalizer that reports no verdict
  const c = d.convergence;
  if (d.singularity?.singular) {
    return {
      check: 'equalizer',
      reason: `the equalizer's outputs converged to the same polarization (row orthogonality ${d.singularity.rowOrthogonality.toFixed(3)}; ${d.singularity.criterion})`,
    };
  }
  if (!c.converged) {
    return {
      check: 'equalizer',
      reason:
        `the equalizer did not converge: dependence of the outputs ${c.dependence.toFixed(3)} (at most ${c.dependenceThreshold}), ` +
        `separation index x ${c.separationX.toFixed(3)}, y ${c.separationY.toFixed(3)} (at least ${c.threshold}) (${c.criterion})`,
    };
  }
  if (training === 'data-aided') return null;
  if (m === null) {
    if (c.separationX >= UNMEASURED_SEPARATION && c.separationY >= UNMEASURED_SEPARATION) return null;
    return {
      check: 'equalizer',
      reason:
        `the equalizer did not converge: separation index x ${c.separationX.toFixed(3)}, y ${c.separationY.toFixed(3)}, ` +
        `below ${UNMEASURED_SEPARATION} (what a perfect output has at 7.1 dB), and the symbols could not be measured to show ` +
        `a lower SNR (${c.criterion})`,
    };
  }
  for (const p of ['x', 'y'] as const) {
    const s = 10 ** (m.perPol[p].snrDb / 10);
    const expected = Number.isFinite(s) ? (s / (1 + s)) ** 2 : 1;
    const sigma = p === 'x' ? c.separationX : c.separationY;
    if (sigma < 0.5 * expected) {
      return {
        check: 'equalizer',
        reason:
          `the equalizer's ${p} output is less separated than its measured SNR allows: separation index ${sigma.toFixed(3)}, ` +
          `${expected.toFixed(3)} for a perfectly equalized output at ${m.perPol[p].snrDb.toFixed(2)} dB (at least half of it required)`,
      };
    }
  }
  return null;
}

function modulationFit(m: Measurement, modulation: Measurement['modulation'], tolerance: number): ModulationFit {
  const k = constellation(modulation).cmaRadius2; // E|a|⁴ at unit power
  let measured = 0;
  let expected = 0;
  for (const p of ['x', 'y'] as const) {
    measured += m.perPol[p].fourthMoment / 2;
    const s2 = m.perPol[p].noiseVariance;
    expected += (k + 4 * s2 + 2 * s2 * s2) / (1 + s2) ** 2 / 2;
  }
  const theory = theoryBer(modulation, m.snrDb);
  const berUpper = m.berCi95[1];
  return {
    measured,
    expected,
    tolerance,
    theoryBer: theory,
    berUpper,
    fits: Math.abs(measured - expected) <= tolerance && !(berUpper < theory / 20),
  };
}

function sumKnown(a: number, b: number): number {
  if (Number.isNaN(a)) return b;
  if (Number.isNaN(b)) return a;
  return a + b;
}

/** The number a stage's diagnostics hold under `key` (NaN when the stage, a replaced one perhaps, reports none). */
function numberField(d: unknown, key: string): number {
  if (typeof d !== 'object' || d === null || !(key in d)) return Number.NaN;
  const v: unknown = (d as Record<string, unknown>)[key];
  return typeof v === 'number' ? v : Number.NaN;
}

/** What the analysis reads of an equalizer's verdict on itself (the butterfly's diagnostics carry it). */
interface EqualizerReport {
  /** The convergence verdict. */
  readonly convergence: {
    readonly converged: boolean;
    readonly separationX: number;
    readonly separationY: number;
    readonly dependence: number;
    readonly threshold: number;
    readonly dependenceThreshold: number;
    readonly criterion: string;
  };
  /** The singularity check, when made. */
  readonly singularity?: { readonly singular: boolean; readonly rowOrthogonality: number; readonly criterion: string };
}

/** An equalizer's diagnostics as an {@link EqualizerReport}, or null for one that reports no verdict. */
function equalizerReport(d: unknown): EqualizerReport | null {
  if (typeof d !== 'object' || d === null || !('convergence' in d)) return null;
  const c: unknown = d.convergence;
  if (typeof c !== 'object' || c === null || !('converged' in c) || typeof c.converged !== 'boolean') return null;
  return d as EqualizerReport;
}

/** Delays a symbol stream by `hold` symbols: what is pushed comes out once `hold` later symbols have arrived. */
class HoldBack {
  private readonly held = new DualPolBuffer();

  constructor(private readonly hold: number) {}

  /** Returns the symbols now released (null when none). */
  push(b: FieldBlock<'symbols'>): DualPol | null {
    if (this.hold === 0) return { x: b.x, y: b.y };
    this.held.append(b.x, b.y);
    const out = this.held.length - this.hold;
    if (out <= 0) return null;
    const released = this.held.copy(0, out);
    this.held.dropFront(out);
    return released;
  }
}

/** The SNR AWGN theory needs for a GMI, or null for a GMI it does not reach between −60 and 60 dB. */
function snrForGmiOrNull(modulation: ModulationName, gmi: number): number | null {
  try {
    return snrForGmi(modulation, gmi);
  } catch (e) {
    if (e instanceof RangeError) return null;
    throw e;
  }
}
