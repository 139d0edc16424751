import {
  type CoarseFrequencyDiagnostics,
  type CoarseFrequencyOptions,
  coarseFrequencyShift,
} from '../carrier/coarse-frequency-stage.js';
import {
  type FrequencyOffsetDiagnostics,
  type FrequencyOffsetOptions,
  frequencyOffsetRecovery,
} from '../carrier/frequency-offset-stage.js';
import { blindPhaseSearch, type PhaseRecoveryDiagnostics, viterbiViterbi } from '../carrier/phase-recovery-stage.js';
import type { BlindDispersionOptions } from '../dispersion/blind-dispersion.js';
import { type CompensateDispersionDiagnostics, compensateDispersion } from '../dispersion/compensate-dispersion.js';
import { cdTapCount } from '../dispersion/dispersion-filter.js';
import { DEFAULT_ROLL_OFF } from '../dsp/rrc.js';
import {
  type DecisionEqualizerDiagnostics,
  type DecisionEqualizerOptions,
  decisionEqualizer,
} from '../equalizer/decision-equalizer.js';
import { butterflyEqualizer, type EqualizerDiagnostics, type EqualizerOptions } from '../equalizer/equalizer.js';
import { type CombineDiagnostics, combineChannels } from '../frontend/combine-channels.js';
import { type DeskewChannelsDiagnostics, deskewChannels } from '../frontend/deskew-channels.js';
import {
  type NormalizeChannelsDiagnostics,
  type NormalizeChannelsOptions,
  normalizeChannels,
} from '../frontend/normalize-channels.js';
import { type OrthogonalizeIqDiagnostics, type OrthogonalizeIqOptions, orthogonalizeIq } from '../frontend/orthogonalize-iq.js';
import { checkModulation, constellation, type ModulationName } from '../modulation/constellation.js';
import type { BlockOf, Domain } from '../pipeline/blocks.js';
import { pipe } from '../pipeline/pipe.js';
import { type AnyStage, type JsonValue, OptionError, type Stage, type StageRecord } from '../pipeline/stage.js';
import { type MatchedFilterDiagnostics, rrcMatchedFilter } from '../resample/matched-filter.js';
import { type ResampleDiagnostics, resampleToTwoSps } from '../resample/resampler.js';
import type { ChannelName } from '../signal/dual-pol.js';
import { type GardnerDiagnostics, type GardnerOptions, gardnerClockRecovery } from '../timing/gardner-clock-recovery.js';
import {
  ALGORITHMS,
  type EqualizerRuleName,
  type OrthogonalizationName,
  type PhaseRecoveryName,
  rebuildStage,
} from './registry.js';

const NAME = 'default-receiver';

/**
 * The slots of a receiver chain, in order, each holding any stage of the
 * slot's domains (with diagnostics of any type), so that a researcher can
 * swap one algorithm (for example blind phase search for Viterbi–Viterbi)
 * and keep the rest.
 */
export interface ReceiverStages {
  /** DC removal, power normalization, clipping check (channels → channels). */
  readonly normalize: Stage<'channels', 'channels', unknown>;
  /** IQ orthogonalization, GSOP by default (channels → channels). */
  readonly orthogonalize: Stage<'channels', 'channels', unknown>;
  /** Per-channel deskew, present when skews are given (channels → channels). */
  readonly deskew: Stage<'channels', 'channels', unknown> | null;
  /** xi + j·xq, yi + j·yq (channels → field). */
  readonly combine: Stage<'channels', 'field', unknown>;
  /** Coarse frequency-offset removal before the matched filter (twoSps → twoSps). */
  readonly coarseFrequency: Stage<'twoSps', 'twoSps', unknown>;
  /** Resampling to 2 samples per symbol (field → twoSps). */
  readonly resample: Stage<'field', 'twoSps', unknown>;
  /** Chromatic-dispersion compensation, given or blind (twoSps → twoSps). */
  readonly dispersion: Stage<'twoSps', 'twoSps', unknown>;
  /** Root-raised-cosine matched filter (twoSps → twoSps). */
  readonly matchedFilter: Stage<'twoSps', 'twoSps', unknown>;
  /** Clock recovery (twoSps → twoSps). */
  readonly timing: Stage<'twoSps', 'twoSps', unknown>;
  /** 2×2 adaptive equalizer (twoSps → symbols). */
  readonly equalizer: Stage<'twoSps', 'symbols', unknown>;
  /** Frequency-offset estimation and removal (symbols → symbols). */
  readonly frequency: Stage<'symbols', 'symbols', unknown>;
  /** Carrier-phase recovery (symbols → symbols). */
  readonly phase: Stage<'symbols', 'symbols', unknown>;
  /** Decision-directed 2×2 equalizer on the carrier-recovered symbols (symbols → symbols), or none. */
  readonly decisionEqualizer: Stage<'symbols', 'symbols', unknown> | null;
}

