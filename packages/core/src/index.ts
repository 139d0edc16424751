/**
 * Intradyne core: the signal model, typed streaming pipelines, the receiver
 * stages, modulation, PRBS and a seeded simulator of a dual-polarization
 * coherent link. Pure computation: no file system, no Node-only API.
 * @module @intradyne/core
 */

export {
  BlindPhaseSearchKernel,
  type BlindPhaseSearchOptions,
  blindPhaseSearchPhase,
  CoarseFinePhaseKernel,
} from './carrier/blind-phase-search.js';
export * from './carrier/coarse-frequency-stage.js';
export type { CycleSlip, SlipMethod } from './carrier/cycle-slip.js';
export { estimateOffsetDifferential } from './carrier/differential-frequency.js';
export {
  type DifferentialDecoderDiagnostics,
  differentialQuadrantDecoder,
  differentialQuadrantEncode,
  quadrantOf,
} from './carrier/differential-quadrant.js';
export * from './carrier/dual-phase.js';
export { estimateOffsetPeriodogram, type PeriodogramOptions } from './carrier/fourth-power-periodogram.js';
export {
  type FrequencyEstimate,
  type FrequencyEstimator,
  type FrequencyOffsetDiagnostics,
  type FrequencyOffsetOptions,
  frequencyOffsetRecovery,
} from './carrier/frequency-offset-stage.js';
export { PHASOR_ANCHOR, removeFrequencyOffset } from './carrier/frequency-removal.js';
export { estimateLinewidth, LinewidthAccumulator, type LinewidthOptions } from './carrier/linewidth.js';
export { type PairPhaseKernel, type PhaseKernel, runKernel } from './carrier/phase-kernel.js';
export {
  type BlindPhaseSearchStageOptions,
  blindPhaseSearch,
  PHASE_TRACE_POINTS,
  type PhaseRecoveryDiagnostics,
  type PhaseRecoveryOptions,
  type PhaseWindowDiagnostics,
  type ViterbiViterbiStageOptions,
  viterbiViterbi,
} from './carrier/phase-recovery-stage.js';
export { PhaseRefinement, type RefinedSymbols } from './carrier/phase-refinement.js';
export { QUARTER_TURN, unwrapPhase, wrapAngle } from './carrier/phase-unwrap.js';
export * from './carrier/phase-window.js';
export { cycleSlipsFromPhase, type PhaseJumpOptions, PhaseJumpSlipDetector } from './carrier/slips-phase-jump.js';
export {
  cycleSlipsAgainstReference,
  ReferenceSlipDetector,
  type ReferenceSlipOptions,
  type ReferenceSlipSearchOptions,
} from './carrier/slips-reference.js';
export {
  ViterbiViterbiKernel,
  type ViterbiViterbiOptions,
  type ViterbiViterbiSelection,
  viterbiViterbiPhase,
} from './carrier/viterbi-viterbi.js';
export { type BlindDispersionEstimate, type BlindDispersionOptions, estimateDispersion } from './dispersion/blind-dispersion.js';
export {
  type CompensateDispersionDiagnostics,
  type CompensateDispersionOptions,
  compensateDispersion,
} from './dispersion/compensate-dispersion.js';
export { cdTapCount, dispersionCompensationResponse } from './dispersion/dispersion-filter.js';
export { OverlapSave, overlapSaveSize, responseOfCenteredTaps } from './dispersion/overlap-save.js';
export * from './dsp/channel-spectra.js';
export * from './dsp/fft.js';
export { besselI0, kaiserBeta, kaiserOrder, kaiserWindow } from './dsp/kaiser.js';
export * from './dsp/rrc.js';
export * from './dsp/spectrum-summary.js';
export * from './dsp/strongest-tone.js';
export * from './dsp/welch.js';
export * from './equalizer/butterfly-kernel.js';
export * from './equalizer/cma.js';
export * from './equalizer/dd-lms.js';
export * from './equalizer/decision-equalizer.js';
export * from './equalizer/equalizer.js';
export * from './equalizer/rde.js';
export * from './equalizer/update-rule.js';
export * from './filter/fir.js';
export * from './frontend/combine-channels.js';
export { type DeskewChannelsDiagnostics, type DeskewChannelsOptions, deskewChannels } from './frontend/deskew-channels.js';
export * from './frontend/iq-skew.js';
export {
  type ChannelValues,
  type NormalizeChannelsDiagnostics,
  type NormalizeChannelsOptions,
  normalizeChannels,
} from './frontend/normalize-channels.js';
export {
  type IqImbalanceEstimate,
  type OrthogonalizationMethod,
  type OrthogonalizeIqDiagnostics,
  type OrthogonalizeIqOptions,
  orthogonalizationMatrix,
  orthogonalizeIq,
} from './frontend/orthogonalize-iq.js';
export * from './hash/sha256.js';
export * from './modulation/constellation.js';
export * from './modulation/moment-snr.js';
export * from './modulation/shaping.js';
export * from './physics/jones.js';
export * from './physics/link.js';
export * from './pipeline/block-checks.js';
export * from './pipeline/blocks.js';
export * from './pipeline/decimated-trace.js';
export * from './pipeline/dual-pol-buffer.js';
export * from './pipeline/pipe.js';
export * from './pipeline/stage.js';
export * from './prbs/prbs.js';
export * from './random/rng.js';
export * from './receiver/default-chain.js';
export * from './receiver/registry.js';
export * from './receiver/run-receiver.js';
export { InterpolationKernel, type LowpassSpec } from './resample/interpolation-kernel.js';
export {
  type MatchedFilterDiagnostics,
  type MatchedFilterOptions,
  resampleAndMatchedFilter,
  rrcMatchedFilter,
  rrcTaps,
} from './resample/matched-filter.js';
export { type ResampleDiagnostics, type ResampleOptions, Resampler, resampleToTwoSps } from './resample/resampler.js';
export * from './signal/complex.js';
export * from './signal/dual-pol.js';
export * from './sim/ideal-receiver.js';
export * from './sim/options.js';
export * from './sim/simulate.js';
export {
  type GardnerDiagnostics,
  type GardnerOptions,
  gardnerClockRecovery,
  gardnerDetectorGain,
} from './timing/gardner-clock-recovery.js';
export { squareTimingEstimate, squareTimingTone, type TimingTone } from './timing/square-timing.js';
export { LIBRARY_VERSION } from './version.js';
