import { coarseFrequencyShift } from '../carrier/coarse-frequency-stage.js';
import { frequencyOffsetRecovery } from '../carrier/frequency-offset-stage.js';
import { blindPhaseSearch, viterbiViterbi } from '../carrier/phase-recovery-stage.js';
import { compensateDispersion } from '../dispersion/compensate-dispersion.js';
import { decisionEqualizer } from '../equalizer/decision-equalizer.js';
import { butterflyEqualizer, type EqualizerOptions } from '../equalizer/equalizer.js';
import { combineChannels } from '../frontend/combine-channels.js';
import { deskewChannels } from '../frontend/deskew-channels.js';
import { normalizeChannels } from '../frontend/normalize-channels.js';
import { orthogonalizeIq } from '../frontend/orthogonalize-iq.js';
import { type AnyStage, type JsonValue, OptionError, type StageRecord } from '../pipeline/stage.js';
import { rrcMatchedFilter } from '../resample/matched-filter.js';
import { resampleToTwoSps } from '../resample/resampler.js';
import { gardnerClockRecovery } from '../timing/gardner-clock-recovery.js';

/**
 * The algorithms a user chooses by name, for the chain's settings, a
 * pipeline file and the command's options (`--phase-recovery`,
 * `--equalizer-rule`, `--orthogonalization`).
 */
export const ALGORITHMS = {
  /** Carrier-phase recovery: Viterbi–Viterbi (fourth power; QPSK partitioning for QAM) or blind phase search. */
  phaseRecovery: ['viterbi-viterbi', 'blind-phase-search'],
  /** The 2×2 equalizer's blind rule after pre-convergence: CMA or RDE. */
  equalizerRule: ['cma', 'rde'],
  /** IQ orthogonalization of the front end: Gram–Schmidt or Löwdin's symmetric one. */
  orthogonalization: ['gsop', 'lowdin'],
} as const;

/** A carrier-phase recovery by name. */
export type PhaseRecoveryName = (typeof ALGORITHMS.phaseRecovery)[number];
/** An equalizer blind rule by name. */
export type EqualizerRuleName = (typeof ALGORITHMS.equalizerRule)[number];
/** An IQ orthogonalization by name. */
export type OrthogonalizationName = (typeof ALGORITHMS.orthogonalization)[number];

/** Options as a stage's record holds them (JSON: absent options as null). */
type RecordOptions = { readonly [key: string]: JsonValue };

/**
 * Each stage of the library by the name its record carries
 * (`describe().stage`), with the factory that builds it from the record's
 * options. The factories validate their options (OptionError), so the
 * record's JSON is handed to them as their options type.
 */
const FACTORIES: Readonly<Record<string, (options: RecordOptions) => AnyStage>> = {
  'normalize-channels': (o) => normalizeChannels(o as never),
  'orthogonalize-iq': (o) => orthogonalizeIq(o as never),
  'deskew-channels': (o) => deskewChannels(o as never),
  'combine-channels': () => combineChannels(),
  'resample-to-two-sps': (o) => resampleToTwoSps(o as never),
  'compensate-dispersion': (o) => compensateDispersion(o as never),
  'coarse-frequency': (o) => coarseFrequencyShift(o as never),
  'rrc-matched-filter': (o) => rrcMatchedFilter(o as never),
  'gardner-clock-recovery': (o) => gardnerClockRecovery(o as never),
  'butterfly-equalizer': (o) => butterflyEqualizer(equalizerOptions(o)),
  'frequency-offset': (o) => frequencyOffsetRecovery(o as never),
  'viterbi-viterbi': (o) => viterbiViterbi(o as never),
  'blind-phase-search': (o) => blindPhaseSearch(o as never),
  'decision-equalizer': (o) => decisionEqualizer(o as never),
};

/** The names of the stages {@link rebuildStage} can build, sorted. */
export const STAGE_NAMES: readonly string[] = Object.keys(FACTORIES).sort();

/**
 * Builds a stage again from its record (what `describe()` returned): the
 * same stage with the same options, which describes itself the same way.
 * With a pipeline's record (a `stages` list), its stages are rebuilt in
 * order; {@link rebuildReceiver} does the default chain.
 * @throws OptionError for a stage name the library does not have, or a
 *   record that cannot be rebuilt (an equalizer trained on reference
 *   symbols, or given a rule object of its own: the record holds their
 *   names, not them)
 * @example const again = rebuildStage(blindPhaseSearch({ modulation: '16qam' }).describe());
 */
export function rebuildStage(record: StageRecord): AnyStage {
  const make = FACTORIES[record.stage];
  if (make === undefined) throw new OptionError('rebuild', 'stage', `one of ${STAGE_NAMES.join(', ')}`, record.stage);
  return make(withoutNulls(record.options) as RecordOptions);
}

/** Options with the null entries (absent options in a record) left out, recursively. */
function withoutNulls(v: JsonValue): JsonValue {
  if (Array.isArray(v)) return v.map(withoutNulls);
  if (v === null || typeof v !== 'object') return v;
  const out: Record<string, JsonValue> = {};
  for (const [k, x] of Object.entries(v as RecordOptions)) if (x !== null) out[k] = withoutNulls(x);
  return out;
}

/** The equalizer's options from its record: rules and training are recorded by name and size only. */
function equalizerOptions(o: RecordOptions): EqualizerOptions {
  if (o.training !== undefined)
    throw new OptionError(
      'rebuild',
      'training',
      'an equalizer record without training (its targets are the reference symbols)',
      'a trained equalizer',
    );
  const dd = o.ddLms as { readonly rule?: JsonValue } | undefined;
  if (dd?.rule !== undefined && dd.rule !== 'dd-lms')
    throw new OptionError('rebuild', 'ddLms.rule', "'dd-lms' (a rule object of one's own is recorded by name only)", dd.rule);
  const { rule: _, ...ddLms } = dd ?? {};
  return { ...(o as object), ...(dd ? { ddLms } : {}) } as EqualizerOptions;
}