/** The default chain's own stages, with their diagnostics types. */
export interface DefaultReceiverStages extends ReceiverStages {
  readonly normalize: Stage<'channels', 'channels', NormalizeChannelsDiagnostics>;
  readonly orthogonalize: Stage<'channels', 'channels', OrthogonalizeIqDiagnostics>;
  readonly deskew: Stage<'channels', 'channels', DeskewChannelsDiagnostics> | null;
  readonly combine: Stage<'channels', 'field', CombineDiagnostics>;
  readonly coarseFrequency: Stage<'twoSps', 'twoSps', CoarseFrequencyDiagnostics>;
  readonly resample: Stage<'field', 'twoSps', ResampleDiagnostics>;
  readonly dispersion: Stage<'twoSps', 'twoSps', CompensateDispersionDiagnostics>;
  readonly matchedFilter: Stage<'twoSps', 'twoSps', MatchedFilterDiagnostics>;
  readonly timing: Stage<'twoSps', 'twoSps', GardnerDiagnostics>;
  readonly equalizer: Stage<'twoSps', 'symbols', EqualizerDiagnostics>;
  readonly frequency: Stage<'symbols', 'symbols', FrequencyOffsetDiagnostics>;
  readonly phase: Stage<'symbols', 'symbols', PhaseRecoveryDiagnostics>;
  readonly decisionEqualizer: Stage<'symbols', 'symbols', DecisionEqualizerDiagnostics> | null;
}

/** Stages given in place of the chain's own, by slot. */
export type ReplacedStages = Partial<ReceiverStages>;

/** No stage replaced: the default of the chain's type parameter. */
export type NoReplacement = Record<never, never>;

/** The chain's stages once `R` replaced some: the replacements' types where given, the default ones elsewhere. */
export type StagesWith<R extends ReplacedStages> = Omit<DefaultReceiverStages, keyof R> & {
  readonly [K in keyof R & keyof ReceiverStages]-?: Exclude<R[K], undefined>;
};

/** The diagnostics of a slot's stage (null for an absent one). */
export type SlotDiagnostics<S> = S extends Stage<Domain, Domain, infer D> ? D : null;

/**
 * Named diagnostics of every stage of a chain, typed by its stages (null for
 * an absent deskew or decision equalizer).
 */
export type ReceiverDiagnostics<S extends ReceiverStages = DefaultReceiverStages> = {
  readonly [K in keyof ReceiverStages]: SlotDiagnostics<S[K]>;
};

/**
 * What the default chain needs to know about a capture, and its options;
 * `R` is the type of the stages given in place of the chain's own (none by
 * default), which types the chain's diagnostics.
 */
