/**
 * Intradyne I/O: the only package that touches files. Capture and reference
 * writers, atomic output, simulated scenarios, and the `intradyne` command.
 * @module @intradyne/io
 */

export {
  type ArrowCaptureOptions,
  loadArrowCapture,
  loadReferenceArrow,
  readArrowCapture,
  readArrowCaptureAsync,
  readArrowMetadata,
} from './arrow/arrow-capture.js';
export {
  type ArrowWriteOptions,
  type ResultRow,
  writeCaptureArrow,
  writeResultsArrow,
  writeSymbolsArrow,
} from './arrow/arrow-write.js';
export {
  type CaptureDescription,
  DATA_EXTENSIONS,
  descriptorPathFor,
  listCaptures,
  loadReference,
  openCapture,
  resolveDataPath,
} from './capture/capture.js';
export {
  type CaptureDescriptor,
  DESCRIPTOR_DEFAULTS,
  DESCRIPTOR_FIELDS,
  parseDescriptor,
  readDescriptor,
} from './capture/descriptor.js';
export { type PositionedJson, parseJsonWithPositions } from './capture/json-positions.js';
export {
  checkReferenceConstellation,
  loadReferenceCsv,
  MIN_REFERENCE_SYMBOLS,
  REFERENCE_POINT_TOLERANCE,
} from './capture/reference.js';
export { type InspectReport, inspectCapture } from './cli/inspect.js';
export { main } from './cli/main.js';
export { InputError, type InputLocation } from './errors/input-error.js';
export {
  type CaptureColumn,
  type ChannelFiles,
  type CsvCaptureOptions,
  loadCsvCapture,
  readCsvCapture,
  readCsvCaptureAsync,
  readCsvCaptureBytes,
  readCsvCaptureFiles,
} from './load/csv-capture.js';
export { parseDecimal } from './load/decimal.js';
export { SAMPLE_RATE_TOLERANCE, TIME_STEP_TOLERANCE } from './load/time-axis.js';
export { type RunScenarioOptions, runScenario, type WrittenCapture } from './scenarios/run.js';
export { BUILT_IN_SCENARIOS, builtInScenario, mergeOptions, type Scenario } from './scenarios/scenario.js';
export { runSweepTask, type SweepOutcome, type SweepTask } from './sweep/analyze-task.js';
export { pipelineFingerprint, settingsFingerprint } from './sweep/fingerprint.js';
export { captureInputHash } from './sweep/input-hash.js';
export { JOURNAL_FILE, type JournalEntry, readJournal } from './sweep/journal.js';
export { RESULT_COLUMNS, type SweepRow } from './sweep/result-row.js';
export { defaultSweepOut, runSweep, type SweepOptions, type SweepReport } from './sweep/run-sweep.js';
export { readManifest, type SweepCapture, type SweepInputs, sweepInputs } from './sweep/sweep-inputs.js';
export { type AtomicWriteOptions, OutputExistsError, writeFileAtomic } from './write/atomic.js';
export { type CaptureCsvOptions, writeCaptureCsv, writeJsonAtomic, writeReferenceCsv } from './write/csv.js';