export interface ReceiverSettings<R extends ReplacedStages = NoReplacement> {
  /** The transmitted modulation. */
  readonly modulation: ModulationName;
  /** Symbol rate, Bd. */
  readonly symbolRate: number;
  /** Scope sample rate, Sa/s. */
  readonly sampleRate: number;
  /** Transmitter root-raised-cosine roll-off (default 0.1). */
  readonly rollOff?: number;
  /**
   * Accumulated dispersion to remove, ps/nm. When absent, it is estimated
   * blindly on the start of the capture unless `estimateDispersion` is false,
   * in which case no dispersion is removed.
   */
  readonly dispersionPsPerNm?: number;
  /** Estimate the dispersion when it is not given (default true). */
  readonly estimateDispersion?: boolean;
  /** Options of the blind dispersion estimate. */
  readonly blindDispersion?: BlindDispersionOptions;
  /** Differential group delay to expect, ps (default 10): sizes the equalizer. */
  readonly expectedDgdPs?: number;
  /** Known receiver skews per channel, ps (default none: no deskew stage, and the I/Q skews are estimated). */
  readonly skewPs?: Partial<Readonly<Record<ChannelName, number>>>;
  /**
   * Estimate each polarization's I/Q skew when `skewPs` does not give the
   * skews, and remove it before the dispersion compensation (default true;
   * see {@link estimateIqSkew}).
   */
  readonly estimateSkew?: boolean;
  /**
   * The carrier-phase recovery (default 'viterbi-viterbi' for QPSK,
   * 'blind-phase-search' for QAM; see {@link ALGORITHMS}).
   */
  readonly phaseRecovery?: PhaseRecoveryName;
  /** The equalizer's blind rule after pre-convergence (default 'cma' for QPSK, 'rde' for QAM). */
  readonly equalizerRule?: EqualizerRuleName;
  /** The front end's IQ orthogonalization (default 'gsop'). */
  readonly orthogonalization?: OrthogonalizationName;
  /** Options passed to the stages the chain builds. */
  readonly options?: {
    /** Options of the `normalize` slot ({@link normalizeChannels}). */
    readonly normalize?: NormalizeChannelsOptions;
    /** Options of the `orthogonalize` slot ({@link orthogonalizeIq}). */
    readonly orthogonalize?: OrthogonalizeIqOptions;
    /** Options of the `coarseFrequency` slot ({@link coarseFrequencyShift}). */
    readonly coarseFrequency?: Omit<CoarseFrequencyOptions<'twoSps'>, 'domain'>;
    /** Options of the `timing` slot ({@link gardnerClockRecovery}). */
    readonly timing?: GardnerOptions;
    /** Options of the `equalizer` slot ({@link butterflyEqualizer}), over the chain's own. */
    readonly equalizer?: Partial<EqualizerOptions>;
    /** Options of the `frequency` slot ({@link frequencyOffsetRecovery}). */
    readonly frequency?: FrequencyOffsetOptions;
    /** Options of the `decisionEqualizer` slot ({@link decisionEqualizer}; QAM only), or false for none. */
    readonly decisionEqualizer?: Partial<Omit<DecisionEqualizerOptions, 'modulation'>> | false;
    /** Half window N, joint or separate estimates and (for blind phase search) test phases B. */
    readonly phase?: {
      /** Half window N, symbols (the phase is averaged over 2N + 1 symbols), or 'auto' (the default). */
      readonly halfWindow?: number | 'auto';
      /** One phase estimate for both polarizations ('joint', the default) or one each ('separate'). */
      readonly polarizations?: 'joint' | 'separate';
      /** Test phases B of blind phase search. */
      readonly testPhases?: number;
    };
  };
  /** Stages that replace the chain's own, by slot. */
  readonly replace?: R;
}

/** The default receiver chain: a stage from the four channels to recovered symbols, its diagnostics typed by its stages. */
export interface ReceiverChain<S extends ReceiverStages = DefaultReceiverStages>
  extends Stage<'channels', 'symbols', ReceiverDiagnostics<S>> {
  /** The stages by slot, for their typed diagnostics and options. */
  readonly stages: S;
  /** The settings after defaults were applied. */
  readonly settings: ResolvedReceiverSettings;
}

/** Settings with every default made explicit (recorded for reproducibility). */
export interface ResolvedReceiverSettings {
  /** The transmitted modulation. */
  readonly modulation: ModulationName;
  /** Symbol rate, Bd. */
  readonly symbolRate: number;
  /** Capture sample rate, Sa/s. */
  readonly sampleRate: number;
  /** Transmitter root-raised-cosine roll-off. */
  readonly rollOff: number;
  /** Given dispersion, or null when estimated blindly or not removed. */
  readonly dispersionPsPerNm: number | null;
  /** Whether the dispersion is estimated blindly. */
  readonly estimateDispersion: boolean;
  /** Whether the I/Q skews are estimated (no skews given). */
  readonly estimateSkew: boolean;
  /** Differential group delay the equalizer is sized for, ps. */
  readonly expectedDgdPs: number;
  /** Taps per filter of the 2×2 equalizer (odd). */
  readonly equalizerTaps: number;
  /** The carrier-phase recovery ('viterbi-viterbi' for QPSK, 'blind-phase-search' for QAM unless chosen; a replaced stage is its own). */
  readonly phaseRecovery: PhaseRecoveryName;
  /** The equalizer's blind rule after pre-convergence. */
  readonly equalizerRule: EqualizerRuleName;
  /** The front end's IQ orthogonalization. */
  readonly orthogonalization: OrthogonalizationName;
}

/**
 * Equalizer taps at 2 samples per symbol for what the equalizer must absorb:
 * the DGD (2·DGD·Rs samples of spread), residual dispersion (Savory's tap
 * count at 2·Rs) and a margin of 7 taps for the filtering of transmitter
 * and receiver (Fatadin, Ives & Savory, JLT 2009, report 7 T/2 taps for up to
 * 1,000 ps/nm at 14 GBd); odd, at least 11.
 * @example equalizerTapsFor(10, 50, 32e9) // 15
 */
export function equalizerTapsFor(dgdPs: number, residualPsPerNm: number, symbolRate: number): number {
  const spread =
    Math.ceil(2 * dgdPs * 1e-12 * 2 * symbolRate) + (residualPsPerNm > 0 ? cdTapCount(residualPsPerNm, 2 * symbolRate) : 0);
  let taps = 7 + spread;
  if (taps % 2 === 0) taps++;
  return Math.max(11, taps);
}

/**
 * Taps of the decision-directed equalizer after the carrier recovery (QAM):
 * seven symbols either side. Measured on DP-64QAM at 32 GBd, 50 kHz, random
 * polarization: 15 taps give a penalty of 0.26 dB at BER 2e-2 and 0.38 dB
 * at 1e-3, against 0.30 and 0.50 dB with 9 taps.
 */
const DECISION_EQUALIZER_TAPS = 15;

/**
 * The dense constellations (128QAM, 256QAM, and shaped ones as fine) take
 * their own receiver defaults, below: least distance under 0.3 at unit
 * power, where blind phase search also takes 64 test phases.
 */
function isDense(modulation: ModulationName): boolean {
  return constellation(modulation).minDistance < 0.3;
}

/**
 * The blind equalizer for dense constellations: CMA over twice the usual
 * span, annealed to a smaller step, then nearly held (RDE at 1e-6). RDE's
 * ring decisions are mostly wrong that close together, so its gradient is
 * noise: its taps wander and the equalized symbols, and the phase estimated
 * on them, stay near 24–30 dB however long it runs (measured on DP-256QAM
 * with a random polarization and 10 ps DGD, without noise), and the
 * decision equalizer after the carrier recovery, which removes the
 * residual, cannot follow wandering taps. Measured on DP-256QAM at BER 1e-3
 * and 100 kHz (seeds 305 and 311): a penalty of 0.45 and 0.44 dB, against
 * 0.61 and 0.99 with the 64QAM-like defaults.
 */
const DENSE_EQUALIZER = {
  preConvergenceSymbols: 16384,
  stepSize: { cma: 3e-5, rde: 1e-6 },
  convergeOnStart: { symbols: 16384, passes: 4 },
} as const;

/**
 * Clock-loop bandwidth for dense constellations, of the symbol rate. Their
 * blind equalizer is held nearly still, so it cannot follow the loop's
 * wander, which is large where DGD weakens the timing line: with 1e-4 or
 * 2e-5 the loop drifted a whole symbol over 2^17 symbols on one DP-256QAM
 * capture in three (10 ps DGD, random polarization), at up to 0.85 dB of
 * penalty; with 5e-6 none did, and the penalty at BER 1e-3 and 100 kHz was
 * 0.31–0.49 dB over thirteen seeds. The clock acquisition still preloads
 * the loop with the offset it found (measured at −200 ppm: 0.47 dB).
 */
const DENSE_TIMING_BANDWIDTH = 5e-6;

/**
 * Half window of the decision equalizer's phase refinement for dense
 * constellations: 17 symbol pairs. The first phase estimate is made on the
 * blind equalizer's output, several dB below the refined symbols' SNR;
 * measured on DP-256QAM at BER 1e-3 and 100 kHz (seeds 305 and 311): 0.45
 * and 0.44 dB of penalty, against 0.82 and 0.82 without the refinement;
 * within 0.05 dB of each other for N = 6 … 9, 0.03–0.04 dB more at 4 and 14.
 */
const DENSE_REFINEMENT_HALF_WINDOW = 8;

/** Largest error of the blind dispersion estimate the equalizer is sized for, ps/nm (the estimate's stated accuracy). */
const BLIND_RESIDUAL_PS_PER_NM = 50;

/**
 * Builds the default receiver of DESIGN.md as one streaming stage:
 *
 *   normalize → orthogonalize (GSOP) → [deskew] → combine → resample to
 *   2 Sa/symbol → dispersion compensation (given or blind) → coarse
 *   frequency-offset removal → RRC matched filter → Gardner clock recovery → 2×2 equalizer (CMA, then RDE for
 *   QAM) → residual frequency-offset removal (4th-power periodogram) → carrier phase, one for both
 *   polarizations over a window chosen on the start (Viterbi–Viterbi for QPSK, blind phase search for
 *   QAM) → for QAM, a decision-directed 2×2 equalizer on the carrier-recovered symbols.
 *
 * It configures itself from the settings: the modulation chooses the
 * equalizer's rule and the phase recovery, the sample rate the resampling,
 * the dispersion and DGD to expect the equalizer's length; the equalizer
 * converges over the start of the capture before its output begins. Every
 * stage is replaceable through `replace`, and every option reachable
 * through `options`.
 * @throws OptionError for settings out of range (and whatever a stage throws for its options)
 * @example const rx = defaultReceiver({ modulation: '16qam', symbolRate: 32e9, sampleRate: 80e9 });
 */
export function defaultReceiver<R extends ReplacedStages = NoReplacement>(
  settings: ReceiverSettings<R>,
): ReceiverChain<StagesWith<R>> {
  const s = resolve(settings);
  const o = settings.options ?? {};
  const r: ReplacedStages = settings.replace ?? {};
  // One phase for both polarizations, over a window chosen for the SNR and
  // phase noise of the capture: a fixed window is either too short at low
  // SNR (slips) or too long for wide linewidths. Measured: 16QAM at 12 dB
  // without phase noise slipped 52 times in 2^17 symbols with separate
  // estimates over 49 symbols, none jointly over the chosen window. Dense
  // constellations add the fine step of the coarse-fine search (measured on
  // DP-256QAM at BER 1e-3 and 100 kHz, seeds 305 and 311: 0.45 and 0.44 dB
  // of penalty, against 0.57 and 0.58 with the search alone).
  const dense = isDense(s.modulation);
  const phaseOptions = {
    modulation: s.modulation,
    halfWindow: 'auto' as const,
    polarizations: 'joint' as const,
    ...(dense && s.phaseRecovery === 'blind-phase-search' ? { variant: 'coarse-fine' as const } : {}),
    ...o.phase,
  };
  // QAM: a decision-directed equalizer after the carrier recovery removes
  // what CMA and RDE leave (0.1–0.2 dB on 16QAM, more on 64QAM). Not the
  // butterfly's own DD-LMS, whose decision-directed phase loop slips below
  // BER 1e-2 (measured: DP-64QAM at BER 2e-2 and DP-16QAM at 10 dB fail
  // with it); after the carrier recovery the decisions need no loop.
  const refine = !isPsk(s.modulation) && o.decisionEqualizer !== false;
  const stages: ReceiverStages = {
    normalize: r.normalize ?? normalizeChannels(o.normalize),
    orthogonalize: r.orthogonalize ?? orthogonalizeIq({ method: s.orthogonalization, ...o.orthogonalize }),
    deskew: r.deskew !== undefined ? r.deskew : settings.skewPs ? deskewChannels({ skewPs: settings.skewPs }) : null,
    combine: r.combine ?? combineChannels(),
    coarseFrequency: r.coarseFrequency ?? coarseFrequencyShift(o.coarseFrequency),
    // The band the chain needs before its matched filter: the signal's, (1 + β)·Rs/2, moved by up to
    // the coarse frequency stage's reach of Rs/4 (measured: half the taps, the resampling about twice
    // as fast, no change of penalty).
    resample:
      r.resample ?? resampleToTwoSps({ symbolRate: s.symbolRate, passbandHz: ((1 + s.rollOff) / 2 + 0.25) * s.symbolRate }),
    matchedFilter: r.matchedFilter ?? rrcMatchedFilter({ rollOff: s.rollOff }),
    dispersion:
      r.dispersion ??
      compensateDispersion({
        ...(s.dispersionPsPerNm !== null
          ? { dispersionPsPerNm: s.dispersionPsPerNm }
          : s.estimateDispersion
            ? { blind: settings.blindDispersion ?? true }
            : { dispersionPsPerNm: 0 }),
        ...(s.estimateSkew ? { iqSkew: 'estimate' as const } : {}),
      }),
    // A narrower loop than the stage's default: Gardner's detector is noisy at
    // roll-off 0.1, and 1e-4 of the symbol rate saves 0.1 dB with DGD while
    // still following ±20 ppm (a wider loop suits larger clock offsets).
    timing:
      r.timing ?? gardnerClockRecovery({ rollOff: s.rollOff, loopBandwidth: dense ? DENSE_TIMING_BANDWIDTH : 1e-4, ...o.timing }),
    equalizer:
      r.equalizer ??
      butterflyEqualizer({
        taps: s.equalizerTaps,
        blindRule: s.equalizerRule,
        ...(dense ? DENSE_EQUALIZER : {}),
        ...o.equalizer,
        modulation: s.modulation,
      }),
    frequency: r.frequency ?? frequencyOffsetRecovery(o.frequency),
    phase: r.phase ?? (s.phaseRecovery === 'viterbi-viterbi' ? viterbiViterbi(phaseOptions) : blindPhaseSearch(phaseOptions)),
    decisionEqualizer:
      r.decisionEqualizer !== undefined
        ? r.decisionEqualizer
        : refine
          ? decisionEqualizer({
              taps: DECISION_EQUALIZER_TAPS,
              ...(dense ? { phaseRefinement: { halfWindow: DENSE_REFINEMENT_HALF_WINDOW } } : {}),
              ...(o.decisionEqualizer || {}),
              modulation: s.modulation,
            })
          : null,
  };
  // The replacements' own types are what StagesWith<R> says, slot by slot.
  return new Chain(stages as unknown as StagesWith<R>, s);
}

function resolve(settings: ReceiverSettings<ReplacedStages>): ResolvedReceiverSettings {
  const fail = (option: string, expected: string, received: unknown): never => {
    throw new OptionError(NAME, option, expected, received);
  };
  checkModulation(NAME, 'modulation', settings.modulation);
  const positive = (name: string, v: number) => {
    if (!(v > 0) || !Number.isFinite(v)) fail(name, 'a positive finite number', v);
  };
  positive('symbolRate', settings.symbolRate);
  positive('sampleRate', settings.sampleRate);
  const rollOff = settings.rollOff ?? DEFAULT_ROLL_OFF;
  if (!(rollOff > 0 && rollOff <= 1)) fail('rollOff', 'a roll-off in (0, 1]', rollOff);
  if (settings.sampleRate < (1 + rollOff) * settings.symbolRate) {
    fail(
      'sampleRate',
      `at least (1 + roll-off) × symbol rate = ${(1 + rollOff) * settings.symbolRate} Sa/s`,
      settings.sampleRate,
    );
  }
  const d = settings.dispersionPsPerNm;
  if (d !== undefined && !Number.isFinite(d)) fail('dispersionPsPerNm', 'a finite dispersion in ps/nm', d);
  const dgd = settings.expectedDgdPs ?? 10;
  if (!(dgd >= 0) || !Number.isFinite(dgd)) fail('expectedDgdPs', 'a DGD ≥ 0 ps', dgd);
  const estimate = settings.estimateDispersion ?? true;
  const estimateSkew = settings.estimateSkew ?? true;
  if (typeof estimateSkew !== 'boolean') fail('estimateSkew', 'true or false', estimateSkew);
  const residual = d === undefined && estimate ? BLIND_RESIDUAL_PS_PER_NM : 0;
  return {
    modulation: settings.modulation,
    symbolRate: settings.symbolRate,
    sampleRate: settings.sampleRate,
    rollOff,
    dispersionPsPerNm: d ?? null,
    estimateDispersion: d === undefined && estimate,
    estimateSkew: estimateSkew && !settings.skewPs,
    expectedDgdPs: dgd,
    equalizerTaps: settings.options?.equalizer?.taps ?? equalizerTapsFor(dgd, residual, settings.symbolRate),
    phaseRecovery: choose(
      'phaseRecovery',
      settings.phaseRecovery,
      isPsk(settings.modulation) ? 'viterbi-viterbi' : 'blind-phase-search',
    ),
    equalizerRule: choose('equalizerRule', settings.equalizerRule, isPsk(settings.modulation) ? 'cma' : 'rde'),
    orthogonalization: choose('orthogonalization', settings.orthogonalization, 'gsop'),
  };
}

/** True for a constellation of one ring (QPSK): Viterbi–Viterbi, CMA and no decision equalizer by default. */
function isPsk(modulation: ModulationName): boolean {
  return constellation(modulation).ringRadii2.length === 1;
}

/** An algorithm chosen by name among {@link ALGORITHMS}' (the default when none is). */
function choose<K extends keyof typeof ALGORITHMS>(
  kind: K,
  given: unknown,
  fallback: (typeof ALGORITHMS)[K][number],
): (typeof ALGORITHMS)[K][number] {
  if (given === undefined) return fallback;
  const names: readonly string[] = ALGORITHMS[kind];
  if (typeof given !== 'string' || !names.includes(given)) throw new OptionError(NAME, kind, `one of ${names.join(', ')}`, given);
  return given as (typeof ALGORITHMS)[K][number];
}

/**
 * Builds the default chain again from its record (its `describe()`, as an
 * analysis's reproducibility record holds it under `pipeline`): every stage
 * rebuilt from its recorded options ({@link rebuildStage}), in its slot.
 * @throws OptionError for a record that is not the default chain's, or a stage that cannot be rebuilt
 * @example const again = rebuildReceiver(result.record.pipeline); // the same chain, the same output
 */
export function rebuildReceiver(record: StageRecord): ReceiverChain<ReceiverStages> {
  if (record.stage !== NAME) throw new OptionError('rebuild', 'stage', `'${NAME}'`, record.stage);
  const o = record.options;
  const replace: Record<string, AnyStage | null> = { deskew: null, decisionEqualizer: null };
  for (const stage of record.stages ?? []) {
    const slot = (stage as StageRecord & { readonly slot?: string }).slot;
    if (slot === undefined || !(SLOTS as readonly string[]).includes(slot))
      throw new OptionError('rebuild', 'slot', `one of ${SLOTS.join(', ')}`, slot);
    replace[slot] = rebuildStage(stage);
  }
  for (const slot of SLOTS)
    if (replace[slot] === undefined) throw new OptionError('rebuild', 'stages', `a stage in slot '${slot}'`, 'none');
  // The recorded settings are the resolved ones; the stages carry every option of their own.
  const settings = o as unknown as ResolvedReceiverSettings;
  return defaultReceiver({
    modulation: settings.modulation,
    symbolRate: settings.symbolRate,
    sampleRate: settings.sampleRate,
    rollOff: settings.rollOff,
    ...(settings.dispersionPsPerNm !== null ? { dispersionPsPerNm: settings.dispersionPsPerNm } : {}),
    estimateDispersion: settings.estimateDispersion,
    estimateSkew: settings.estimateSkew,
    expectedDgdPs: settings.expectedDgdPs,
    phaseRecovery: settings.phaseRecovery,
    equalizerRule: settings.equalizerRule,
    orthogonalization: settings.orthogonalization,
    options: { equalizer: { taps: settings.equalizerTaps } },
    replace: replace as ReplacedStages,
  });
}

const SLOTS: readonly (keyof ReceiverStages)[] = [
  'normalize',
  'orthogonalize',
  'deskew',
  'combine',
  'resample',
  'dispersion',
  'coarseFrequency',
  'matchedFilter',
  'timing',
  'equalizer',
  'frequency',
  'phase',
  'decisionEqualizer',
];

class Chain<S extends ReceiverStages> implements ReceiverChain<S> {
  readonly name = NAME;
  readonly input = 'channels' as const;
  readonly output = 'symbols' as const;
  private readonly inner: AnyStage;

  constructor(
    readonly stages: S,
    readonly settings: ResolvedReceiverSettings,
  ) {
    const s = stages;
    // pipe() checks the domains of neighbours; the chain is nested to stay within its arity.
    const frontEnd: Stage<'channels', 'field', unknown> = s.deskew
      ? pipe(s.normalize, s.orthogonalize, s.deskew, s.combine)
      : pipe(s.normalize, s.orthogonalize, s.combine);
    const carrier: Stage<'symbols', 'symbols', unknown> = s.decisionEqualizer
      ? pipe(s.frequency, s.phase, s.decisionEqualizer)
      : pipe(s.frequency, s.phase);
    this.inner = pipe(
      frontEnd,
      pipe(s.resample, s.dispersion, s.coarseFrequency, s.matchedFilter, s.timing),
      s.equalizer,
      carrier,
    );
  }

  process(block: BlockOf<'channels'>): BlockOf<'symbols'> {
    return this.inner.process(block);
  }

  flush(): BlockOf<'symbols'> | null {
    return this.inner.flush();
  }

  reset(): void {
    this.inner.reset();
  }

  diagnostics(): ReceiverDiagnostics<S> {
    const out: Record<string, unknown> = {};
    for (const slot of SLOTS) out[slot] = this.stages[slot]?.diagnostics() ?? null;
    // Each slot holds its stage's diagnostics, which is what ReceiverDiagnostics<S> spells out.
    return out as ReceiverDiagnostics<S>;
  }

  describe(): StageRecord {
    const settings = this.settings as unknown as { [key: string]: JsonValue };
    return {
      stage: this.name,
      options: settings,
      stages: SLOTS.filter((slot) => this.stages[slot] !== null).map((slot) => ({
        ...(this.stages[slot] as AnyStage).describe(),
        slot,
      })) as StageRecord[],
    };
  }
}
